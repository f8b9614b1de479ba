"""Hostile values in every body field and query parameter of every operation: never a 5xx, never
a stack trace, and a refused write stores nothing.

Each operation of /api/schema/ starts from a body it accepts, sent to ids that exist for the
role, then has fields (nested ones too) replaced by integers like 10**400 and -2**63-1, dates
that do not exist, epoch seconds and milliseconds where a date is read, lone surrogates, NUL,
nesting thousands deep and 100 000-character strings; query parameters, declared or only read
by the view, get the same as text. Each example is sent as every role the operation serves
(see ``roles_for``). PARAPET_FUZZ_EXAMPLES scales the examples; the tally is in conftest.py.
"""

from __future__ import annotations

import os
import traceback
import uuid
from typing import Any

import pytest
from django.apps import apps
from django.core.cache import cache
from django.db import connection
from drf_spectacular.generators import SchemaGenerator
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from rest_framework.test import APIClient

from checklists.models import CheckSheet
from compliance.models import SyncReceipt
from tests.fuzz import hostile as h
from tests.fuzz.conftest import tally

pytestmark = pytest.mark.django_db

EXAMPLES = int(os.environ.get("PARAPET_FUZZ_EXAMPLES", "5"))
SURVEY = os.environ.get("PARAPET_FUZZ_SURVEY")
"""A path: server errors are appended there and the run goes on (to list them all at once)."""

SCHEMA = SchemaGenerator().get_schema(request=None, public=True)
OPERATIONS = sorted(
    (method.upper(), path, operation)
    for path, methods in SCHEMA["paths"].items()
    for method, operation in methods.items()
)


def _resolve(node: dict[str, Any]) -> dict[str, Any]:
    while "$ref" in node:
        node = SCHEMA["components"]["schemas"][node["$ref"].rsplit("/", 1)[-1]]
    return node


def body_fields(operation: dict[str, Any]) -> list[str]:
    """The request body's top-level fields as the schema declares them."""
    content = operation.get("requestBody", {}).get("content", {})
    for media in ("application/json", "multipart/form-data"):
        if media in content:
            return sorted(_resolve(content[media].get("schema", {})).get("properties", {}))
    return []


KNOWN_ELSEWHERE: set[tuple[str, str, str]] = set()
"""Parameters left out while their server error waits in code we do not own (each is a strict
xfail in test_fuzz_findings.py)."""


def query_names(method: str, template: str, operation: dict[str, Any]) -> list[str]:
    declared = [p["name"] for p in operation.get("parameters", []) if p["in"] == "query"]
    names = {*declared, *h.EXTRA_QUERY.get(template, []), *h.EVERYWHERE_QUERY}
    return sorted(n for n in names if (method, template, n) not in KNOWN_ELSEWHERE)


TABLES = sorted(
    model._meta.db_table
    for name in ("compliance", "checklists")
    for model in apps.get_app_config(name).get_models()
)


def stored() -> dict[str, int]:
    """Rows per table of the two apps that hold records, in one query."""
    counts = ", ".join(f"(SELECT COUNT(*) FROM {connection.ops.quote_name(t)})" for t in TABLES)
    with connection.cursor() as cursor:
        cursor.execute(f"SELECT {counts}")
        return dict(zip(TABLES, cursor.fetchone(), strict=True))


# Drawing a request -----------------------------------------------------------------------------


def spoil(data: st.DataObject, body: Any, fields: list[str]) -> Any:
    """The baseline body with hostile values in it, in one of a few shapes (or as it is, so
    that a second copy meets the names the first one took)."""
    shapes = ["one", "one", "one", "some", "whole", "extra", "as it is"]
    shape = data.draw(st.sampled_from(shapes), "shape")
    if shape == "as it is":
        return body
    if body is None or shape == "whole":
        return data.draw(
            st.one_of(
                h.hostile,
                st.sampled_from(h.DEEP),
                st.builds(lambda b: [b], st.just(body)) if isinstance(body, dict) else h.hostile,
            ),
            "whole body",
        )
    paths = sorted(set(h.paths_of(body)) | {(f,) for f in fields}, key=repr)
    if shape == "one":
        path = data.draw(st.sampled_from(paths), "field")
        if len(path) > 1 and _missing_parent(body, path):
            path = path[:1]
        return h.set_path(body, path, data.draw(h.hostile, "value"))
    if shape == "extra":
        key = data.draw(st.one_of(h.bad_strings, st.sampled_from(["x" * 100_000, "__proto__"])))
        body[key] = data.draw(h.hostile, "value")
        return body
    for field in sorted({p[0] for p in paths}):
        action = data.draw(st.sampled_from(["keep", "keep", "hostile", "missing"]), field)
        if action == "hostile":
            body[field] = data.draw(h.hostile, field)
        elif action == "missing":
            body.pop(field, None)
    return body


def _missing_parent(body: Any, path: tuple) -> bool:
    target = body
    for part in path[:-1]:
        try:
            target = target[part]
        except (KeyError, IndexError, TypeError):
            return True
    return not isinstance(target, dict | list)


def draw_request(data: st.DataObject, w: h.World, method: str, template: str, op: dict, role: str):
    params = h.path_values(w, template, role)
    if data.draw(st.integers(0, 9), "hostile path?") == 0:
        name = "name" if "{name}" in template else "key" if "{key}" in template else "id"
        params[name] = data.draw(h.hostile_query, "path value")
        if params[name] in ("", ".", ".."):
            params[name] = "0"
    url = template
    for name, value in params.items():
        url = url.replace("{" + name + "}", h.path_part(value))
    query = {}
    for name in query_names(method, template, op):
        if data.draw(st.integers(0, 2), name) == 0:
            query[name] = data.draw(h.hostile_query, name)
    if query:
        url += "?" + h.query_string(query)
    if method == "GET":
        return url, None, None
    fresh = data.draw(st.booleans(), "fresh names?")
    body = h.baseline(w, method, template, role, fresh)
    body = spoil(data, body, body_fields(op))
    if template in h.MULTIPART:
        return url, *multipart(body)
    if data.draw(st.integers(0, 9), "as a form?") == 0 and isinstance(body, dict):
        text = h.query_string({str(k): h.form_value(v) for k, v in body.items()})
        return url, text.encode("ascii"), "application/x-www-form-urlencoded"
    raw = data.draw(st.sampled_from([None] * 12 + ["bom", "latin-1", "cesu", "duplicate"]))
    text = h.json_text(body)
    payload = text.encode("utf-8")
    if raw == "bom":
        payload = b"\xef\xbb\xbf" + payload
    elif raw == "latin-1":
        payload = text.replace("pass", "p\xe4ss").encode("latin-1", "replace")
    elif raw == "cesu":
        payload = payload.replace(b"\\ud800", b"\xed\xa0\x80") + b" \xed\xa0\x80"
    elif raw == "duplicate" and text.startswith("{") and text != "{}":
        payload = (text[:-1] + ', "job": 1, "job": "\\u0000"}').encode("utf-8")
    return url, payload, "application/json"


BOUNDARY = "parapet-fuzz-boundary"


def multipart(body: Any) -> tuple[bytes, str]:
    """A multipart body written by hand: Django's test encoder refuses lone surrogates."""
    fields = body if isinstance(body, dict) else {"file": h.form_value(body)}
    out = []
    for name, value in fields.items():
        head = f'--{BOUNDARY}\r\nContent-Disposition: form-data; name="{name}"'
        if isinstance(value, bytes):
            head += '; filename="upload.png"\r\nContent-Type: application/octet-stream'
            content = value
        else:
            content = h.form_value(value).encode("utf-8", "surrogatepass")
        out.append(head.encode("utf-8", "surrogatepass") + b"\r\n\r\n" + content + b"\r\n")
    payload = b"".join(out) + f"--{BOUNDARY}--\r\n".encode()
    return payload, f"multipart/form-data; boundary={BOUNDARY}"


# Sending ---------------------------------------------------------------------------------------


def client_as(user) -> APIClient:
    client = APIClient()
    client.raise_request_exception = False
    client.force_authenticate(user)
    return client


def content_of(response) -> bytes:
    if getattr(response, "streaming", False):
        return b"".join(response.streaming_content)
    return response.content


def explain(role, method, url, payload, response) -> str:
    shown = (payload or b"")[:400]
    lines = [f"{role} {method} {url[:300]} -> {response.status_code}", f"body: {shown!r}"]
    if getattr(response, "exc_info", None):
        lines += traceback.format_exception(*response.exc_info)[-6:]
    else:
        lines.append(repr(content_of(response)[:400]))
    return "\n".join(lines)


OPERATION_IDS = [f"{m} {p}" for m, p, _ in OPERATIONS]


@pytest.mark.parametrize(("method", "template", "op"), OPERATIONS, ids=OPERATION_IDS)
@settings(
    max_examples=EXAMPLES,
    deadline=None,
    derandomize=True,
    suppress_health_check=list(HealthCheck),
)
@given(data=st.data())
def test_hostile_values_are_a_clear_refusal(world, method, template, op, data):
    label = f"{method} {template}"
    for role in h.roles_for(method, template):
        cache.clear()  # sign-in and password limits would answer 429 before the body is read
        url, payload, content_type = draw_request(data, world, method, template, op, role)
        before = stored() if method != "GET" else None
        client = client_as(world.users[role])
        if payload is None:
            response = client.generic(method, url)
        else:
            response = client.generic(method, url, payload, content_type=content_type)
        failed = tally("hostile", label, response.status_code, content_of(response))
        if failed and SURVEY:
            with open(SURVEY, "a", encoding="utf-8") as out:
                out.write(explain(role, method, url, payload, response) + "\n=====\n")
            continue
        assert not failed, explain(role, method, url, payload, response)
        if before is not None and 400 <= response.status_code < 500:
            after = stored()
            changed = {k: (before[k], after[k]) for k in before if before[k] != after[k]}
            if changed and SURVEY:
                with open(SURVEY, "a", encoding="utf-8") as out:
                    note = f"refused but stored {changed}\n"
                    out.write(note + explain(role, method, url, payload, response) + "\n=====\n")
                continue
            assert not changed, (changed, explain(role, method, url, payload, response))


# A batch with one bad record -------------------------------------------------------------------


SPOILS = [
    *("record", "uuid", "type", "id", "text", "device_time", "entries", "other", "unknown"),
    *("job_action", "drop_log"),
]


def bad_record(data: st.DataObject, world: h.World) -> tuple[Any, bool]:
    """A record spoiled somewhere, and whether it must be refused (True) or may be applied."""
    record = h.sheet_record(world)
    where = data.draw(st.sampled_from(SPOILS))
    if where in ("job_action", "drop_log"):
        # Never a valid action (it would change the job under the sheets beside it), and no
        # drop is logged while the job is planned: refused, whatever else the data holds.
        data_ = (
            {"job": world.job.pk, "action": data.draw(h.hostile), "reason": data.draw(h.hostile)}
            if where == "job_action"
            else {
                "drop": data.draw(st.one_of(st.just(world.drop.pk), h.hostile)),
                "device_time": data.draw(h.hostile),
                "note": data.draw(h.hostile),
            }
        )
        return {"type": where, "client_uuid": str(uuid.uuid4()), "data": data_}, True
    if where == "record":
        return data.draw(st.one_of(h.hostile_scalars, st.sampled_from(h.DEEP))), True
    if where == "uuid":
        record["client_uuid"] = data.draw(st.one_of(h.bad_strings, st.sampled_from(h.EPOCHS)))
        return record, True
    if where == "type":
        record["type"] = data.draw(st.one_of(h.bad_strings, h.hostile_scalars))
        return record, True
    if where == "id":
        field = data.draw(st.sampled_from(["job", "version", "equipment"]))
        record["data"][field] = data.draw(
            st.one_of(
                st.sampled_from([*h.HUGE_INTEGERS, -1, True, 1.5, "1", [1], {"id": 1}]),
                h.bad_strings,
            )
        )
        return record, True
    if where == "text":
        path = data.draw(st.sampled_from(h.paths_of(record["data"])))
        text = data.draw(st.sampled_from(["\x00", "\ud800", "ok\x00", "\udfff ok"]))
        if data.draw(st.booleans()):
            h.set_path(record["data"], path, text)
        else:
            h.set_path(record["data"], path, {text: "pass"})
        return record, True
    if where == "device_time":
        record["data"]["device_time"] = data.draw(
            st.sampled_from([*h.IMPOSSIBLE_DATES, *h.EPOCHS, *h.HUGE_INTEGERS])
        )
        return record, record["data"]["device_time"] not in TIMES_A_PHONE_MAY_SEND
    if where == "entries":
        record["data"]["entries"] = data.draw(st.one_of(h.hostile, st.sampled_from(h.DEEP)))
        return record, not isinstance(record["data"]["entries"], dict)
    if where == "unknown":
        record["data"][data.draw(h.bad_strings)] = "x"
        return record, True
    path = data.draw(st.sampled_from(h.paths_of(record["data"])))
    h.set_path(record["data"], path, data.draw(h.hostile))
    return record, False


TIMES_A_PHONE_MAY_SEND = {"2026-12-02T07:05:00.9999999999Z"}
"""Extra digits of a fraction are dropped: the time exists."""


@settings(
    max_examples=EXAMPLES * 8,
    deadline=None,
    derandomize=True,
    suppress_health_check=list(HealthCheck),
)
@given(data=st.data())
def test_one_bad_record_is_refused_alone_and_the_rest_applied(world, data):
    good = [h.sheet_record(world) for _ in range(data.draw(st.integers(1, 3), "good records"))]
    bad, must_refuse = bad_record(data, world)
    at = data.draw(st.integers(0, len(good)), "position")
    records = [*good[:at], bad, *good[at:]]
    before = (CheckSheet.objects.count(), SyncReceipt.objects.count())
    client = client_as(world.users["operator"])
    payload = h.json_text({"records": records}).encode("utf-8")
    response = client.generic("POST", "/api/v1/sync/", payload, content_type="application/json")
    failed = tally("sync-batch", "POST /api/v1/sync/", response.status_code, response.content)
    if response.status_code == 400 and not failed:
        # Nesting past the parser's limit or an integer past 4300 digits: no record can be
        # read from the body, so the batch is refused whole and nothing is stored.
        assert "JSON parse error" in response.json()["detail"], response.content[:300]
        assert (CheckSheet.objects.count(), SyncReceipt.objects.count()) == before
        return
    if failed and SURVEY:
        with open(SURVEY, "a", encoding="utf-8") as out:
            out.write(explain("operator", "POST", "/api/v1/sync/", payload, response) + "\n=====\n")
        return
    assert not failed, explain("operator", "POST", "/api/v1/sync/", payload, response)
    assert response.status_code == 200, response.content[:500]
    results = response.json()["results"]
    assert len(results) == len(records)
    for index, result in enumerate(results):
        if index != at:
            assert result["status"] == "applied", (index, result)
    verdict = results[at]
    if must_refuse:
        assert verdict["status"] == "rejected", verdict
    assert verdict["status"] in ("applied", "rejected"), verdict
    applied = sum(r["status"] == "applied" for r in results)
    assert (CheckSheet.objects.count(), SyncReceipt.objects.count()) == (
        before[0] + applied,
        before[1] + applied,
    )
    if verdict["status"] == "rejected":
        errors = verdict["errors"]
        assert errors and all(isinstance(k, str) and k for k in errors), verdict
        assert all(isinstance(m, str) and m for v in errors.values() for m in v), verdict
        key = bad.get("client_uuid") if isinstance(bad, dict) else None
        try:
            key = uuid.UUID(str(key))
        except ValueError:
            key = None
        if key is not None:
            assert not SyncReceipt.objects.filter(client_uuid=key).exists()
            assert not CheckSheet.objects.filter(client_uuid=key).exists()

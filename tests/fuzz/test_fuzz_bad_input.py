"""Hostile input on the main write endpoints: a clear 4xx naming the field, never a 5xx.

Malformed JSON, wrong types, 1 MB strings, NaN, dates in 1900 and 2300 and unknown fields, on
sheets, sync, jobs, anchor certifications, calculations and equipment. A batch sent to sync is
answered 200 with each record's own verdict, so there the record is "rejected" naming the field.
Cases that once were gaps (unknown fields dropped, implausible dates stored, unbounded notes)
are fixed; their tests stay here.
"""

import copy
import json
import uuid
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

import pytest
from django.urls import reverse

from checklists.models import CheckSheet
from compliance.jobs.selectors import job_requirements
from compliance.models import AnchorCertification, Equipment, Job
from compliance.records.services import day_content
from tests.conftest import PASSING, client_for
from tests.engineering.examples import SUCTION

pytestmark = pytest.mark.django_db

MEGABYTE = "x" * (1024 * 1024)
UNKNOWN = "colour"


@dataclass
class Endpoint:
    url: Callable[[dict], str]
    body: Callable[[dict], Any]
    as_supervisor: bool = False
    # where a record's fields sit in the body (sync wraps them in a record)
    prefix: tuple = ()


def _hose(rig):
    return next(r for r in job_requirements(rig["job"]) if r.subject.kind == "hose").subject


def _sheet(rig):
    return {
        "job": rig["job"].pk,
        "version": rig["versions"]["hose"].pk,
        "equipment": _hose(rig).equipment.pk,
        "entries": copy.deepcopy(PASSING["hose"]),
    }


ENDPOINTS = {
    "sheets": Endpoint(lambda rig: reverse("sheet-list"), _sheet),
    "sync": Endpoint(
        lambda rig: reverse("sync"),
        lambda rig: {
            "records": [{"type": "sheet", "client_uuid": str(uuid.uuid4()), "data": _sheet(rig)}]
        },
        prefix=("records", 0, "data"),
    ),
    "jobs": Endpoint(
        lambda rig: reverse("job-list"),
        lambda rig: {
            "site": rig["job"].site_id,
            "date": rig["job"].date.isoformat(),
            "supervisor": rig["job"].supervisor_id,
        },
        as_supervisor=True,
    ),
    "certifications": Endpoint(
        lambda rig: reverse("anchor-certifications", args=[rig["job"].drops.first().anchor_id]),
        lambda rig: {
            "certifier": "Pat Engineer",
            "rated_capacity_kn": 22.2,
            "certified_on": "2026-01-05",
            "valid_until": "2027-01-05",
        },
        as_supervisor=True,
    ),
    "calc": Endpoint(
        lambda rig: reverse("calc", args=["suction-hold"]),
        lambda rig: {**SUCTION, "vacuum_kpa": 60.0, "mass_kg": 60.0},
    ),
    "equipment": Endpoint(
        lambda rig: reverse("equipment-list"),
        lambda rig: {
            "kind": "hose",
            "label": "H-99",
            "ratings": {
                "id_mm": 12.0,
                "rating_kpa": 2500.0,
                "kg_per_m": 0.15,
                "length_m": 200.0,
                "roughness_mm": 0.0015,
            },
        },
        as_supervisor=True,
    ),
}


@pytest.fixture
def rig(job, simple_checklists, operator, supervisor):
    return {
        "job": job,
        "versions": simple_checklists,
        "operator": client_for(operator),
        "supervisor": client_for(supervisor),
    }


def stored():
    return (
        CheckSheet.objects.count(),
        Job.objects.count(),
        AnchorCertification.objects.count(),
        Equipment.objects.count(),
    )


def set_path(body, path, value):
    target = body
    for part in path[:-1]:
        target = target[part]
    target[path[-1]] = value
    return body


def send(rig, name, body=None, raw=None):
    endpoint = ENDPOINTS[name]
    client = rig["supervisor" if endpoint.as_supervisor else "operator"]
    url = endpoint.url(rig)
    if raw is not None:
        return client.post(url, raw, content_type="application/json")
    return client.post(url, body, format="json")


def errors_of(name, response):
    """The error object that should name the field, checking the answer is a refusal."""
    assert response.status_code < 500, response.content[:500]
    body = response.json()
    if name == "sync" and response.status_code == 200:
        (result,) = body["results"]
        assert result["status"] == "rejected", result
        return result["errors"]
    assert 400 <= response.status_code < 500, body
    return body


def assert_refused(rig, name, path, value, expect):
    """Post the valid body with ``path`` set to ``value``: refused, naming ``expect``."""
    endpoint = ENDPOINTS[name]
    before = stored()
    body = set_path(endpoint.body(rig), endpoint.prefix + tuple(path), value)
    errors = errors_of(name, send(rig, name, body))
    assert expect in errors, errors
    assert all(isinstance(m, str) and m for m in errors[expect]), errors
    assert stored() == before


def test_every_valid_body_is_accepted(rig):
    """The baseline: the bodies the other tests spoil are accepted as they are."""
    for name in ENDPOINTS:
        response = send(rig, name, ENDPOINTS[name].body(rig))
        assert response.status_code in (200, 201), (name, response.json())
        if name == "sync":
            assert response.json()["results"][0]["status"] == "applied", response.json()


@pytest.mark.parametrize("name", sorted(ENDPOINTS))
@pytest.mark.parametrize("text", ['{"job": 1,', "{'single': 'quotes'}", "\x00"])
def test_malformed_json_is_a_clear_400(rig, name, text):
    before = stored()
    response = send(rig, name, raw=text)
    assert response.status_code == 400, response.content[:300]
    body = response.json()
    assert body, "a 400 must say what is wrong"
    assert stored() == before


SENTINEL = 123456.789
NAN_PATHS = {
    "sheets": ["entries", "valve_pressure", "value"],
    "sync": ["entries", "valve_pressure", "value"],
    "jobs": ["site"],
    "certifications": ["rated_capacity_kn"],
    "calc": ["vacuum_kpa"],
    "equipment": ["ratings", "id_mm"],
}


@pytest.mark.parametrize("token", ["NaN", "Infinity", "-Infinity"])
@pytest.mark.parametrize("name", sorted(NAN_PATHS))
def test_nan_and_infinity_are_refused(rig, name, token):
    """Python's json would read these; the API must not (they are not JSON)."""
    endpoint = ENDPOINTS[name]
    body = set_path(endpoint.body(rig), endpoint.prefix + tuple(NAN_PATHS[name]), SENTINEL)
    text = json.dumps(body).replace(str(SENTINEL), token)
    before = stored()
    response = send(rig, name, raw=text)
    assert response.status_code == 400, response.content[:300]
    where = "".join(
        f"[{part}]" if isinstance(part, int) else f".{part}"
        for part in endpoint.prefix + tuple(NAN_PATHS[name])
    ).lstrip(".")
    assert response.json() == {where: ["must be a finite number"]}, response.json()
    assert stored() == before


@pytest.mark.parametrize(
    ("name", "path", "value", "expect"),
    [
        ("sheets", ["job"], "one", "job"),
        ("sheets", ["entries"], ["pass"], "entries"),
        ("sheets", ["entries", "valve_pressure", "value"], "900", "entries.valve_pressure.value"),
        ("sheets", ["entries", "condition"], True, "entries.condition"),
        ("sheets", ["device_time"], 1700000000, "device_time"),
        ("sheets", ["client_uuid"], "phone-7", "client_uuid"),
        ("sync", ["job"], "one", "job"),
        ("sync", ["version"], True, "version"),
        ("sync", ["entries", "valve_pressure", "value"], [9], "entries.valve_pressure.value"),
        ("sync", ["device_time"], 1700000000, "device_time"),
        ("sync", ["remarks"], {"text": "no"}, "remarks"),
        ("jobs", ["site"], "Tower 0", "site"),
        ("jobs", ["date"], 20261202, "date"),
        ("jobs", ["supervisor"], [1], "supervisor"),
        ("certifications", ["rated_capacity_kn"], "strong", "rated_capacity_kn"),
        ("certifications", ["certified_on"], "05/01/2026", "certified_on"),
        ("certifications", ["certifier"], {"name": "Pat"}, "certifier"),
        ("calc", ["vacuum_kpa"], "deep", "vacuum_kpa"),
        ("calc", ["cups"], [4], "cups"),
        ("calc", ["mass_kg"], True, "mass_kg"),
        ("equipment", ["kind"], "ladder", "kind"),
        ("equipment", ["ratings"], "strong", "ratings"),
        ("equipment", ["ratings", "id_mm"], "12", "ratings.id_mm"),
        ("equipment", ["in_service"], "perhaps", "in_service"),
    ],
)
def test_wrong_types_name_the_field(rig, name, path, value, expect):
    assert_refused(rig, name, path, value, expect)


@pytest.mark.parametrize(
    ("name", "path", "expect"),
    [
        ("sheets", ["remarks"], "remarks"),
        ("sheets", ["entries", "condition", "value"], "entries.condition.value"),
        ("sheets", ["entries", "valve_pressure", "unit"], "entries.valve_pressure.unit"),
        ("sync", ["remarks"], "remarks"),
        ("sync", ["device_time"], "device_time"),
        ("sync", ["entries", "valve_pressure", "value"], "entries.valve_pressure.value"),
        ("certifications", ["certifier"], "certifier"),
        ("certifications", ["certifier_company"], "certifier_company"),
        ("calc", ["vacuum_kpa"], "vacuum_kpa"),
        ("equipment", ["label"], "label"),
        ("equipment", ["serial"], "serial"),
        ("jobs", ["notes"], "notes"),
    ],
)
def test_a_megabyte_string_is_refused_by_field(rig, name, path, expect):
    assert_refused(rig, name, path, MEGABYTE, expect)


def test_a_megabyte_item_key_is_refused_without_echoing_it_whole(rig):
    body = ENDPOINTS["sheets"].body(rig)
    body["entries"][MEGABYTE] = {"value": "pass"}
    response = send(rig, "sheets", body)
    assert response.status_code == 400
    assert len(response.content) < 2 * len(MEGABYTE) + 1000


@pytest.mark.parametrize(
    ("name", "path"),
    [
        ("sheets", [UNKNOWN]),
        ("sync", [UNKNOWN]),
        ("jobs", [UNKNOWN]),
        ("certifications", [UNKNOWN]),
        ("equipment", [UNKNOWN]),
        ("calc", [UNKNOWN]),
        ("equipment", ["ratings", UNKNOWN]),
        ("sheets", ["entries", UNKNOWN]),
        ("sync", ["entries", UNKNOWN]),
    ],
)
def test_an_unknown_field_is_named(rig, name, path):
    value = {"value": "pass"} if "entries" in path else "red"
    expect = ".".join(str(p) for p in path)
    assert_refused(rig, name, path, value, expect)


def test_an_unknown_field_on_the_sync_record_envelope_is_named(rig):
    body = ENDPOINTS["sync"].body(rig)
    body["records"][0]["typo"] = "sheet"
    errors = errors_of("sync", send(rig, "sync", body))
    assert "typo" in errors, errors


@pytest.mark.parametrize(
    ("name", "path", "value"),
    [
        ("jobs", ["date"], "1900-01-01"),
        ("jobs", ["date"], "2300-01-01"),
        ("certifications", ["certified_on"], "1900-01-01"),
        ("certifications", ["valid_until"], "2300-01-01"),
        ("equipment", ["made_on"], "1900-01-01"),
        ("equipment", ["next_inspection_due"], "2300-01-01"),
        ("certifications", ["certified_on"], "0000-01-01"),
        ("certifications", ["valid_until"], "10000-01-01"),
        ("jobs", ["date"], "2026-02-30"),
        ("sheets", ["device_time"], "2026-12-02T25:00:00Z"),
        ("sync", ["device_time"], "2026-12-02T07:05:00"),
    ],
)
def test_an_implausible_date_is_named(rig, name, path, value):
    assert_refused(rig, name, path, value, path[-1])


@pytest.mark.parametrize("name", ["sheets", "sync"])
@pytest.mark.parametrize("when", ["1900-01-01T06:00:00Z", "2300-01-01T06:00:00Z"])
def test_a_device_time_in_1900_or_2300_keeps_the_sheet(rig, name, when):
    """A phone whose clock reset must not lose its checks: the sheet is kept, both times too."""
    body = ENDPOINTS[name].body(rig)
    set_path(body, (*ENDPOINTS[name].prefix, "device_time"), when)
    if "sent_at" in body:
        body["sent_at"] = when  # the batch's time is the same reset clock's
    response = send(rig, name, body)
    assert response.status_code in (200, 201), response.json()
    sheet = CheckSheet.objects.get()
    assert sheet.device_time.year == int(when[:4])
    record = day_content(rig["job"])["sheets"][0]
    assert record["device_time"].startswith(when[:4]) and record["received_at"]


def test_a_device_time_in_1900_is_stated_in_the_daily_record(rig):
    body = ENDPOINTS["sync"].body(rig)
    body["records"][0]["data"]["device_time"] = "1900-01-01T06:00:00Z"
    body["sent_at"] = "1900-01-01T06:00:00Z"
    send(rig, "sync", body)
    content = day_content(rig["job"])
    sheet = content["sheets"][0]
    assert sheet["clock_offset_s"] < -100 * 365 * 24 * 3600
    assert any(n.startswith(f"sheet {sheet['id']}:") for n in content["clock_notes"])

"""The answers the phone reads most (a job's detail, the answer of an action on a job, the sync
answer) are exactly what the OpenAPI schema says, so the phone's types, generated from that
schema, describe what arrives. Each answer is checked against its schema component with
jsonschema; an object may carry no key its component does not declare."""

import copy
import uuid
from typing import Any

import jsonschema
import pytest
from django.urls import reverse
from drf_spectacular.generators import SchemaGenerator

from tests.api.test_sync import site_record, sync
from tests.conftest import PASSING, client_for

pytestmark = pytest.mark.django_db


def _json_schema(node: Any) -> Any:
    """OpenAPI 3.0 to JSON Schema: refs into $defs, `nullable` as a null alternative, and objects
    closed to keys they do not declare."""
    if isinstance(node, list):
        return [_json_schema(n) for n in node]
    if not isinstance(node, dict):
        return node
    out = {k: _json_schema(v) for k, v in node.items() if k != "nullable"}
    if "$ref" in out:
        out["$ref"] = out["$ref"].replace("#/components/schemas/", "#/$defs/")
    if out.get("type") == "object" and "properties" in out:
        out.setdefault("additionalProperties", False)
    if node.get("nullable"):
        return {"anyOf": [out, {"type": "null"}]}
    return out


@pytest.fixture(scope="module")
def components() -> dict[str, Any]:
    schema = SchemaGenerator().get_schema(request=None, public=True)
    return _json_schema(copy.deepcopy(schema["components"]["schemas"]))


def conforms(components: dict[str, Any], name: str, answer: Any) -> None:
    jsonschema.validate(answer, {"$ref": f"#/$defs/{name}", "$defs": components})


def test_a_job_s_detail_is_its_schema(job, simple_checklists, operator, components):
    client = client_for(operator)
    answer = client.get(reverse("job-detail", args=[job.pk]))
    assert answer.status_code == 200
    body = answer.json()
    conforms(components, "JobDetail", body)
    # Not vacuous: the answer has requirements, blockers and drops to check.
    assert body["requirements"] and body["blockers"] and body["drops"]


def test_a_refused_start_and_a_held_job_answer_in_the_same_shape(
    job, simple_checklists, operator, components
):
    client = client_for(operator)
    failing = site_record(
        job, simple_checklists, {**PASSING["site"], "zone_closed": {"value": "fail"}}
    )
    sync(client, [failing])
    body = client.get(reverse("job-detail", args=[job.pk])).json()
    conforms(components, "JobDetail", body)
    assert body["state"] == "held" and body["holds"]
    paused = client_for(job.supervisor).post(
        reverse("job-close", args=[job.pk]), {"reason": "Wind"}, format="json"
    )
    assert paused.status_code == 200
    conforms(components, "JobDetail", paused.json())


def test_every_kind_of_sync_line_is_its_schema(job, simple_checklists, operator, components):
    client = client_for(operator)
    applied = site_record(job, simple_checklists)
    refused = site_record(job, simple_checklists, {"zone_closed": {"value": "perhaps"}})
    start = {
        "type": "job_action",
        "client_uuid": str(uuid.uuid4()),
        "data": {"job": job.pk, "action": "start"},
    }
    body = sync(client, [applied, refused, start, None, {"client_uuid": "not a uuid"}])
    conforms(components, "SyncResult", body)
    again = sync(client, [applied])
    conforms(components, "SyncResult", again)
    lines = body["results"] + again["results"]
    # Each variety was answered: applied, refused by field, refused with reasons, a duplicate.
    assert [line["status"] for line in lines] == [
        "applied",
        "rejected",
        "rejected",
        "rejected",
        "rejected",
        "applied",
    ]
    assert lines[2]["reasons"] and lines[5]["duplicate"] is True


def test_a_key_the_schema_does_not_name_is_caught(job, operator, components):
    """The check itself can fail: an answer with one more key does not conform."""
    body = client_for(operator).get(reverse("job-detail", args=[job.pk])).json()
    body["unexpected"] = 1
    with pytest.raises(jsonschema.ValidationError):
        conforms(components, "JobDetail", body)

"""One bad record in a sync batch is refused alone, with its reason; the rest apply.

Impossible dates, years at the edge of the calendar with an offset, a lone surrogate, a NUL
character and an epoch-second decay series: none may turn the whole batch into a 500 (the
phone would resend it for ever) or store half a record.
"""

import json
import uuid

import pytest
from django.urls import reverse

from checklists.models import CheckSheet
from tests.api.test_sync import site_record
from tests.conftest import client_for

pytestmark = pytest.mark.django_db


def _with(record, **changes):
    record = json.loads(json.dumps(record))
    record["client_uuid"] = str(uuid.uuid4())
    record["data"].update(changes)
    return record


BAD = {
    "impossible date": {"device_time": "2026-02-30T10:00:00Z"},
    "year one with an offset": {"device_time": "0001-01-01T00:30:00+05:00"},
    "year 9999 with an offset": {"device_time": "9999-12-31T23:30:00-05:00"},
    "lone surrogate": {"remarks": "\ud800"},
    "NUL character": {"remarks": "gauge\x00reading"},
}


@pytest.mark.parametrize("why", list(BAD))
def test_a_bad_record_is_refused_alone_and_the_rest_apply(job, simple_checklists, operator, why):
    first = site_record(job, simple_checklists)
    bad = _with(site_record(job, simple_checklists), **BAD[why])
    last = site_record(job, simple_checklists)
    text = json.dumps({"records": [first, bad, last]}, ensure_ascii=True)
    response = client_for(operator).post(reverse("sync"), text, content_type="application/json")
    assert response.status_code == 200, response.content[:300]
    statuses = [r["status"] for r in response.json()["results"]]
    assert statuses == ["applied", "rejected", "applied"], response.json()["results"][1]
    assert response.json()["results"][1]["errors"]
    stored = set(CheckSheet.objects.values_list("client_uuid", flat=True))
    assert {str(u) for u in stored} == {first["client_uuid"], last["client_uuid"]}


@pytest.mark.parametrize("text", ["\ud800", "gauge\x00reading"], ids=["lone surrogate", "NUL"])
def test_a_sheet_posted_alone_with_unstorable_text_is_a_400_naming_it(
    job, simple_checklists, operator, text
):
    record = site_record(job, simple_checklists)
    body = json.dumps({**record["data"], "remarks": text}, ensure_ascii=True)
    response = client_for(operator).post(
        reverse("sheet-list"), body, content_type="application/json"
    )
    assert response.status_code == 400, response.content[:300]
    assert list(response.json()) == ["remarks"]
    assert CheckSheet.objects.count() == 0


def test_a_record_refused_after_it_wrote_leaves_nothing_and_its_run_applies_once(
    job, simple_checklists, operator, monkeypatch
):
    """A job's run is first applied with no savepoint per record; a record refused after its
    sheet was written (here, its outcome refused) rolls the whole run back, and the run is
    applied again with a savepoint per record: the refused one leaves nothing, the others land
    once, with one receipt each."""
    from checklists import services as sheet_services
    from compliance.errors import InvalidTransition
    from compliance.models import SyncReceipt

    records = [site_record(job, simple_checklists) for _ in range(3)]
    refused = records[1]["client_uuid"]
    outcome = sheet_services.apply_sheet_outcome

    def refuse_the_second(*, sheet, **kwargs):
        outcome(sheet=sheet, **kwargs)
        if str(sheet.client_uuid) == refused:
            raise InvalidTransition("Refused after the sheet was written.")

    monkeypatch.setattr(sheet_services, "apply_sheet_outcome", refuse_the_second)
    response = client_for(operator).post(reverse("sync"), {"records": records}, format="json")

    assert [r["status"] for r in response.json()["results"]] == ["applied", "rejected", "applied"]
    kept = {records[0]["client_uuid"], records[2]["client_uuid"]}
    assert {str(u) for u in CheckSheet.objects.values_list("client_uuid", flat=True)} == kept
    assert {str(u) for u in SyncReceipt.objects.values_list("client_uuid", flat=True)} == kept
    sheet = CheckSheet.objects.get(client_uuid=records[0]["client_uuid"])
    assert sheet.entries.count() == len(simple_checklists["site"].items)

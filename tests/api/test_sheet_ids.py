"""A sheet's client uuid names one record, whichever way it is sent: the sheets endpoint and
the offline sync both answer the same record sent again as the duplicate it is, and refuse
other content under a used id, storing nothing."""

import json
import uuid

import pytest
from django.urls import reverse

from checklists.models import CheckSheet
from compliance.jobs.sync import REUSED_ID
from compliance.models import Hold, JobTransition, SyncReceipt
from tests.api.test_sync import site_record, sync
from tests.conftest import PASSING, client_for

pytestmark = pytest.mark.django_db

FAILED_ZONE = {**PASSING["site"], "zone_closed": {"value": "fail"}}


def site_sheet(job, versions, entries=None, key=None) -> dict:
    """A site check as a script posts it to the sheets endpoint."""
    return {
        "client_uuid": key or str(uuid.uuid4()),
        "job": job.pk,
        "version": versions["site"].pk,
        "entries": entries or PASSING["site"],
    }


def post(user, body):
    return client_for(user).post(reverse("sheet-list"), body, format="json")


def stored(job):
    return (
        CheckSheet.objects.filter(job=job).count(),
        SyncReceipt.objects.count(),
        Hold.objects.filter(job=job).count(),
        JobTransition.objects.filter(job=job).count(),
    )


def test_a_sheet_posted_again_under_its_id_with_other_content_is_refused(
    job, simple_checklists, operator
):
    """A failure posted under the client uuid of a pass already stored was answered 200 with
    the pass, as its duplicate: the failure was stored nowhere and no hold opened."""
    passing = site_sheet(job, simple_checklists)
    first = post(operator, passing)
    assert first.status_code == 201, first.json()
    before = stored(job)

    response = post(operator, {**passing, "entries": FAILED_ZONE})

    assert response.status_code == 400, response.json()
    assert response.json() == {"client_uuid": [REUSED_ID]}
    assert stored(job) == before
    assert CheckSheet.objects.get(client_uuid=passing["client_uuid"]).verdict == "pass"


def test_the_same_sheet_posted_again_is_answered_as_its_duplicate(job, simple_checklists, operator):
    """The same record, keys in another order and 7 written 7.0, is the stored copy (200)."""
    body = site_sheet(job, simple_checklists)
    body["entries"] = {"zone_closed": {"value": "pass"}, "roof_wind": {"value": 7, "unit": "m/s"}}
    first = post(operator, body)
    assert first.status_code == 201, first.json()
    before = stored(job)
    again = json.loads(json.dumps(body))
    again = dict(reversed(list(again.items())))
    again["entries"]["roof_wind"]["value"] = 7.0

    response = post(operator, again)

    assert response.status_code == 200, response.json()
    assert response.json() == first.json()
    assert stored(job) == before


def test_a_posted_sheet_s_id_sent_by_the_sync_with_other_content_is_refused_there(
    job, simple_checklists, operator
):
    """Posted first, then the phone's queue sends its id again: the same record is a
    duplicate, another one is refused alone in its batch."""
    client = client_for(operator)
    body = site_sheet(job, simple_checklists)
    created = post(operator, body).json()
    same = {"type": "sheet", "client_uuid": body["client_uuid"], "data": dict(body)}
    del same["data"]["client_uuid"]
    other = site_record(job, simple_checklists, FAILED_ZONE, key=body["client_uuid"])

    duplicate, refused = sync(client, [same, other])["results"]

    assert duplicate["status"] == "applied" and duplicate["duplicate"] is True
    assert duplicate["sheet"] == created["id"]
    assert refused == {
        "client_uuid": body["client_uuid"],
        "status": "rejected",
        "errors": {"client_uuid": [REUSED_ID]},
    }
    assert not Hold.objects.filter(job=job).exists()


def test_a_synced_sheet_s_id_posted_with_other_content_is_refused(job, simple_checklists, operator):
    record = site_record(job, simple_checklists)
    (line,) = sync(client_for(operator), [record])["results"]
    assert line["status"] == "applied"
    before = stored(job)
    body = {"client_uuid": record["client_uuid"], **record["data"]}

    again = post(operator, body)
    other = post(operator, {**body, "entries": FAILED_ZONE})

    assert again.status_code == 200 and again.json()["id"] == line["sheet"]
    assert other.status_code == 400
    assert other.json() == {"client_uuid": [REUSED_ID]}
    assert stored(job) == before

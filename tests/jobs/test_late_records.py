"""Checks that reach the server late, from a phone that was offline on the roof: a failure is
never thrown away (stop work first), a late or doubtful pass may be refused."""

import datetime as dt
import json
import uuid

import pytest
from django.urls import reverse
from django.utils import timezone

from checklists.models import CheckSheet
from checklists.services import record_sheet
from compliance import clock
from compliance.errors import InvalidTransition
from compliance.jobs.selectors import job_requirements
from compliance.jobs.services import close_job, start_job
from compliance.models import Hold, JobState, SyncReceipt
from compliance.records.services import OPEN_HOLDS_NOT_SAFE, day_content, sign_daily_record
from compliance.records.signing import create_self_signed
from tests.conftest import PASSING, client_for, fill_all
from tests.factories import PASSWORD

pytestmark = pytest.mark.django_db

FAILED_LINE = {"sheath": {"value": "fail"}}


@pytest.fixture
def day(job):
    """The job's day is the day of half an hour ago, and the rules run as on it: a check made
    minutes ago is on the job's day even just after midnight."""
    day = timezone.localdate(timezone.now() - dt.timedelta(minutes=30))
    type(job).objects.filter(pk=job.pk).update(date=day)
    job.refresh_from_db()
    with clock.replaying(day):
        yield day


@pytest.fixture
def working(job, day, simple_checklists, operator):
    fill_all(job, simple_checklists, operator)
    start_job(job=job, by=operator)
    job.refresh_from_db()
    return job


def line_record(job, versions, entries, made: dt.datetime | None):
    """The safety line's check as the phone queues it, filled at ``made`` by its clock."""
    req = next(r for r in job_requirements(job) if r.subject.kind == "safety_line")
    data = {
        "job": job.pk,
        "version": versions["safety_line"].pk,
        "equipment": req.subject.equipment.pk,
        "entries": entries,
        "remarks": "Sheath cut through at 40 m; line withdrawn.",
    }
    if made is not None:
        data["device_time"] = made.isoformat()
    return {"type": "sheet", "client_uuid": str(uuid.uuid4()), "data": data}


def send(user, records, sent_at: dt.datetime | None = None):
    body: dict = {"records": records}
    if sent_at is not None:
        body["sent_at"] = sent_at.isoformat()
    response = client_for(user).post(reverse("sync"), body, format="json")
    assert response.status_code == 200, response.json()
    return response.json()["results"]


def open_holds(job):
    return list(Hold.objects.filter(job=job, clearance__isnull=True))


# A failure found before the job closed, sent after it closed.


def test_a_failure_made_before_the_job_closed_is_kept_and_holds_the_closed_day(
    working, simple_checklists, operator, supervisor
):
    """It was refused ("This job is closed") and stored nowhere, and the day was then signed
    'safe to proceed' with no trace of the cut line."""
    create_self_signed(organisation=working.organisation)
    record = line_record(
        working, simple_checklists, FAILED_LINE, timezone.now() - dt.timedelta(minutes=10)
    )
    close_job(job=working, by=supervisor, reason="Done for the day.")

    (line,) = send(operator, [record], sent_at=timezone.now())

    assert line["status"] == "applied", line
    assert (line["verdict"], line["blocking_failures"]) == ("fail", 1)
    working.refresh_from_db()
    assert working.state == JobState.CLOSED
    (hold,) = open_holds(working)
    assert hold.sheet.client_uuid == uuid.UUID(record["client_uuid"])
    with pytest.raises(InvalidTransition) as refused:
        sign_daily_record(job=working, by=supervisor, password=PASSWORD, meaning="reviewed_safe")
    assert refused.value.message == OPEN_HOLDS_NOT_SAFE
    signed = sign_daily_record(
        job=working, by=supervisor, password=PASSWORD, meaning="reviewed_stopped"
    )
    document = json.loads(signed.canonical_json)
    assert document["open_holds"] == 1
    assert "Sheath cut through at 40 m" in signed.canonical_json


def test_a_failure_recorded_through_the_service_after_the_close_holds_the_closed_day(
    working, simple_checklists, operator, supervisor
):
    """The same outside a sync batch (the sheets endpoint): the job's row is locked first."""
    made = timezone.now() - dt.timedelta(minutes=10)
    close_job(job=working, by=supervisor, reason="Done for the day.")
    working.refresh_from_db()
    req = next(r for r in job_requirements(working) if r.subject.kind == "safety_line")

    sheet, created = record_sheet(
        job=working,
        version=simple_checklists["safety_line"],
        by=operator,
        entries=FAILED_LINE,
        equipment=req.subject.equipment,
        device_time=made,
        phone_clock_offset_s=0,
    )

    assert created and sheet.verdict == "fail"
    assert [hold.sheet_id for hold in open_holds(working)] == [sheet.pk]
    working.refresh_from_db()
    assert working.state == JobState.CLOSED


def test_a_late_pass_on_a_closed_job_stays_refused(working, simple_checklists, operator):
    record = line_record(
        working,
        simple_checklists,
        PASSING["safety_line"],
        timezone.now() - dt.timedelta(minutes=10),
    )
    close_job(job=working, by=operator)

    (line,) = send(operator, [record], sent_at=timezone.now())

    assert line["status"] == "rejected"
    assert line["errors"] == {"record": ["This job is closed; its sheets can no longer change."]}
    assert not CheckSheet.objects.filter(client_uuid=record["client_uuid"]).exists()


def test_a_failure_made_after_the_job_closed_is_refused_and_says_so(
    working, simple_checklists, operator
):
    """Only a check made while the day was open belongs to its record; the refusal stays on the
    phone, in words that say why."""
    close_job(job=working, by=operator)
    record = line_record(working, simple_checklists, FAILED_LINE, timezone.now())

    (line,) = send(operator, [record], sent_at=timezone.now())

    assert line["status"] == "rejected"
    (words,) = line["errors"]["record"]
    assert words.startswith("This job closed before this check was made")
    assert not CheckSheet.objects.filter(client_uuid=record["client_uuid"]).exists()
    assert open_holds(working) == []


def test_a_failure_for_a_signed_day_is_refused_in_words_that_lead_to_an_addendum(
    working, simple_checklists, operator, supervisor
):
    """The signed record cannot change (a later row would read as tampering): the check is
    refused, and the words say the day is signed and what a correction is."""
    create_self_signed(organisation=working.organisation)
    record = line_record(
        working, simple_checklists, FAILED_LINE, timezone.now() - dt.timedelta(minutes=10)
    )
    close_job(job=working, by=supervisor)
    sign_daily_record(job=working, by=supervisor, password=PASSWORD, meaning="reviewed_safe")

    (line,) = send(operator, [record], sent_at=timezone.now())

    assert line["status"] == "rejected"
    assert line["errors"] == {
        "record": [
            "This day's record is already signed, so this failed check cannot be added to it."
            " Tell the supervisor: a correction to a signed day is a signed addendum to its"
            " record."
        ]
    }
    assert not CheckSheet.objects.filter(client_uuid=record["client_uuid"]).exists()
    assert not SyncReceipt.objects.filter(client_uuid=record["client_uuid"]).exists()


# A failure whose phone's clock puts it on another day.

RESET = dt.datetime(2000, 1, 1, 10, 15, tzinfo=dt.UTC)
"""A phone whose battery was pulled wakes up on 2000-01-01."""


def test_a_failure_from_a_phone_whose_clock_reset_is_kept_made_when_received(
    working, simple_checklists, operator
):
    """It was refused as 'made on 2000-01-01' (a check is made on its job's day) and no hold
    opened, while the same failure sent without sent_at was kept: the day rule refuses a pass,
    never a failure."""
    record = line_record(working, simple_checklists, FAILED_LINE, RESET)

    (line,) = send(operator, [record], sent_at=timezone.now())

    assert line["status"] == "applied", line
    assert line["verdict"] == "fail"
    sheet = CheckSheet.objects.get(client_uuid=record["client_uuid"])
    assert sheet.device_time == RESET
    assert sheet.made_at == sheet.received_at
    (hold,) = open_holds(working)
    assert hold.sheet_id == sheet.pk
    working.refresh_from_db()
    assert working.state == JobState.HELD
    (note,) = [n for n in day_content(working)["clock_notes"] if n.startswith(f"sheet {sheet.pk}:")]
    assert "2000-01-01T10:15:00Z" in note
    assert "counts as made when the server received it" in note


def test_a_pass_from_a_phone_whose_clock_reset_is_still_refused(
    working, simple_checklists, operator
):
    record = line_record(working, simple_checklists, PASSING["safety_line"], RESET)

    (line,) = send(operator, [record], sent_at=timezone.now())

    assert line["status"] == "rejected"
    assert line["errors"] == {
        "job": [
            f"This job is for {working.date.isoformat()}: its pre-start checks are made on its"
            " day, and this one was made on 2000-01-01."
        ]
    }
    assert not CheckSheet.objects.filter(client_uuid=record["client_uuid"]).exists()


def test_a_failure_with_no_time_of_its_own_for_another_day_is_kept_without_a_clock_note(
    job, simple_checklists, operator
):
    """Tomorrow's job, a failure found today and sent without a phone time: kept, holding the
    job, counted as made when received; there is no phone time to doubt, so no clock note."""
    type(job).objects.filter(pk=job.pk).update(date=timezone.localdate() + dt.timedelta(days=1))
    job.refresh_from_db()
    req = next(r for r in job_requirements(job) if r.subject.kind == "safety_line")

    sheet, created = record_sheet(
        job=job,
        version=simple_checklists["safety_line"],
        by=operator,
        entries=FAILED_LINE,
        equipment=req.subject.equipment,
    )

    assert created and not sheet.made_at_receipt
    assert [hold.sheet_id for hold in open_holds(job)] == [sheet.pk]
    assert day_content(job)["clock_notes"] == []


# Which pass clears a hold.


def test_an_older_pass_sent_without_sent_at_leaves_a_newer_failure_holding(
    working, simple_checklists, operator
):
    """A pass filled half an hour before the failure, on a phone that was offline, came in a
    batch without sent_at: counted as made when received, it was 'newer' and cleared the hold,
    and the job was cleared to start again. Its own clock says it is older: the hold stays
    until a check made after the failure passes."""
    now = timezone.now()
    failure = line_record(working, simple_checklists, FAILED_LINE, now - dt.timedelta(minutes=1))
    assert send(operator, [failure], sent_at=now)[0]["verdict"] == "fail"
    stale = line_record(
        working, simple_checklists, PASSING["safety_line"], now - dt.timedelta(minutes=30)
    )

    (line,) = send(operator, [stale])

    assert (line["status"], line["verdict"]) == ("applied", "pass")
    (hold,) = open_holds(working)
    assert hold.sheet.client_uuid == uuid.UUID(failure["client_uuid"])
    working.refresh_from_db()
    assert working.state == JobState.HELD

    fresh = line_record(working, simple_checklists, PASSING["safety_line"], timezone.now())
    send(operator, [fresh], sent_at=timezone.now())
    assert open_holds(working) == []
    working.refresh_from_db()
    assert working.state == JobState.CLEARED


def test_a_pass_from_a_phone_set_right_by_its_batch_clears_a_failure_from_a_fast_phone(
    working, simple_checklists, operator
):
    """Each phone's time is set right by its own batch's clock before the two are compared: a
    failure from a phone five hours fast is cleared by a pass made after it on a phone that is
    right, not five hours later."""
    now = timezone.now()
    fast = dt.timedelta(hours=5)
    failure = line_record(
        working, simple_checklists, FAILED_LINE, now + fast - dt.timedelta(minutes=2)
    )
    send(operator, [failure], sent_at=now + fast)
    assert len(open_holds(working)) == 1

    later = timezone.now()
    send(operator, [line_record(working, simple_checklists, PASSING["safety_line"], later)], later)

    assert open_holds(working) == []

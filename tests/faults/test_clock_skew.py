"""The phone's clock is hours off: the server's time is kept beside the phone's, and said so."""

import datetime as dt
import uuid

import pytest
from django.urls import reverse
from django.utils import timezone

from checklists.models import CheckSheet
from compliance.models import SyncReceipt
from compliance.records.services import day_content
from tests.conftest import PASSING, client_for

pytestmark = pytest.mark.django_db

SKEW = dt.timedelta(hours=5)


def site_record(job, versions, device_time, entries=None):
    """A site check in a sync batch, filled at the phone's `device_time`."""
    return {
        "type": "sheet",
        "client_uuid": str(uuid.uuid4()),
        "data": {
            "job": job.pk,
            "version": versions["site"].pk,
            "entries": entries or PASSING["site"],
            "device_time": device_time.isoformat(),
        },
    }


def send_site_sheet(job, versions, operator, device_time, sent_at=None):
    record = site_record(job, versions, device_time)
    body = {"records": [record]} if sent_at is None else {"records": [record], "sent_at": sent_at}
    before = timezone.now()
    response = client_for(operator).post(reverse("sync"), body, format="json")
    after = timezone.now()
    assert response.status_code == 200
    assert response.json()["results"][0]["status"] == "applied", response.json()
    return record, before, after, response.json()


def sheet_in_record(job, client_uuid):
    return next(s for s in day_content(job)["sheets"] if s["client_uuid"] == client_uuid)


@pytest.mark.parametrize("direction", [1, -1], ids=["phone-fast", "phone-slow"])
def test_device_time_and_server_time_are_both_kept(job, simple_checklists, operator, direction):
    phone_now = timezone.now() + direction * SKEW
    record, before, after, body = send_site_sheet(job, simple_checklists, operator, phone_now)
    sheet = CheckSheet.objects.get(client_uuid=record["client_uuid"])
    assert sheet.device_time == phone_now
    assert before <= sheet.received_at <= after
    assert abs(dt.datetime.fromisoformat(body["server_time"]) - sheet.received_at) < SKEW / 100
    in_record = sheet_in_record(job, record["client_uuid"])
    assert in_record["device_time"] == phone_now.astimezone(dt.UTC).isoformat().replace(
        "+00:00", "Z"
    )
    assert in_record["received_at"] == sheet.received_at.astimezone(dt.UTC).isoformat().replace(
        "+00:00", "Z"
    )


def clock_notes_about(job, sheet_id):
    return [n for n in day_content(job)["clock_notes"] if n.startswith(f"sheet {sheet_id}:")]


def test_a_phone_clock_hours_fast_is_stated_in_the_daily_record(job, simple_checklists, operator):
    record, *_ = send_site_sheet(job, simple_checklists, operator, timezone.now() + SKEW)
    sheet = sheet_in_record(job, record["client_uuid"])
    assert sheet["clock_offset_s"] == pytest.approx(SKEW.total_seconds(), abs=60)
    (note,) = clock_notes_about(job, sheet["id"])
    assert "5 h" in note and "ahead of" in note and sheet["received_at"] in note


def test_a_correct_clock_is_not_flagged(job, simple_checklists, operator):
    record, *_ = send_site_sheet(job, simple_checklists, operator, timezone.now())
    sheet = sheet_in_record(job, record["client_uuid"])
    assert abs(sheet["clock_offset_s"]) < 60
    assert clock_notes_about(job, sheet["id"]) == []


def test_a_phone_clock_hours_slow_keeps_both_times(job, simple_checklists, operator):
    """Behind by 5 h looks like a sheet filled offline and sent later: both times are kept."""
    record, *_ = send_site_sheet(job, simple_checklists, operator, timezone.now() - SKEW)
    sheet = sheet_in_record(job, record["client_uuid"])
    assert sheet["clock_offset_s"] == pytest.approx(-SKEW.total_seconds(), abs=60)


def test_a_phone_clock_hours_slow_is_stated_when_the_batch_says_when_it_was_sent(
    job, simple_checklists, operator
):
    phone_now = timezone.now() - SKEW
    record = {
        "type": "sheet",
        "client_uuid": str(uuid.uuid4()),
        "data": {
            "job": job.pk,
            "version": simple_checklists["site"].pk,
            "entries": PASSING["site"],
            "device_time": (phone_now - dt.timedelta(minutes=1)).isoformat(),
        },
    }
    response = client_for(operator).post(
        reverse("sync"), {"records": [record], "sent_at": phone_now.isoformat()}, format="json"
    )
    assert response.json()["results"][0]["status"] == "applied"
    sheet = sheet_in_record(job, record["client_uuid"])
    assert clock_notes_about(job, sheet["id"]), "the 5 h slow clock is not stated"


def test_the_receipt_keeps_the_device_time(job, simple_checklists, operator):
    phone_now = timezone.now() - SKEW
    record, *_ = send_site_sheet(job, simple_checklists, operator, phone_now)
    receipt = SyncReceipt.objects.get(client_uuid=record["client_uuid"])
    assert receipt.device_time == phone_now


@pytest.mark.parametrize("sent_at", ["1900-01-01T00:00:00+00:00", "2300-06-01T12:00:00+00:00"])
def test_a_phone_clock_reset_decades_off_keeps_its_sheet_and_states_the_offset(
    job, simple_checklists, operator, sent_at
):
    # More than 68 years off does not fit a 32-bit column: on PostgreSQL the whole batch was
    # a 500 and lost.
    phone_now = dt.datetime.fromisoformat(sent_at)
    record, *_ = send_site_sheet(job, simple_checklists, operator, phone_now, sent_at=sent_at)
    offset = (phone_now - timezone.now()).total_seconds()
    sheet = CheckSheet.objects.get(client_uuid=record["client_uuid"])
    receipt = SyncReceipt.objects.get(client_uuid=record["client_uuid"])
    assert abs(offset) > 2**31
    assert sheet.phone_clock_offset_s == pytest.approx(offset, abs=60)
    assert receipt.phone_clock_offset_s == sheet.phone_clock_offset_s


def test_in_one_batch_an_older_pass_leaves_a_newer_failure_holding(
    job, simple_checklists, operator
):
    """A phone five hours fast sends, in one batch, a failed site check and a pass it filled
    two hours before it: the pass was applied after the failure and cleared its hold. Set right
    by the batch's clock, the pass is the older: the job stays held until a check made after
    the failure passes."""
    from compliance import clock
    from compliance.models import Hold, JobState

    def site(entries, made):
        return site_record(job, simple_checklists, made, entries)

    now = timezone.now()
    day = timezone.localdate(now - dt.timedelta(hours=2))
    type(job).objects.filter(pk=job.pk).update(date=day)
    job.refresh_from_db()
    failed = {**PASSING["site"], "zone_closed": {"value": "fail"}}
    phone = now + SKEW
    client = client_for(operator)
    with clock.replaying(day):
        body = {
            "records": [site(failed, phone), site(PASSING["site"], phone - dt.timedelta(hours=2))],
            "sent_at": phone.isoformat(),
        }
        response = client.post(reverse("sync"), body, format="json")
        assert [r["status"] for r in response.json()["results"]] == ["applied", "applied"]
        job.refresh_from_db()
        assert job.state == JobState.HELD
        assert Hold.objects.filter(job=job, clearance__isnull=True).count() == 1

        later = timezone.now() + SKEW
        body = {"records": [site(PASSING["site"], later)], "sent_at": later.isoformat()}
        response = client.post(reverse("sync"), body, format="json")
        assert response.json()["results"][0]["status"] == "applied"
    assert Hold.objects.filter(job=job, clearance__isnull=True).count() == 0


def test_a_hold_says_when_its_check_was_made_by_the_server_s_clock(
    job, simple_checklists, operator
):
    """A hold's opening is when its check reached the server; `found_at` is when the check was
    made, the phone's time set right by its batch's clock (five hours fast here)."""
    failed = {**PASSING["site"], "zone_closed": {"value": "fail"}}
    made = timezone.now() + SKEW - dt.timedelta(minutes=30)
    record = site_record(job, simple_checklists, made, failed)
    phone_now = timezone.now() + SKEW
    client = client_for(operator)
    body = {"records": [record], "sent_at": phone_now.isoformat()}
    assert client.post(reverse("sync"), body, format="json").status_code == 200

    (hold,) = client.get(reverse("job-detail", args=[job.pk])).json()["holds"]

    found = dt.datetime.fromisoformat(hold["found_at"])
    opened = dt.datetime.fromisoformat(hold["opened_at"])
    assert abs((opened - found) - dt.timedelta(minutes=30)) < dt.timedelta(seconds=5)


def test_a_sheet_posted_alone_says_when_it_was_sent_as_a_batch_does(
    job, simple_checklists, operator
):
    """A script posting to /sheets/ could not say when it sent: a phone 5 h slow read as a sheet
    filled offline 5 h before, and the slow clock went unstated. `sent_at` is taken as in a
    batch; the same sheet sent again later, with a later `sent_at`, is the same record."""
    phone_now = timezone.now() - SKEW
    body = {
        "client_uuid": str(uuid.uuid4()),
        "job": job.pk,
        "version": simple_checklists["site"].pk,
        "entries": PASSING["site"],
        "device_time": (phone_now - dt.timedelta(minutes=1)).isoformat(),
    }
    client = client_for(operator)
    response = client.post(
        reverse("sheet-list"), {**body, "sent_at": phone_now.isoformat()}, format="json"
    )
    assert response.status_code == 201, response.json()
    stored = CheckSheet.objects.get(client_uuid=body["client_uuid"])
    assert stored.phone_clock_offset_s == pytest.approx(-SKEW.total_seconds(), abs=60)
    assert clock_notes_about(job, sheet_in_record(job, body["client_uuid"])["id"])

    later = (phone_now + dt.timedelta(minutes=3)).isoformat()
    again = client.post(reverse("sheet-list"), {**body, "sent_at": later}, format="json")
    assert again.status_code == 200, again.json()
    assert again.json()["id"] == response.json()["id"]


@pytest.mark.parametrize("sent_at", ["yesterday", "", 5])
def test_a_sheet_posted_with_an_unreadable_sent_at_is_refused_naming_it(
    job, simple_checklists, operator, sent_at
):
    body = {
        "job": job.pk,
        "version": simple_checklists["site"].pk,
        "entries": PASSING["site"],
        "sent_at": sent_at,
    }
    response = client_for(operator).post(reverse("sheet-list"), body, format="json")
    assert response.status_code == 400
    assert list(response.json()) == ["sent_at"]
    assert not CheckSheet.objects.exists()


def test_a_sheet_the_phone_dates_tomorrow_is_not_tomorrow_s_check_today(
    simple_checklists, operator
):
    """The phone's time set right by its batch's clock was taken whatever it said: a check
    dated tomorrow 00:30 by a phone whose clock was right, sent today, satisfied tomorrow's
    job (re-attack round). A record is never made after it is received."""
    from tests.factories import JobFactory, make_drop

    tomorrow = timezone.localdate() + dt.timedelta(days=1)
    job = JobFactory(date=tomorrow, organisation=operator.organisation)
    make_drop(job)
    midnight_after = timezone.make_aware(
        dt.datetime.combine(tomorrow, dt.time(0, 30)), timezone.get_current_timezone()
    )
    body = {
        "job": job.pk,
        "version": simple_checklists["site"].pk,
        "entries": PASSING["site"],
        "device_time": midnight_after.isoformat(),
        "sent_at": timezone.now().isoformat(),
    }
    response = client_for(operator).post(reverse("sheet-list"), body, format="json")
    assert response.status_code == 400, response.json()
    assert not CheckSheet.objects.filter(job=job).exists()


@pytest.mark.parametrize("sent_at", ["2026-12-05T17:50:00", "2026-W49-6", "2026-12-05"])
@pytest.mark.parametrize("way", ["sync", "sheets"])
def test_a_sent_at_without_its_offset_is_refused_naming_it(
    job, simple_checklists, operator, sent_at, way
):
    """A naive time was read in the server's zone, and an ISO week date as midnight UTC: both
    stored a wrong clock offset with the records instead of a 400 (re-attack round). A phone's
    own times already had to carry their offset."""
    body = {
        "job": job.pk,
        "version": simple_checklists["site"].pk,
        "entries": PASSING["site"],
    }
    client = client_for(operator)
    if way == "sync":
        record = {"type": "sheet", "client_uuid": str(uuid.uuid4()), "data": body}
        response = client.post(
            reverse("sync"), {"records": [record], "sent_at": sent_at}, format="json"
        )
    else:
        response = client.post(reverse("sheet-list"), {**body, "sent_at": sent_at}, format="json")
    assert response.status_code == 400
    assert list(response.json()) == ["sent_at"]
    assert not CheckSheet.objects.exists()

"""Who plans, starts and ends a day's work: planning and closing a job before work are the
supervisor's; the crew starts, pauses and ends the work it does."""

import uuid

import pytest
from django.urls import reverse

from compliance.models import Job, JobTransition
from tests.api.test_sync import site_record
from tests.conftest import client_for
from tests.factories import drop_body

pytestmark = pytest.mark.django_db


def test_an_operator_cannot_plan_a_job_or_its_drops(job, operator, supervisor):
    client = client_for(operator)
    before = Job.objects.count()

    planned = client.post(
        reverse("job-list"),
        {"site": job.site_id, "date": job.date.isoformat(), "supervisor": supervisor.pk},
        format="json",
    )
    drop = job.drops.get()
    added = client.post(
        reverse("job-drops", args=[job.pk]), drop_body(drop, length_m=10), format="json"
    )

    assert planned.status_code == 403, planned.json()
    assert added.status_code == 403, added.json()
    assert Job.objects.count() == before and job.drops.count() == 1


def test_a_job_that_never_started_is_closed_by_a_supervisor_with_a_reason(
    job, operator, supervisor
):
    url = reverse("job-close", args=[job.pk])

    by_operator = client_for(operator).post(url, {"reason": "Nobody came."}, format="json")
    no_reason = client_for(supervisor).post(url, {}, format="json")
    closed = client_for(supervisor).post(url, {"reason": "Rain all day."}, format="json")

    assert by_operator.status_code == 403
    assert no_reason.status_code == 400
    assert no_reason.json() == {"reason": ["Say why the job ends before any work."]}
    assert closed.status_code == 200, closed.json()
    last = JobTransition.objects.filter(job=job).latest("id")
    assert (last.to_state, last.reason) == ("closed", "Closed before work started: Rain all day.")


def test_the_crew_still_ends_the_day_it_worked(job, simple_checklists, operator):
    from compliance.jobs.services import start_job
    from tests.conftest import fill_all

    fill_all(job, simple_checklists, operator)
    start_job(job=job, by=operator)

    response = client_for(operator).post(reverse("job-close", args=[job.pk]), {}, format="json")

    assert response.status_code == 200
    assert JobTransition.objects.filter(job=job).latest("id").reason == "Work finished for the day."


def test_a_later_day_s_job_takes_no_pre_start_check_and_does_not_start(
    job, simple_checklists, operator
):
    """A check made today says nothing of the rig tomorrow: a sheet sent for tomorrow's job
    (the phone lists planned days) was applied and counted as done for that day."""
    import datetime as dt

    from django.utils import timezone

    from checklists.models import CheckSheet

    job.date = timezone.localdate() + dt.timedelta(days=1)
    job.save()
    record = site_record(job, simple_checklists)
    record["data"]["device_time"] = timezone.now().isoformat()
    client = client_for(operator)

    synced = client.post(reverse("sync"), {"records": [record]}, format="json")
    started = client.post(reverse("job-start", args=[job.pk]))

    result = synced.json()["results"][0]
    assert result["status"] == "rejected", result
    words = (
        f"This job is for {job.date.isoformat()}: its pre-start checks are made on its day, and"
        f" this one was made on {timezone.localdate().isoformat()}."
    )
    assert result["errors"] == {"job": [words]}
    assert not CheckSheet.objects.filter(job=job).exists()
    assert started.status_code == 409
    assert started.json()["detail"] == (
        f"This job is for {job.date.isoformat()}: work starts on its day, not before or after."
    )


def test_a_past_day_is_not_planned(job, supervisor):
    """A job planned days after its date could then be checked, started and signed 'checked
    and safe' as if the work had been cleared on its day."""
    import datetime as dt

    from django.utils import timezone

    past = timezone.localdate() - dt.timedelta(days=4)
    before = Job.objects.count()

    response = client_for(supervisor).post(
        reverse("job-list"),
        {"site": job.site_id, "date": past.isoformat(), "supervisor": supervisor.pk},
        format="json",
    )

    assert response.status_code == 400, response.json()
    assert response.json() == {
        "date": [f"{past.isoformat()} has passed: a job is planned for today or a later day."]
    }
    assert Job.objects.count() == before


def test_a_past_day_s_job_takes_no_check_made_today_and_does_not_start(
    job, simple_checklists, operator
):
    """A job of four days ago (planned then, never started) took today's checks, started and
    was signed as safe; the owner's log book dated today's anchor checks four days back."""
    import datetime as dt

    from django.utils import timezone

    from checklists.models import CheckSheet
    from compliance.models import AnchorLogEntry

    job.date = timezone.localdate() - dt.timedelta(days=4)
    job.save()
    client = client_for(operator)
    record = site_record(job, simple_checklists)
    record["data"]["device_time"] = timezone.now().isoformat()

    synced = client.post(reverse("sync"), {"records": [record]}, format="json")
    started = client.post(reverse("job-start", args=[job.pk]))

    result = synced.json()["results"][0]
    assert result["status"] == "rejected", result
    assert result["errors"] == {
        "job": [
            f"This job is for {job.date.isoformat()}: its pre-start checks are made on its day,"
            f" and this one was made on {timezone.localdate().isoformat()}."
        ]
    }
    assert not CheckSheet.objects.filter(job=job).exists()
    assert not AnchorLogEntry.objects.filter(performed_on=job.date).exists()
    assert started.status_code == 409
    assert started.json()["detail"] == (
        f"This job is for {job.date.isoformat()}: work starts on its day, not before or after."
    )


def test_a_check_filled_offline_on_the_job_s_day_is_taken_the_day_after(
    job, simple_checklists, operator
):
    """No signal on the roof all day: yesterday's sheet reaches the server this morning with
    the phone's time of filling, and counts for yesterday's job."""
    import datetime as dt

    from django.utils import timezone

    from checklists.models import CheckSheet

    job.date = timezone.localdate() - dt.timedelta(days=1)
    job.save()
    record = site_record(job, simple_checklists)
    filled = timezone.now() - dt.timedelta(days=1)
    record["data"]["device_time"] = filled.isoformat()

    synced = client_for(operator).post(reverse("sync"), {"records": [record]}, format="json")

    assert synced.json()["results"][0]["status"] == "applied", synced.json()
    assert CheckSheet.objects.filter(job=job).count() == 1


def test_a_held_job_that_never_started_is_closed_by_a_supervisor_only(
    job, simple_checklists, operator, supervisor
):
    """A failed check before any work holds the job; an operator then closed it for good."""
    from checklists.services import record_sheet
    from tests.conftest import PASSING

    record_sheet(
        job=job,
        version=simple_checklists["site"],
        by=operator,
        entries={**PASSING["site"], "zone_closed": {"value": "fail"}},
    )
    job.refresh_from_db()
    assert job.state == "held"
    url = reverse("job-close", args=[job.pk])

    by_operator = client_for(operator).post(url, {"reason": "Going home."}, format="json")
    by_supervisor = client_for(supervisor).post(url, {"reason": "Zone not closed."}, format="json")

    assert by_operator.status_code == 403
    assert by_supervisor.status_code == 200


@pytest.mark.parametrize("blank", ["\u200b", "\u2060 \u200b", "\ufeff"])
def test_a_reason_of_invisible_characters_is_no_reason(job, supervisor, blank):
    response = client_for(supervisor).post(
        reverse("job-close", args=[job.pk]), {"reason": blank}, format="json"
    )
    assert response.status_code == 400
    assert response.json() == {"reason": ["Say why the job ends before any work."]}


def test_a_check_filled_the_evening_before_is_not_today_s(job, simple_checklists, operator):
    """Sent this morning with the phone's clock right (its batch says so), a sheet whose time of
    filling was last night counted for today's job."""
    import datetime as dt

    from django.utils import timezone

    from checklists.models import CheckSheet

    record = site_record(job, simple_checklists)
    evening = timezone.localtime().replace(hour=21, minute=30) - dt.timedelta(days=1)
    record["data"]["device_time"] = evening.isoformat()
    body = {"records": [record], "sent_at": timezone.now().isoformat()}

    synced = client_for(operator).post(reverse("sync"), body, format="json")

    result = synced.json()["results"][0]
    assert result["status"] == "rejected", result
    assert "this one was made on" in result["errors"]["job"][0]
    assert not CheckSheet.objects.filter(job=job).exists()


def test_a_drop_done_on_another_day_is_not_logged_to_the_job(job, simple_checklists, operator):
    """A job started on its day and left working: the next day's drops were logged to it, as
    if yesterday's checks covered them."""
    import datetime as dt
    from unittest import mock

    from django.utils import timezone

    from compliance import clock
    from compliance.jobs.services import start_job
    from compliance.models import DropLog
    from tests.conftest import fill_all

    job.date = timezone.localdate() - dt.timedelta(days=1)
    job.save()
    # Started yesterday, as its job log says (a drop is kept only for a time the job was at
    # work); the replay sets the day, the clock the times stored.
    started = timezone.now() - dt.timedelta(days=1, minutes=5)
    job.drops.update(added_at=started - dt.timedelta(hours=1))  # planned before its checks
    with (
        clock.replaying(job.date),
        mock.patch("django.utils.timezone.now", return_value=started),
    ):
        fill_all(job, simple_checklists, operator)
        start_job(job=job, by=operator)
    drop = job.drops.get()

    def log(device_time):
        data = {"drop": drop.pk, "note": "Whole drop done."}
        if device_time is not None:
            data["device_time"] = device_time.isoformat()
        record = {"type": "drop_log", "client_uuid": str(uuid.uuid4()), "data": data}
        body = {"records": [record], "sent_at": timezone.now().isoformat()}
        return client_for(operator).post(reverse("sync"), body, format="json").json()

    today = log(timezone.now())["results"][0]
    unstated = log(None)["results"][0]
    yesterday = log(timezone.now() - dt.timedelta(days=1))["results"][0]

    assert today["status"] == unstated["status"] == "rejected", (today, unstated)
    assert today["errors"]["drop"][0].startswith(f"This job is for {job.date.isoformat()}")
    assert yesterday["status"] == "applied", yesterday
    assert DropLog.objects.filter(drop=drop).count() == 1

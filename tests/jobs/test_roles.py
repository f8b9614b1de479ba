"""Who plans, starts and ends a day's work: planning and closing a job before work are the
supervisor's; the crew starts, pauses and ends the work it does."""

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
    client = client_for(operator)

    synced = client.post(reverse("sync"), {"records": [record]}, format="json")
    started = client.post(reverse("job-start", args=[job.pk]))

    result = synced.json()["results"][0]
    assert result["status"] == "rejected", result
    words = f"This job is for {job.date.isoformat()}: its pre-start checks are made on its day."
    assert result["errors"] == {"job": [words]}
    assert not CheckSheet.objects.filter(job=job).exists()
    assert started.status_code == 409
    assert started.json()["detail"] == (
        f"This job is for {job.date.isoformat()}: it starts on its day."
    )


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

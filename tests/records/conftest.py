import pytest

from compliance import clock
from compliance.jobs.services import close_job, start_job
from compliance.records.services import sign_daily_record
from compliance.records.signing import create_self_signed
from tests.conftest import fill_all
from tests.factories import PASSWORD, JobFactory, make_drop


@pytest.fixture
def job(db):
    """The day of the records tests is ten days back, so the days after it that the chain
    tests sign are days that have come (a day is signed on or after its day)."""
    import datetime as dt

    from django.utils import timezone

    job = JobFactory(date=timezone.localdate() - dt.timedelta(days=10))
    make_drop(job)
    return job


@pytest.fixture
def credential(job):
    return create_self_signed(organisation=job.organisation)


def work_the_day(job, versions, operator):
    """The day's checks, start and close, as on the job's day (checks are made and work starts
    on a job's day)."""
    with clock.replaying(job.date):
        fill_all(job, versions, operator)
        start_job(job=job, by=operator)
        close_job(job=job, by=operator)
    job.refresh_from_db()
    return job


@pytest.fixture
def closed_job(job, simple_checklists, operator, credential):
    return work_the_day(job, simple_checklists, operator)


def next_day_job(job, simple_checklists, operator, days=1):
    import datetime as dt

    other = JobFactory(
        site=job.site, supervisor=job.supervisor, date=job.date + dt.timedelta(days=days)
    )
    make_drop(other)
    return work_the_day(other, simple_checklists, operator)


@pytest.fixture
def signed(closed_job, supervisor):
    return sign_daily_record(
        job=closed_job,
        by=supervisor,
        password=PASSWORD,
        meaning="reviewed_safe",
        remarks="All drops done.",
    )


@pytest.fixture
def signed_pdf(signed):
    from compliance.records.files import render_signed_pdf

    return render_signed_pdf(signed)

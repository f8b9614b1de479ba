import pytest

from compliance.jobs.services import close_job, start_job
from compliance.records.services import sign_daily_record
from compliance.records.signing import create_self_signed
from tests.conftest import fill_all
from tests.factories import PASSWORD


def sign_closed_job(job, simple_checklists, operator, supervisor):
    """Fill, start, close and sign the job's day; returns the sealed daily record."""
    create_self_signed(organisation=job.organisation)
    fill_all(job, simple_checklists, operator)
    start_job(job=job, by=operator)
    close_job(job=job, by=operator)
    job.refresh_from_db()
    return sign_daily_record(
        job=job, by=supervisor, password=PASSWORD, meaning="reviewed_safe", remarks="Done."
    )


@pytest.fixture
def signed_record(job, simple_checklists, operator, supervisor):
    """A closed job's daily record, signed and sealed, with no PDF rendered yet."""
    return sign_closed_job(job, simple_checklists, operator, supervisor)

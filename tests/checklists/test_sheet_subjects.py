"""A sheet's subject is part of the job's rig: a check of kit on none of its drops is refused."""

import datetime as dt
import uuid
from types import SimpleNamespace

import pytest
from django.urls import reverse

from checklists.models import CheckSheet
from compliance.models import Hold, JobState
from tests.api.test_sync import sheet_record, site_record, sync
from tests.conftest import PASSING, client_for
from tests.factories import JobFactory, UserFactory, make_drop

pytestmark = pytest.mark.django_db

STRAY = {"equipment": ["This equipment is not on any of the job's drops."]}


@pytest.fixture
def tomorrows_line(job):
    """A safety line booked only on the same crew's job for tomorrow, at the same site."""
    tomorrow = JobFactory(
        site=job.site, supervisor=job.supervisor, date=job.date + dt.timedelta(days=1)
    )
    return make_drop(tomorrow).safety_line


def _failing_line_sheet(job, version, line):
    return {
        "client_uuid": str(uuid.uuid4()),
        "job": job.pk,
        "version": version.pk,
        "equipment": line.pk,
        "entries": {"sheath": {"value": "fail"}},
    }


def test_a_sheet_for_kit_on_none_of_the_jobs_drops_is_refused(
    job, simple_checklists, operator, tomorrows_line
):
    """It was judged against the job's first drop, failed, and held today's job until another
    sheet for that unrelated line passed."""
    body = _failing_line_sheet(job, simple_checklists["safety_line"], tomorrows_line)
    response = client_for(operator).post(reverse("sheet-list"), body, format="json")
    assert response.status_code == 400
    assert response.json() == STRAY
    assert not CheckSheet.objects.exists()
    assert not Hold.objects.exists()
    job.refresh_from_db()
    assert job.state == JobState.PLANNED


def test_a_synced_sheet_for_kit_on_none_of_the_jobs_drops_is_refused_alone(
    job, simple_checklists, operator, tomorrows_line
):
    site = site_record(job, simple_checklists)
    line = SimpleNamespace(anchor=None, equipment=tomorrows_line)
    stray = sheet_record(
        job, simple_checklists["safety_line"], {"sheath": {"value": "fail"}}, subject=line
    )
    first, second = sync(client_for(operator), [site, stray])["results"]
    assert first["status"] == "applied"
    assert second == {"client_uuid": stray["client_uuid"], "status": "rejected", "errors": STRAY}
    assert list(CheckSheet.objects.values_list("client_uuid", flat=True)) == [
        uuid.UUID(site["client_uuid"])
    ]
    assert not Hold.objects.exists()


def test_kit_the_job_uses_and_the_site_are_still_checked(job, simple_checklists, operator):
    client = client_for(operator)
    line = job.drops.get().safety_line
    for version, subject in (
        (simple_checklists["safety_line"], {"equipment": line.pk}),
        (simple_checklists["site"], {}),
    ):
        kind = version.checklist.applies_to
        body = {"job": job.pk, "version": version.pk, "entries": PASSING[kind], **subject}
        response = client.post(reverse("sheet-list"), body, format="json")
        assert response.status_code == 201, response.json()
        assert response.json()["verdict"] == "pass"


def test_a_site_check_on_a_job_with_no_drops_yet_is_judged(simple_checklists):
    """No drop to serve: its limits read the profile and the site alone."""
    job = JobFactory()
    operator = UserFactory(organisation=job.organisation, role="operator")
    version = simple_checklists["site"]
    body = {"job": job.pk, "version": version.pk, "entries": PASSING["site"]}
    response = client_for(operator).post(reverse("sheet-list"), body, format="json")
    assert response.status_code == 201, response.json()
    assert response.json()["verdict"] == "pass"

"""An auditor reads a site-month in two requests: the month's sheets and the month's records,
each filtered by site and period."""

import datetime as dt

import pytest
from django.urls import reverse

from checklists.models import CheckSheet
from compliance.models import Job
from tests.conftest import client_for, fill_all
from tests.factories import JobFactory, UserFactory, make_drop

pytestmark = pytest.mark.django_db


@pytest.fixture
def month(job, simple_checklists, operator):
    """Sheets on three days at the job's site (one of them in the previous month) and one day
    at another site of the same organisation."""
    day = dt.date(2026, 11, 10)
    jobs = []
    for date in (day, day + dt.timedelta(days=5), dt.date(2026, 10, 31)):
        other = JobFactory(site=job.site, supervisor=job.supervisor, date=date)
        make_drop(other)
        fill_all(other, simple_checklists, operator)
        jobs.append(other)
    elsewhere = JobFactory(site__organisation=job.organisation, supervisor=job.supervisor, date=day)
    make_drop(elsewhere)
    fill_all(elsewhere, simple_checklists, operator)
    return jobs


def test_the_month_s_sheets_of_one_site(month, job, django_assert_num_queries):
    auditor = UserFactory(organisation=job.organisation, role="auditor")
    client = client_for(auditor)
    query = {"site": job.site_id, "start": "2026-11-01", "end": "2026-11-30", "limit": 1000}
    with django_assert_num_queries(3):  # the user, the count, the page with its joins
        response = client.get(reverse("sheet-list"), query)
    assert response.status_code == 200
    expected = CheckSheet.objects.filter(job__in=month[:2]).count()
    assert response.json()["count"] == expected > 0
    assert {r["job"] for r in response.json()["results"]} == {month[0].pk, month[1].pk}


@pytest.mark.parametrize(
    ("query", "field", "words"),
    [
        ({"start": "2026-11"}, "start", "A date as YYYY-MM-DD."),
        ({"end": "2026-02-30"}, "end", "A date as YYYY-MM-DD."),
        ({"start": "2026-11-30", "end": "2026-11-01"}, "end", "Must not be before start."),
    ],
)
@pytest.mark.parametrize("route", ["sheet-list", "record-list"])
def test_a_period_that_is_not_one_is_named(job, route, query, field, words):
    response = client_for(job.supervisor).get(reverse(route), query)
    assert (response.status_code, response.json()) == (400, {field: [words]})


def test_the_month_s_records_of_one_site(job):
    client = client_for(job.supervisor)
    answer = client.get(
        reverse("record-list"), {"site": job.site_id, "start": "2026-11-01", "end": "2026-11-30"}
    )
    assert (answer.status_code, answer.json()["count"]) == (200, 0)
    assert Job.objects.filter(site=job.site).exists()


def test_the_list_answers_each_sheet_as_its_detail_does(month, job):
    """The list reads entries as plain rows; what it answers must be what the detail answers
    (the serializer's output), value for value and in the same order."""
    client = client_for(job.supervisor)
    listed = client.get(reverse("sheet-list"), {"site": job.site_id, "limit": 1000}).json()
    assert listed["count"] == CheckSheet.objects.filter(job__site=job.site).count() > 5
    for row in listed["results"]:
        detail = client.get(reverse("sheet-detail", args=[row["id"]]))
        assert detail.status_code == 200
        assert row == detail.json()
        assert list(row) == list(detail.json())

"""Query counts per request stay the same when the tables grow."""

import pytest
from django.db import connection
from django.test.utils import CaptureQueriesContext
from django.urls import reverse

from tests.conftest import client_for, fill_all
from tests.factories import JobFactory, make_drop

pytestmark = pytest.mark.django_db


def grow(job, simple_checklists, operator, extra_jobs):
    """Add jobs with drops and passing sheets to the job's organisation."""
    for n in range(extra_jobs):
        other = JobFactory(site=job.site, supervisor=job.supervisor)
        make_drop(other, label=f"D{n}")
        make_drop(other, label=f"E{n}")
        fill_all(other, simple_checklists, operator)


def count(client, url):
    with CaptureQueriesContext(connection) as ctx:
        response = client.get(url)
    assert response.status_code == 200, url
    return len(ctx.captured_queries)


LISTS = [
    "job-list",
    "site-list",
    "anchor-list",
    "equipment-list",
    "sheet-list",
    "checklist-list",
    "checklist-version-list",
    "profile-list",
]


def test_list_endpoints_do_not_grow_with_rows(job, simple_checklists, operator):
    client = client_for(operator)
    fill_all(job, simple_checklists, operator)
    grow(job, simple_checklists, operator, 1)
    small = {name: count(client, reverse(name)) for name in LISTS}
    grow(job, simple_checklists, operator, 4)
    large = {name: count(client, reverse(name)) for name in LISTS}
    assert small == large, (small, large)
    assert all(n <= 8 for n in large.values()), large


def test_job_detail_does_not_grow_with_drops_or_sheets(job, simple_checklists, operator):
    client = client_for(operator)
    fill_all(job, simple_checklists, operator)
    url = reverse("job-detail", args=[job.pk])
    small = count(client, url)
    for n in range(4):
        make_drop(job, label=f"X{n}")
    fill_all(job, simple_checklists, operator)
    fill_all(job, simple_checklists, operator)
    assert count(client, url) == small


def test_sheet_detail_is_constant(job, simple_checklists, operator, django_assert_num_queries):
    sheets = fill_all(job, simple_checklists, operator)
    client = client_for(operator)
    few = min(sheets, key=lambda s: s.entries.count())
    many = max(sheets, key=lambda s: s.entries.count())
    assert count(client, reverse("sheet-detail", args=[few.pk])) == count(
        client, reverse("sheet-detail", args=[many.pk])
    )
    with django_assert_num_queries(count(client, reverse("sheet-detail", args=[few.pk]))):
        client.get(reverse("sheet-detail", args=[many.pk]))

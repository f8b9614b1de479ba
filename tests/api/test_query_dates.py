"""Dates in query strings: YYYY-MM-DD only, else a 400 naming the parameter.

Python's date parser also takes ISO week dates (2026-W49-1) and the basic form (20261201);
the export took them while the lists refused them, and the job list answered a date it could
not read with an empty list, as if there were no jobs that day.
"""

import pytest
from django.urls import reverse

from tests.conftest import client_for

pytestmark = pytest.mark.django_db

NOT_DAYS = ["2026-W49-1", "20261201", "2026-02-30", "garbage", "２０２６-１２-０１", "2026-12-1"]


@pytest.mark.parametrize("text", NOT_DAYS)
def test_the_job_list_refuses_a_date_it_cannot_read(job, supervisor, text):
    response = client_for(supervisor).get(reverse("job-list"), {"date": text})
    assert response.status_code == 400
    assert response.json() == {"date": ["A date as YYYY-MM-DD."]}


def test_the_job_list_still_filters_by_a_real_date(job, supervisor):
    response = client_for(supervisor).get(reverse("job-list"), {"date": job.date.isoformat()})
    assert response.status_code == 200
    assert [j["id"] for j in response.json()["results"]] == [job.pk]


@pytest.mark.parametrize("text", NOT_DAYS)
def test_the_export_refuses_a_date_it_cannot_read(job, supervisor, text):
    day = job.date.isoformat()
    response = client_for(supervisor).get(
        reverse("record-export"), {"site": job.site_id, "start": text, "end": day}
    )
    assert response.status_code == 400
    assert response.json()["start"] == ["A date as YYYY-MM-DD."]

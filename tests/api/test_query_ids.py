"""Ids in query strings: plain ASCII digits, at most 18 of them, else a 400 naming the parameter.

'²' and '٣' pass str.isdigit(); int('²') raised (a 500 on every endpoint filtering by it), and a
30-digit id overflowed PostgreSQL's bigint.
"""

import pytest
from django.urls import reverse

from tests.conftest import client_for

BAD = ["²", "٣", "1" * 30, "-1", "1.0", " 1"]

ENDPOINTS = [
    ("anchor-list", "site"),
    ("record-list", "site"),
    ("record-list", "job"),
    ("record-export", "site"),
    ("anchor-log-list", "site"),
    ("anchor-log-list", "anchor"),
    ("sheet-list", "job"),
]


@pytest.mark.parametrize(("route", "param"), ENDPOINTS)
@pytest.mark.parametrize(
    "value", BAD, ids=["superscript", "arabic-indic", "30 digits", "minus", "decimal", "space"]
)
def test_a_query_id_that_is_not_plain_digits_is_a_400_naming_it(
    job, supervisor, route, param, value
):
    response = client_for(supervisor).get(reverse(route), {param: value})
    assert response.status_code == 400, response.content[:200]
    assert list(response.json()) == [param]


def test_a_good_query_id_still_filters(job, supervisor):
    response = client_for(supervisor).get(reverse("sheet-list"), {"job": str(job.pk)})
    assert response.status_code == 200
    response = client_for(supervisor).get(reverse("sheet-list"), {"job": "123456789012345678"})
    assert response.status_code == 200
    assert response.json()["results"] == []

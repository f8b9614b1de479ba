"""A day holding a number past 2**53 is sealed, signed and verified like any other.

JSON numbers are IEEE-754 doubles (RFC 8785 section 3.2.2.3; I-JSON, RFC 7493 section 2.2):
the canonical text of the double 1e17 is ``100000000000000000`` (ECMAScript's Number::toString,
which RFC 8785 adopts), and PostgreSQL's jsonb gives such a double back as those digits, which
Python reads as an integer. An integer past 2**53 is therefore read as the double nearest it.
A stuck key (a reading of 99999999999999999) made a day on PostgreSQL that could never be
signed (500), and on any database a signed record whose attached text failed the canonical
check.
"""

import pytest

from compliance import clock
from compliance.jobs.services import close_job, start_job
from compliance.records.checks import verify_pdf
from compliance.records.files import render_signed_pdf
from compliance.records.sealing import canonical_bytes, is_canonical
from compliance.records.services import sign_daily_record
from tests.conftest import fill_all
from tests.factories import PASSWORD

pytestmark = pytest.mark.django_db


def test_an_integer_past_2_53_is_sealed_as_the_double_nearest_it():
    # 1e17 and 10**17 are the same double; its ECMAScript text is the 18 digits.
    assert canonical_bytes({"a": 1e17}) == b'{"a":100000000000000000}'
    assert canonical_bytes({"a": 10**17}) == b'{"a":100000000000000000}'
    # 2**53 + 1 has no double: its nearest is 2**53.
    assert canonical_bytes({"a": 2**53 + 1}) == b'{"a":9007199254740992}'
    # Outside the fast path too (a key outside the Basic Multilingual Plane).
    assert canonical_bytes({"\U0001f600": 10**17}) == '{"\U0001f600":100000000000000000}'.encode()
    assert is_canonical(b'{"a":100000000000000000}')
    assert is_canonical('{"\U0001f600":100000000000000000}'.encode())
    assert not is_canonical(b'{"a":9007199254740993}')  # no double writes these digits
    assert not is_canonical(b'{"a":' + b"9" * 400 + b"}")  # past the largest double


def test_a_day_with_a_reading_past_2_53_is_signed_and_verifies(
    job, simple_checklists, operator, supervisor, credential
):
    stuck_key = {"anchor": {"tag_capacity": {"value": 99999999999999999, "unit": "kN"}}}
    with clock.replaying(job.date):
        fill_all(job, simple_checklists, operator, overrides=stuck_key)
        start_job(job=job, by=operator)
        close_job(job=job, by=operator)
    job.refresh_from_db()

    record = sign_daily_record(
        job=job, by=supervisor, password=PASSWORD, meaning="reviewed_safe", remarks=""
    )

    assert is_canonical(record.canonical_json.encode())
    assert b"100000000000000000" in record.canonical_json.encode()
    report = verify_pdf(render_signed_pdf(record), name="record.pdf")
    assert report.ok, report.verdict()

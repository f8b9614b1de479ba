"""A day on which work went on without a recent wind reading is not signed "safe", and its
record says when (compliance.timeline.weather_gaps, from the record as sealed).

The beat holds a job at work within the minute its weather check runs out; where it did not
(no beat running, or the reading stayed unread through a pause), the signed record is where the
gap shows, and the signer must say why.
"""

import datetime as dt

import pytest
from django.db import connection
from django.test.utils import CaptureQueriesContext
from django.utils import timezone
from rest_framework.test import APIClient

from compliance.errors import InvalidTransition
from compliance.jobs.services import close_job, start_job, stop_work_on_stale_weather
from compliance.records.files import render_signed_pdf
from compliance.records.services import sign_daily_record
from compliance.records.signing import create_self_signed
from compliance.timeline import WEATHER_GRACE, weather_gaps
from tests.factories import (
    PASSWORD,
    JobFactory,
    ProfileFactory,
    SiteFactory,
    UserFactory,
    make_drop,
    published_checklist,
    reading,
)
from tests.records.test_readable_record import text_of

T0 = dt.datetime(2026, 3, 4, 7, 0, tzinfo=dt.UTC)
EVERY_HOUR = {"weather_recheck_min": {"value": 60, "unit": "min", "source": "test"}}


def _at(minutes):
    return (T0 + dt.timedelta(minutes=minutes)).isoformat().replace("+00:00", "Z")


def _record(readings, moves, thresholds=EVERY_HOUR):
    """A sealed record's parts: weather sheets made at `readings` (minutes after 07:00) and
    the job's transitions `moves` as (minutes, from, to)."""
    return {
        "profile": {"thresholds": thresholds},
        "sheets": [
            {
                "checklist": "weather",
                "device_time": _at(m),
                "received_at": _at(m + 5),
                "phone_clock_offset_s": 0,
            }
            for m in readings
        ]
        + [{"checklist": "anchor-check", "device_time": _at(0), "received_at": _at(0)}],
        "transitions": [{"at": _at(m), "from": a, "to": b} for m, a, b in moves],
    }


def _spans(gaps):
    return [
        ((a - T0) / dt.timedelta(minutes=1), (b - T0) / dt.timedelta(minutes=1)) for a, b in gaps
    ]


WORKED = [(10, "cleared", "working"), (150, "working", "closed")]


@pytest.mark.parametrize(
    ("readings", "moves", "gaps"),
    [
        # Read at 07:00, worked 07:10 to 09:30: unread from 08:00.
        ([0], WORKED, [(60, 150)]),
        # Read again at 08:30: unread from 08:00 to 08:30, then in time to the close.
        ([0, 90], WORKED, [(60, 90)]),
        # Read every 50 minutes: never unread.
        ([0, 50, 100], WORKED, []),
        # Read a minute late: within the beat's grace.
        ([0, 61, 120], WORKED, []),
        # Worked to 07:50, paused, and worked again from 08:20 on the 07:00 reading.
        (
            [0],
            [
                (10, "cleared", "working"),
                (50, "working", "cleared"),
                (80, "cleared", "working"),
                (110, "working", "closed"),
            ],
            [(80, 110)],
        ),
        # Work began before any reading was made.
        ([20], [(0, "cleared", "working"), (40, "working", "closed")], [(0, 20)]),
        # A failed reading is a reading: the hold it opens ends the work.
        ([0], [(10, "cleared", "working"), (30, "working", "held")], []),
    ],
)
def test_when_work_went_on_without_a_recent_wind_reading(readings, moves, gaps):
    assert _spans(weather_gaps(_record(readings, moves))) == gaps


def test_a_profile_without_a_recheck_time_finds_no_gap():
    assert weather_gaps(_record([0], WORKED, thresholds={})) == []


def test_the_phone_s_own_time_set_right_counts_not_the_receipt():
    """Read at 07:00 on a phone 10 min fast (it said 07:10) and received at 08:05: due again
    at 08:00, not at 09:05."""
    record = _record([0], WORKED)
    record["sheets"][0] |= {
        "device_time": _at(10),
        "phone_clock_offset_s": 600,
        "received_at": _at(65),
    }

    assert _spans(weather_gaps(record)) == [(60, 150)]


@pytest.mark.parametrize(
    "broken",
    [
        {"profile": None},
        {"profile": {"thresholds": {"weather_recheck_min": {"value": "sixty"}}}},
        {"profile": {"thresholds": {"weather_recheck_min": {"value": True}}}},
        {"profile": {"thresholds": {"weather_recheck_min": {"value": -5}}}},
        {"sheets": [None, {"checklist": "weather", "received_at": "not a time"}]},
        {"transitions": [None, {"at": 5, "to": "working"}, {"at": "x", "from": "working"}]},
    ],
)
def test_a_record_of_any_shape_gives_gaps_or_none_and_never_fails(broken):
    record = _record([0], WORKED) | broken
    assert isinstance(weather_gaps(record), list)


def test_the_grace_is_the_beat_s_minute_and_the_next():
    assert dt.timedelta(minutes=1) < WEATHER_GRACE <= dt.timedelta(minutes=2)


# -- Signing a day -------------------------------------------------------------------------


@pytest.fixture
def clock_at(monkeypatch, settings):
    """The server's clock, moved by hand from 11:00 UTC on the day (every "now" reads it:
    receipts, transitions, staleness)."""
    settings.TIME_ZONE = "UTC"
    now = [timezone.now().replace(hour=11, minute=0, second=0, microsecond=0)]
    monkeypatch.setattr(timezone, "now", lambda: now[0])

    def move(minutes):
        now[0] += dt.timedelta(minutes=minutes)
        return now[0]

    return move


@pytest.fixture
def day(db, clock_at):
    weather = published_checklist(
        "weather", "site", [reading("roof_wind", "m/s", {"max": {"profile": "max_wind_ms"}})]
    )
    profile = ProfileFactory(
        key="hourly",
        thresholds={**ProfileFactory._meta.declarations["thresholds"], **EVERY_HOUR},
    )
    job = JobFactory(site=SiteFactory(profile=profile), date=timezone.now().date())
    make_drop(job)
    create_self_signed(organisation=job.organisation)
    operator = UserFactory(organisation=job.organisation, role="operator")

    def read_wind(minutes_before=0):
        from checklists.services import record_sheet

        record_sheet(
            job=job,
            version=weather,
            by=operator,
            entries={"roof_wind": {"value": 5.0, "unit": "m/s"}},
            device_time=timezone.now() - dt.timedelta(minutes=minutes_before),
            phone_clock_offset_s=0,
        )
        job.refresh_from_db()

    return job, operator, read_wind


def test_a_day_worked_past_its_wind_reading_is_not_signed_safe(day, clock_at, settings, tmp_path):
    settings.MEDIA_ROOT = tmp_path
    job, operator, read_wind = day
    read_wind(minutes_before=10)  # read at 10:50 offline, received at 11:00
    clock_at(1)
    start_job(job=job, by=operator)  # 11:01, no beat running
    clock_at(99)
    close_job(job=job, by=operator)  # 12:40

    with pytest.raises(InvalidTransition) as refused:
        sign_daily_record(job=job, by=job.supervisor, password=PASSWORD, meaning="reviewed_safe")

    assert "read again within the 60 min a reading counted for (11:50 to 12:40)" in str(
        refused.value
    )
    record = sign_daily_record(
        job=job,
        by=job.supervisor,
        password=PASSWORD,
        meaning="reviewed_exceptions",
        remarks="The anemometer reading at noon was not entered.",
    )
    first_page = " ".join(text_of(render_signed_pdf(record)).split("\f")[0].split())
    assert "Work went on without a recent wind reading" in first_page
    assert "It was not read in time from 2026" in first_page and "11:50:00 to" in first_page
    # The sheet says when it counts as read, which is where the gap is reckoned from.
    assert "counted as read" in " ".join(text_of(render_signed_pdf(record)).split())


def test_a_day_the_beat_stopped_in_time_is_signed_safe(day, clock_at):
    job, operator, read_wind = day
    read_wind()  # 11:00
    clock_at(1)
    start_job(job=job, by=operator)
    clock_at(60)  # 12:01: the beat finds the reading ran out at 12:00
    assert stop_work_on_stale_weather() == 1
    clock_at(9)
    read_wind()  # 12:10 clears the hold
    clock_at(1)
    start_job(job=job, by=operator)
    clock_at(30)
    close_job(job=job, by=operator)

    record = sign_daily_record(
        job=job, by=job.supervisor, password=PASSWORD, meaning="reviewed_safe"
    )

    assert record.meaning.startswith("Reviewed: the pre-start checks were complete")


def test_each_reading_counts_for_the_time_in_force_when_it_was_made():
    """The profile at signing keeps a reading 10 h; the reading itself was judged on 60 min:
    a day worked past it is not made safe by a later reload."""
    record = _record([0], WORKED, thresholds={"weather_recheck_min": {"value": 600}})
    record["sheets"][0]["judged_on"] = {"1": {"profile.weather_recheck_min": 60}}

    assert _spans(weather_gaps(record)) == [(60, 150)]


def test_a_reading_judged_under_no_time_counts_all_day():
    record = _record([0], WORKED)
    record["sheets"][0]["judged_on"] = {"1": {"profile.weather_recheck_min": None}}

    assert weather_gaps(record) == []


def test_a_reading_sent_without_the_batch_s_time_counts_from_the_phone_s_time():
    """Received at 07:45 without the batch's time, the phone saying 07:00: due at 08:00."""
    record = _record([0], WORKED)
    record["sheets"][0] |= {"phone_clock_offset_s": None, "received_at": _at(45)}

    assert _spans(weather_gaps(record)) == [(60, 150)]


def test_a_profile_loosened_after_the_day_does_not_make_it_safe(day, clock_at, settings, tmp_path):
    """The reading's own time stands: safe is refused (here first because the check was
    judged on a time that reads otherwise now), and the record says when the wind went unread
    by the 60 min the reading was judged on, not the 600 of the profile at signing."""
    settings.MEDIA_ROOT = tmp_path
    job, operator, read_wind = day
    read_wind()
    clock_at(1)
    start_job(job=job, by=operator)
    clock_at(99)
    close_job(job=job, by=operator)
    profile = job.site.profile
    profile.thresholds = {**profile.thresholds, **{"weather_recheck_min": {"value": 600}}}
    profile.save()

    with pytest.raises(InvalidTransition) as refused:
        sign_daily_record(job=job, by=job.supervisor, password=PASSWORD, meaning="reviewed_safe")

    assert "wind again" in str(refused.value) or "weather" in str(refused.value).lower()
    record = sign_daily_record(
        job=job,
        by=job.supervisor,
        password=PASSWORD,
        meaning="reviewed_exceptions",
        remarks="The profile was reloaded after the day.",
    )
    first_page = " ".join(text_of(render_signed_pdf(record)).split("\f")[0].split())
    assert "It was not read in time from" in first_page and "12:00:00 to" in first_page


QUERIES_WHILE_WORKING = 9
"""A job's detail while it is at work (tests/api/test_query_counts.py pins it on a larger day)."""


def test_the_job_detail_says_so_before_the_password_is_typed(day, clock_at):
    """The sign page offered "safe" and the server refused it only after the password."""
    job, operator, read_wind = day
    read_wind()
    clock_at(1)
    start_job(job=job, by=operator)
    client = APIClient()
    client.force_authenticate(job.supervisor)
    url = f"/api/v1/jobs/{job.pk}/"
    with CaptureQueriesContext(connection) as reads:
        assert client.get(url).json()["unread_wind"] == ""  # at work: the beat's business
    assert len(reads) == QUERIES_WHILE_WORKING
    clock_at(99)
    close_job(job=job, by=operator)

    with CaptureQueriesContext(connection) as reads:
        response = client.get(url)

    assert response.status_code == 200
    # One more read than the same job's detail at work: the day's weather checks.
    assert len(reads) == QUERIES_WHILE_WORKING + 1
    assert response.json()["unread_wind"] == (
        "Work went on without a recent wind reading (12:00 to 12:40)."
    )


@pytest.mark.parametrize(
    ("judged", "words"),
    [
        ([60], "60 min"),
        ([60, 120], "60 or 120 min"),
        ([0.5], "0.5 min"),
        ([30.5, 60, 120], "30.5, 60, 120 min"),
        ([None], ""),
    ],
)
def test_the_time_a_reading_counted_for_is_told_as_it_was_judged(judged, words):
    """The sentence said "every 120 min" (the profile at signing) of gaps judged on 60, and
    "0 min" of half a minute."""
    from compliance.timeline import interval_words

    record = _record([0] * len(judged), WORKED, thresholds={"weather_recheck_min": {"value": 120}})
    for sheet, minutes in zip(record["sheets"], judged, strict=False):
        sheet["judged_on"] = {"1": {"profile.weather_recheck_min": minutes}}

    assert interval_words(record) == words

"""A weather check counts for as long as the profile says (`weather_recheck_min`).

The wind read at 07:00 said nothing of the wind at 13:00, yet it cleared the job all day: the
robot could start after lunch, or work on all afternoon, on the morning's reading. Now a job
does not start on a weather check older than the profile allows, and a job at work whose check
runs out is held (by the beat, each minute) until the wind is read again.
"""

import datetime as dt
import types

import pytest
from django.utils import timezone

from checklists.services import record_sheet
from compliance import clock
from compliance.errors import JobBlocked
from compliance.jobs import selectors as job_selectors
from compliance.jobs.services import start_job, stop_work_on_stale_weather
from compliance.models import Hold, JobState
from tests.factories import (
    JobFactory,
    ProfileFactory,
    SiteFactory,
    UserFactory,
    make_drop,
    published_checklist,
    reading,
)

pytestmark = pytest.mark.django_db

RECHECK = {"value": 60, "unit": "min", "source": "test"}


@pytest.fixture(autouse=True)
def midday_zone(settings):
    """A zone where it is between 02:00 and 22:00 now, so that a reading made an hour ago or
    two hours on is on the job's day wherever and whenever the suite runs."""
    hour = timezone.now().hour
    settings.TIME_ZONE = "Etc/GMT" if 2 <= hour <= 21 else "Etc/GMT+12"


@pytest.fixture
def weather(db):
    return published_checklist(
        "weather", "site", [reading("roof_wind", "m/s", {"max": {"profile": "max_wind_ms"}})]
    )


def _job(recheck=RECHECK):
    thresholds = {
        **ProfileFactory._meta.declarations["thresholds"],
        **({"weather_recheck_min": recheck} if recheck else {}),
    }
    profile = ProfileFactory(key=f"weather-{bool(recheck)}", thresholds=thresholds)
    job = JobFactory(site=SiteFactory(profile=profile))
    make_drop(job)
    return job


@pytest.fixture
def job(weather):
    return _job()


@pytest.fixture
def operator(job):
    return UserFactory(organisation=job.organisation, role="operator")


def read_wind(job, weather, by, minutes_ago=0.0, wind=5.0):
    sheet, _ = record_sheet(
        job=job,
        version=weather,
        by=by,
        entries={"roof_wind": {"value": wind, "unit": "m/s"}},
        device_time=timezone.now() - dt.timedelta(minutes=minutes_ago),
        phone_clock_offset_s=0,
    )
    job.refresh_from_db()
    return sheet


@pytest.fixture
def later(monkeypatch):
    """Let the job's rules read the clock `minutes` on (only they: what is recorded keeps its
    real time)."""

    def move(minutes):
        moved = timezone.now() + dt.timedelta(minutes=minutes)
        monkeypatch.setattr(
            job_selectors,
            "timezone",
            types.SimpleNamespace(
                now=lambda: moved, localtime=timezone.localtime, localdate=timezone.localdate
            ),
        )

    return move


def test_a_job_does_not_start_on_a_weather_check_older_than_the_profile_allows(
    job, weather, operator
):
    read_wind(job, weather, operator, minutes_ago=61)
    assert job.state == JobState.PLANNED

    with pytest.raises(JobBlocked) as blocked:
        start_job(job=job, by=operator)

    (reason,) = blocked.value.reasons
    assert reason.code == "weather_stale"
    assert reason.requirement == "weather@site"
    assert "more than 60 min ago: read the wind again" in reason.message


def test_the_wind_read_again_starts_it(job, weather, operator):
    read_wind(job, weather, operator, minutes_ago=61)
    read_wind(job, weather, operator, minutes_ago=1)

    assert job.state == JobState.CLEARED
    assert start_job(job=job, by=operator).state == JobState.WORKING


def test_a_job_at_work_is_held_when_its_weather_check_runs_out(job, weather, operator, later):
    stale = read_wind(job, weather, operator, minutes_ago=30)
    start_job(job=job, by=operator)
    assert stop_work_on_stale_weather() == 0

    later(31)
    held = stop_work_on_stale_weather()

    job.refresh_from_db()
    assert (held, job.state) == (1, JobState.HELD)
    (hold,) = Hold.objects.filter(job=job)
    assert (hold.requirement, hold.item_key, hold.sheet_id) == (
        "weather@site",
        "weather_due",
        stale.pk,
    )
    assert "more than 60 min ago" in hold.reason
    assert stop_work_on_stale_weather() == 0  # held once


def test_the_wind_read_again_clears_the_hold(job, weather, operator, later, monkeypatch):
    read_wind(job, weather, operator, minutes_ago=30)
    start_job(job=job, by=operator)
    later(31)
    stop_work_on_stale_weather()
    monkeypatch.undo()

    read_wind(job, weather, operator)

    assert job.state == JobState.CLEARED
    assert Hold.objects.get(job=job).clearance is not None


def test_a_failed_weather_check_reads_as_failed_not_as_old(job, weather, operator):
    read_wind(job, weather, operator, minutes_ago=90, wind=30.0)

    with pytest.raises(JobBlocked) as blocked:
        start_job(job=job, by=operator)

    assert [r.code for r in blocked.value.reasons] == ["open_hold", "sheet_failed"]


def test_without_a_recheck_time_a_weather_check_counts_all_day(weather, later):
    job = _job(recheck=None)
    operator = UserFactory(organisation=job.organisation, role="operator")
    read_wind(job, weather, operator, minutes_ago=5)
    later(600)

    assert start_job(job=job, by=operator).state == JobState.WORKING
    assert stop_work_on_stale_weather() == 0


def test_a_replayed_day_is_not_judged_by_today_s_clock(job, weather, operator):
    read_wind(job, weather, operator, minutes_ago=61)

    with clock.replaying(job.date):
        assert start_job(job=job, by=operator).state == JobState.WORKING


def test_the_beat_runs_it_each_minute(settings):
    from compliance import tasks

    entry = settings.CELERY_BEAT_SCHEDULE["stop-work-on-stale-weather"]
    assert entry == {"task": "compliance.tasks.stop_work_on_stale_weather", "schedule": 60}
    assert tasks.stop_work_on_stale_weather.name == entry["task"]


def _read_at(job, weather, by, device_time, offset):
    record_sheet(
        job=job,
        version=weather,
        by=by,
        entries={"roof_wind": {"value": 5.0, "unit": "m/s"}},
        device_time=device_time,
        phone_clock_offset_s=offset,
    )
    job.refresh_from_db()


def test_a_reading_the_phone_says_is_hours_old_is_not_fresh_for_lack_of_the_batch_s_time(
    job, weather, operator
):
    """Sent without the batch's time, the reading counted as made when it arrived: a wind read
    2 h 50 min before cleared the job and started it."""
    _read_at(job, weather, operator, timezone.now() - dt.timedelta(minutes=170), None)

    with pytest.raises(JobBlocked) as blocked:
        start_job(job=job, by=operator)

    assert [r.code for r in blocked.value.reasons] == ["weather_stale"]


def test_a_batch_time_that_puts_the_reading_after_its_receipt_is_not_believed(
    job, weather, operator
):
    """The phone's clock set back between reading and sending: its batch said it was sent five
    hours ago, which puts the reading two hours from now; the phone's own time says three
    hours ago, and that is what counts (stop work first)."""
    _read_at(job, weather, operator, timezone.now() - dt.timedelta(hours=3), -5 * 3600)

    with pytest.raises(JobBlocked) as blocked:
        start_job(job=job, by=operator)

    assert [r.code for r in blocked.value.reasons] == ["weather_stale"]


def test_an_honest_phone_two_hours_slow_is_set_right_and_starts(job, weather, operator):
    """Read five minutes ago on a phone two hours slow, its batch saying so."""
    _read_at(job, weather, operator, timezone.now() - dt.timedelta(minutes=125), -2 * 3600)

    assert start_job(job=job, by=operator).state == JobState.WORKING


def test_a_weather_check_keeps_how_long_it_counts_for(job, weather, operator):
    """Kept with what it was judged on: a reading counts for the time in force when it was
    made, whatever the profile says later, and a profile reloaded with another time leaves it
    behind like any figure it was judged on."""
    sheet = read_wind(job, weather, operator)

    assert sheet.judged_on[str(job.drops.get().pk)]["profile.weather_recheck_min"] == 60


def test_a_reading_sent_the_second_it_is_saved_is_not_stopped_by_the_offset_s_rounding(
    job, weather, operator
):
    """A phone exactly 2 h slow sends its reading at once: the batch's offset, kept in whole
    seconds, sets it right a second past its arrival, which read as a clock in disagreement
    and put the reading two hours back."""
    now = timezone.now().replace(microsecond=0)
    _read_at(job, weather, operator, now - dt.timedelta(hours=2), -7201)

    assert job.state == JobState.CLEARED
    assert start_job(job=job, by=operator).state == JobState.WORKING


def test_the_phone_is_told_when_to_read_the_wind_again(job, weather, operator):
    from compliance.jobs.selectors import job_requirements

    sheet = read_wind(job, weather, operator, minutes_ago=30)

    (weather_check,) = job_requirements(job)
    assert weather_check.read_again_by == sheet.made_at + dt.timedelta(minutes=60)
    assert weather_check.as_dict()["read_again_by"] == weather_check.read_again_by


def test_without_a_recheck_time_there_is_no_time_to_read_again(weather):
    from compliance.jobs.selectors import job_requirements

    job = _job(recheck=None)
    read_wind(job, weather, UserFactory(organisation=job.organisation, role="operator"))

    assert [r.read_again_by for r in job_requirements(job)] == [None]

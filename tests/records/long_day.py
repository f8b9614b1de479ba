"""A job-day holding the longest content validation lets through, for the rendering tests."""

import math

from checklists.services import record_sheet
from compliance import clock
from compliance.jobs.services import close_job, start_job
from compliance.models import Job
from tests.conftest import PASSING, fill_all
from tests.factories import published_checklist, tick

SERIES_SAMPLES = 601
NOTE_CHARS = 6500
HOLD_LIMIT_KPA = 40.0

DECAY_SERIES = {
    "key": "decay_series",
    "kind": "series",
    "label": "Vacuum with the pump isolated",
    "reason": "test",
    "blocking": True,
    "unit": "kPa",
    "min_samples": 3,
}
DECAY_TEST = {
    "key": "decay_test",
    "kind": "calc",
    "label": "Time the grip lasts with the pump isolated",
    "reason": "test",
    "blocking": False,
    "calc": "vacuum-decay",
    "inputs": {
        "samples": {"reading": "decay_series"},
        "min_vacuum_kpa": {"value": HOLD_LIMIT_KPA},
        "required_hold_s": {"value": 600.0},
        "interval_s": {"value": 5.0},
        "interval_tolerance_s": {"value": 1.0},
        "min_duration_s": {"value": 60.0},
        "max_extrapolation": {"value": 3.0},
        "min_r2": {"value": 0.9},
    },
}
CREW_NOTE = {
    "key": "crew_note",
    "kind": "note",
    "label": "Crew note",
    "reason": "test",
    "blocking": False,
}


def decay_samples(count: int = SERIES_SAMPLES) -> list[list[float]]:
    """A reading every 5 s, leaking slowly from 70 kPa (to 0.1 kPa, as a gauge is read)."""
    return [[5.0 * i, round(70.0 * math.exp(-5.0 * i / 20000.0), 1)] for i in range(count)]


def long_note(chars: int = NOTE_CHARS, spaced: bool = True) -> str:
    if not spaced:
        return ("Cup3lipnickednearseam" * (chars // 21 + 1))[:chars]
    words = "Cup 3 lip nicked near the seam; replaced before the second drop. "
    return (words * (chars // len(words) + 1))[:chars]


def long_day(job: Job, versions: dict, by, *, note: str | None = None, samples=None) -> Job:
    """Fill, start and close `job` with a robot sheet holding a long series and a long note."""
    robot = published_checklist(
        "robot-decay",
        "robot",
        [tick("stops_work"), tick("cups", blocking=False), DECAY_SERIES, DECAY_TEST, CREW_NOTE],
    )
    entries = {
        **PASSING["robot"],
        "decay_series": {"value": decay_samples() if samples is None else samples},
        "crew_note": {"value": long_note() if note is None else note},
    }
    fill_all(job, versions, by)
    with clock.replaying(job.date):
        record_sheet(
            job=job, version=robot, by=by, entries=entries, equipment=job.drops.first().robot
        )
        start_job(job=job, by=by)
        close_job(job=job, by=by)
    job.refresh_from_db()
    return job

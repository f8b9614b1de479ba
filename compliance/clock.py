"""The day the server stands on, and the one seam that replays an earlier day.

Every rule of the form "on its day" (a job is planned for today or later, starts on its day, its
pre-start checks are made on its day) asks `today()`. A request never replays anything; only
code that writes history it is given, the demo loader laying down its invented past days, runs
inside `replaying(day)`, so those days pass through the very services and rules a phone's do.
"""

from __future__ import annotations

import datetime as dt
from collections.abc import Iterator
from contextlib import contextmanager
from contextvars import ContextVar

from django.utils import timezone

from compliance.timeline import time_made

__all__ = ["day_made", "replayed", "replaying", "time_made", "today"]

_replayed: ContextVar[dt.date | None] = ContextVar("replayed_day", default=None)


def today() -> dt.date:
    """The server's local date, or the day being replayed."""
    return _replayed.get() or timezone.localdate()


def replayed() -> bool:
    """Whether an earlier day is being replayed (the demo laying down its history)."""
    return _replayed.get() is not None


@contextmanager
def replaying(day: dt.date) -> Iterator[None]:
    """Apply the rules as on `day` (a past day of the demo's history) inside the block."""
    token = _replayed.set(day)
    try:
        yield
    finally:
        _replayed.reset(token)


def day_made(
    job_date: dt.date, device_time: dt.datetime | None, phone_clock_offset_s: int | None
) -> dt.date:
    """The day a record from a phone (a sheet, a drop done) counts as made: the phone's time,
    set right by how far its clock was off when it sent the batch (filled offline on the roof
    and sent the next morning, it is the job's day's; filled the evening before, it is not).
    Without a time, the day it is received. With a time but no batch to tell how far the
    phone's clock was off, the day it is received when that is the job's day (a phone whose
    clock reset keeps its records, and the record states both times), else the time given."""
    received = today()
    if device_time is None:
        return received
    if phone_clock_offset_s is not None:
        try:
            made = device_time - dt.timedelta(seconds=phone_clock_offset_s)
        except OverflowError:
            made = device_time
        if not replayed():
            # Never after it was received (time_made's rule): a phone's time set right that
            # says tomorrow is not tomorrow's check made today.
            made = min(made, timezone.now())
        return timezone.localdate(made)
    if received <= job_date:
        return received
    return timezone.localdate(device_time)

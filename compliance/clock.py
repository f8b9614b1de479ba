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

_replayed: ContextVar[dt.date | None] = ContextVar("replayed_day", default=None)


def today() -> dt.date:
    """The server's local date, or the day being replayed."""
    return _replayed.get() or timezone.localdate()


@contextmanager
def replaying(day: dt.date) -> Iterator[None]:
    """Apply the rules as on `day` (a past day of the demo's history) inside the block."""
    token = _replayed.set(day)
    try:
        yield
    finally:
        _replayed.reset(token)

"""When things happened on a job's day, from the times a record holds (no Django: the pages of
a signed record are drawn from the same rules, by the server and by the verifier alike).

`time_made` is when a phone's record was made, as the server orders records; `weather_gaps`
is when work went on without the wind read recently enough (the profile's
`weather_recheck_min`), from a day's record as it is sealed.
"""

from __future__ import annotations

import datetime as dt
from collections.abc import Mapping
from typing import Any

WEATHER_CHECKLIST = "weather"
"""The checklist whose readings go stale as the day goes on (`weather_recheck_min`)."""

WEATHER_RECHECK = "profile.weather_recheck_min"
"""The figure a weather check is judged on for how long it counts (kept in its `judged_on`)."""

OFFSET_ROUNDING = dt.timedelta(seconds=2)
"""How far past its receipt a phone's time set right may fall and still agree with it: the
batch's offset is kept in whole seconds and the phone's time to the second, so a reading sent
the moment it is saved can be set right a second past its arrival."""

WEATHER_GRACE = dt.timedelta(minutes=2)
"""A gap no longer than this is not one: the beat that stops a job whose weather check ran out
runs each minute, and the hold is written within the next."""


def time_made(
    device_time: dt.datetime | None, phone_clock_offset_s: int | None, received: dt.datetime
) -> dt.datetime:
    """When a record from a phone was made, as near as the server can tell: the phone's time
    set right by how far its clock was off when it sent the batch, and never after it was
    received; without both, when it was received."""
    if device_time is None or phone_clock_offset_s is None:
        return received
    try:
        made = device_time - dt.timedelta(seconds=phone_clock_offset_s)
    except OverflowError:
        return received
    return min(made, received)


def reading_time(
    device_time: dt.datetime | None, phone_clock_offset_s: int | None, received: dt.datetime
) -> dt.datetime:
    """When a weather reading was taken, for how long ago it was: as `time_made` when the
    batch's clock is known and agrees (the phone's time set right is not after the receipt);
    otherwise the earlier of the phone's own time and the receipt. Stop work first: a reading
    the phone says is three hours old, sent without the batch's time or with one that puts it
    after its receipt, is not taken as read when it arrived."""
    if device_time is None:
        return received
    if phone_clock_offset_s is not None:
        try:
            corrected = device_time - dt.timedelta(seconds=phone_clock_offset_s)
        except OverflowError:
            corrected = None
        if corrected is not None and corrected <= received + OFFSET_ROUNDING:
            return min(corrected, received)
    return min(device_time, received)


def minutes(value: Any) -> dt.timedelta | None:
    """A number of minutes as a time, when it is a positive number (None otherwise)."""
    if not isinstance(value, int | float) or isinstance(value, bool) or not 0 < value < 1e6:
        return None
    return dt.timedelta(minutes=float(value))


def recheck_interval(thresholds: Any) -> dt.timedelta | None:
    """How long a weather check counts for under a profile's thresholds (None: all day)."""
    entry = thresholds.get("weather_recheck_min") if isinstance(thresholds, Mapping) else None
    return minutes(entry.get("value") if isinstance(entry, Mapping) else None)


def _judged_interval(sheet: Mapping[str, Any]) -> dt.timedelta | bool | None:
    """How long a sealed weather check counts for by its own `judged_on` (the time in force
    when it was made); False when it kept none (made before checks kept it)."""
    judged = sheet.get("judged_on")
    if not isinstance(judged, Mapping):
        return False
    for figures in judged.values():
        if isinstance(figures, Mapping) and WEATHER_RECHECK in figures:
            return minutes(figures[WEATHER_RECHECK])
    return False


def moment(stamp: Any) -> dt.datetime | None:
    """A stored ISO time as an aware datetime (UTC where it names no zone); None if it is not
    one."""
    if not isinstance(stamp, str):
        return None
    try:
        when = dt.datetime.fromisoformat(stamp.replace("Z", "+00:00"))
    except ValueError:
        return None
    return when if when.tzinfo is not None else when.replace(tzinfo=dt.UTC)


def _offset(value: Any) -> int | None:
    return value if isinstance(value, int) and not isinstance(value, bool) else None


def weather_gaps(record: Mapping[str, Any]) -> list[tuple[dt.datetime, dt.datetime]]:
    """The stretches of a day's record during which the job was at work and its newest weather
    check was older than the profile allows (each longer than WEATHER_GRACE), in order.

    Work is the time between a transition to "working" and the next one away from it; the
    weather checks are every sheet of the weather checklist, by when it was made.
    """
    profile = record.get("profile")
    signed = recheck_interval(profile.get("thresholds") if isinstance(profile, Mapping) else None)
    readings: list[tuple[dt.datetime, dt.timedelta | None]] = []
    for sheet in record.get("sheets") or []:
        if not isinstance(sheet, Mapping) or sheet.get("checklist") != WEATHER_CHECKLIST:
            continue
        received = moment(sheet.get("received_at"))
        if received is None:
            continue
        read = reading_time(
            moment(sheet.get("device_time")), _offset(sheet.get("phone_clock_offset_s")), received
        )
        own = _judged_interval(sheet)
        readings.append((read, signed if own is False else own))  # type: ignore[arg-type]
    if all(interval is None for _, interval in readings) and (readings or signed is None):
        return []
    readings.sort(key=lambda pair: pair[0])
    periods: list[tuple[dt.datetime, dt.datetime]] = []
    began: dt.datetime | None = None
    for move in record.get("transitions") or []:
        if not isinstance(move, Mapping):
            continue
        at = moment(move.get("at"))
        if at is None:
            continue
        if move.get("to") == "working" and began is None:
            began = at
        elif move.get("from") == "working" and began is not None:
            periods.append((began, at))
            began = None
    gaps: list[tuple[dt.datetime, dt.datetime]] = []
    never = dt.datetime.max.replace(tzinfo=dt.UTC)

    def lasts(read: dt.datetime, interval: dt.timedelta | None) -> dt.datetime:
        if interval is None:
            return never  # read under a profile that kept a reading all day
        try:
            return read + interval
        except OverflowError:
            return never

    for start, end in periods:
        before = [lasts(r, i) for r, i in readings if r <= start]
        due = before[-1] if before else start
        for read, interval in readings:
            if not start < read <= end:
                continue
            if read - due > WEATHER_GRACE and due < end:
                gaps.append((max(due, start), read))
            due = max(due, lasts(read, interval))
        if due < end and end - due > WEATHER_GRACE:
            gaps.append((max(due, start), end))
    return [(a, b) for a, b in gaps if b - a > WEATHER_GRACE]


def interval_words(record: Mapping[str, Any]) -> str:
    """How long the record's weather readings counted for, in words ("60 min", "60 or 120
    min" when the profile changed during the day), from what each was judged on (else the
    profile at signing); "" when none had a time."""
    profile = record.get("profile")
    signed = recheck_interval(profile.get("thresholds") if isinstance(profile, Mapping) else None)
    times = set()
    for sheet in record.get("sheets") or []:
        if isinstance(sheet, Mapping) and sheet.get("checklist") == WEATHER_CHECKLIST:
            own = _judged_interval(sheet)
            times.add(signed if own is False else own)
    if not times:
        times.add(signed)
    shown = sorted(t for t in times if t is not None)
    if not shown:
        return ""
    texts = [f"{t / dt.timedelta(minutes=1):g}" for t in shown]
    return (" or ".join(texts) if len(texts) < 3 else ", ".join(texts)) + " min"

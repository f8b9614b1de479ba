"""A person's iCalendar feed (RFC 5545) of due dates at a secret address they can revoke.

The address is the only key: whoever holds it reads the organisation's due dates without
signing in, as calendar programs do. So the token is long and random, stored only as its
SHA-256, shown once, and a new one revokes the old.
"""

import datetime as dt
import secrets
from collections.abc import Iterable

from django.db import transaction
from django.utils import timezone
from icalendar import Calendar, Event

from compliance.due.selectors import CAUTION, DueItem, DueKind, token_hash
from compliance.models import CalendarFeed, User

TOKEN_BYTES = 32
FEED_DAYS = 366
"""A feed shows what falls due in the coming year, and everything overdue."""

_WHAT = {
    DueKind.ANCHOR_CERTIFICATE: "Anchor certificate valid until",
    DueKind.EQUIPMENT_INSPECTION: "Periodic inspection due on",
    DueKind.UNSIGNED_DAY: "Daily record of the day not signed:",
}


def create_feed(*, user: User) -> tuple[CalendarFeed, str]:
    """A new feed for the person, revoking any earlier one; returns it and its token, which
    is not stored and cannot be shown again."""
    token = secrets.token_urlsafe(TOKEN_BYTES)
    with transaction.atomic():
        revoke_feeds(user=user)
        feed = CalendarFeed(user=user, token_sha256=token_hash(token))
        feed.full_clean()
        feed.save()
    return feed, token


def revoke_feeds(*, user: User) -> int:
    """Stop every live feed of the person; returns how many were live."""
    with transaction.atomic():
        return CalendarFeed.objects.filter(user=user, revoked_at__isnull=True).update(
            revoked_at=timezone.now()
        )


def render_feed(items: Iterable[DueItem], *, calendar_name: str, now: dt.datetime) -> bytes:
    """The due dates as all-day events; each event's UID is the item's, so a calendar moves or
    drops an event when its date changes rather than adding another."""
    calendar = Calendar()
    calendar.add("prodid", "-//Parapet//Due dates//EN")
    calendar.add("version", "2.0")
    calendar.add("calscale", "GREGORIAN")
    calendar.add("x-wr-calname", calendar_name)
    for item in items:
        event = Event()
        event.add("uid", item.uid)
        event.add("dtstamp", now)
        event.add("dtstart", item.due_on)
        event.add("dtend", item.due_on + dt.timedelta(days=1))
        event.add("summary", item.summary)
        event.add(
            "description", f"{item.subject}. {_WHAT[item.kind]} {item.due_on:%Y-%m-%d}.\n{CAUTION}"
        )
        event.add("transp", "TRANSPARENT")
        calendar.add_component(event)
    return bytes(calendar.to_ical())

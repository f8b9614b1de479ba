"""Reads of the registers. An anchor's state read from its log book and certifications (in
service or not, when it was last inspected and when the next inspection falls due: a read over
prefetched rows, used by the job selectors, the log book's printing and the holds the log book
opens), and equipment with the reason it was last taken out of service."""

import datetime as dt
from dataclasses import dataclass

from django.db.models import OuterRef, QuerySet, Subquery

from compliance.models import Anchor, AnchorLogEntry, Equipment, RegisterChange

INSPECTION_KINDS = (AnchorLogEntry.Kind.PERIODIC_INSPECTION, AnchorLogEntry.Kind.LOAD_TEST)


def failed_test(entry: AnchorLogEntry) -> bool:
    """A periodic inspection or load test signed as failed: it stops work on the anchor."""
    return entry.kind in INSPECTION_KINDS and entry.result == AnchorLogEntry.Result.FAIL


def status_requirement(anchor: Anchor) -> str:
    return f"anchor-status@anchor:{anchor.pk}"


GRANT_REQUIREMENT = "access-grant@site"
"""What a hold for access withdrawn names: the owner's grant at the job's site (a job is at one
site), which only the owner puts right (a new grant covering the day)."""


@dataclass(frozen=True)
class AnchorStatus:
    in_service: bool
    removed_on: dt.date | None
    removed_reason: str
    last_inspection: dt.date | None
    inspection_due: dt.date | None

    def overdue_on(self, day: dt.date) -> bool:
        return self.inspection_due is not None and self.inspection_due < day


def anchor_status(anchor: Anchor, interval_days: int) -> AnchorStatus:
    """From the anchor's prefetched log and certifications. A failed periodic inspection or
    load test takes the anchor out of service as a removal does: only the owner's signed return
    to service puts it back (a later passing test alone does not)."""
    entries = sorted(anchor.log.all(), key=lambda e: e.sequence)
    in_service, removed_on, reason = True, None, ""
    for entry in entries:
        if entry.kind == AnchorLogEntry.Kind.REMOVED:
            in_service, removed_on, reason = False, entry.performed_on, entry.details
        elif failed_test(entry):
            in_service, removed_on = False, entry.performed_on
            reason = f"failed its {entry.get_kind_display().lower()}: {entry.details}"
        elif entry.kind == AnchorLogEntry.Kind.RETURNED:
            in_service, removed_on, reason = True, None, ""
    dates = [c.certified_on for c in anchor.certifications.all()]
    dates += [
        e.performed_on
        for e in entries
        if e.kind in INSPECTION_KINDS and e.result == AnchorLogEntry.Result.PASS
    ]
    last = max(dates) if dates else None
    due = last + dt.timedelta(days=interval_days) if last else None
    return AnchorStatus(in_service, removed_on, reason, last, due)


WITHDRAWN = "taken out of service"


def equipment_of(organisation_id: int | None) -> QuerySet[Equipment]:
    """The organisation's equipment, each with the reason given and the time when it was last
    taken out of service (from its audit entries, in the same query)."""
    last = RegisterChange.objects.filter(
        subject="equipment", object_id=OuterRef("pk"), action=WITHDRAWN
    ).order_by("-at", "-pk")
    return Equipment.objects.filter(organisation_id=organisation_id).annotate(
        withdrawn_reason=Subquery(last.values("changes__reason")[:1]),
        withdrawn_at=Subquery(last.values("at")[:1]),
    )


@dataclass(frozen=True)
class Withdrawal:
    """When a piece of equipment was last taken out of service, and why."""

    at: dt.datetime | None
    reason: str


def withdrawal(item: Equipment) -> Withdrawal:
    """The last time this equipment was taken out of service and the reason then given (an
    empty reason and no time if its audit entries hold none)."""
    found = (
        RegisterChange.objects.filter(subject="equipment", object_id=item.pk, action=WITHDRAWN)
        .order_by("-at", "-pk")
        .values_list("at", "changes__reason")
        .first()
    )
    return Withdrawal(found[0], found[1] or "") if found else Withdrawal(None, "")


def withdrawn_reason(item: Equipment) -> str:
    """The reason given when this equipment was last taken out of service ("" if none)."""
    return withdrawal(item).reason

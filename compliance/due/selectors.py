"""What falls due for an organisation: anchor certificates, equipment inspections, unsigned days.

One read for the due list, the calendar feed and nothing else, so the two never disagree. Three
queries whatever the number of anchors, equipment or jobs: the newest certificate of each anchor
is a subquery, not a prefetch.
"""

import datetime as dt
import hashlib
from dataclasses import dataclass

from django.db.models import Exists, OuterRef, Subquery

from compliance.models import Anchor, AnchorCertification, CalendarFeed, DailyRecord, Equipment, Job
from compliance.registers.visibility import sites_visible_to

DEFAULT_WITHIN_DAYS = 30
MAX_WITHIN_DAYS = 366

CAUTION = (
    "Parapet records and computes; local regulations, the maker's manual and a competent "
    "person decide whether an anchor or a piece of equipment may be used."
)


class DueKind:
    ANCHOR_CERTIFICATE = "anchor_certificate"
    EQUIPMENT_INSPECTION = "equipment_inspection"
    UNSIGNED_DAY = "unsigned_day"


@dataclass(frozen=True)
class DueItem:
    """One date something falls due; `uid` names it the same way in every answer and feed."""

    kind: str
    uid: str
    subject: str
    due_on: dt.date
    today: dt.date
    site_id: int | None = None
    anchor_id: int | None = None
    equipment_id: int | None = None
    job_id: int | None = None

    @property
    def days_left(self) -> int:
        return (self.due_on - self.today).days

    @property
    def state(self) -> str:
        """In words, as a person would say it: overdue, due today, due within N days."""
        days = self.days_left
        if days < 0:
            return "overdue"
        if days == 0:
            return "due today"
        return f"due within {days} day{'s' if days > 1 else ''}"

    @property
    def summary(self) -> str:
        """One line naming the subject and what is due, for a calendar or a list."""
        what = {
            DueKind.ANCHOR_CERTIFICATE: "anchor certificate",
            DueKind.EQUIPMENT_INSPECTION: "equipment inspection",
            DueKind.UNSIGNED_DAY: "daily record not signed",
        }[self.kind]
        return f"{self.subject}: {what}, {self.state}"


def due_items(
    organisation_id: int | None, *, today: dt.date, within_days: int = DEFAULT_WITHIN_DAYS
) -> list[DueItem]:
    """Everything of the organisation due on or before today + within_days, overdue included,
    sorted by date.

    Anchors count on the sites the organisation owns and those it works at under a grant
    covering today (it relies on them); equipment and unsigned days only its own.
    """
    horizon = today + dt.timedelta(days=within_days)
    newest = AnchorCertification.objects.filter(anchor=OuterRef("pk")).order_by(
        "-certified_on", "-pk"
    )
    anchors = (
        Anchor.objects.filter(site__in=sites_visible_to(organisation_id, today))
        .annotate(
            cert_id=Subquery(newest.values("pk")[:1]),
            cert_until=Subquery(newest.values("valid_until")[:1]),
        )
        .filter(cert_until__lte=horizon)
        .select_related("site")
    )
    items = [
        DueItem(
            kind=DueKind.ANCHOR_CERTIFICATE,
            uid=f"anchor-cert-{anchor.cert_id}@parapet",
            subject=f"Anchor {anchor.label} at {anchor.site.name}",
            due_on=anchor.cert_until,
            today=today,
            site_id=anchor.site_id,
            anchor_id=anchor.pk,
        )
        for anchor in anchors
    ]
    equipment = Equipment.objects.filter(
        organisation_id=organisation_id, in_service=True, next_inspection_due__lte=horizon
    )
    items += [
        DueItem(
            kind=DueKind.EQUIPMENT_INSPECTION,
            uid=f"equipment-inspection-{item.pk}@parapet",
            subject=item.label,
            due_on=item.next_inspection_due,
            today=today,
            equipment_id=item.pk,
        )
        for item in equipment
        if item.next_inspection_due is not None
    ]
    signed = DailyRecord.objects.filter(job=OuterRef("pk"), kind=DailyRecord.Kind.RECORD)
    jobs = (
        Job.objects.filter(organisation_id=organisation_id, date__lt=today)
        .exclude(Exists(signed))
        .select_related("site")
    )
    items += [
        DueItem(
            kind=DueKind.UNSIGNED_DAY,
            uid=f"unsigned-day-{job.pk}@parapet",
            subject=f"{job.site.name} on {job.date:%Y-%m-%d}",
            due_on=job.date,
            today=today,
            site_id=job.site_id,
            job_id=job.pk,
        )
        for job in jobs
    ]
    return sorted(items, key=lambda i: (i.due_on, i.kind, i.subject, i.uid))


def token_hash(token: str) -> str:
    """How a feed's token is stored and looked up: SHA-256, hex; the token itself never is."""
    return hashlib.sha256(token.encode()).hexdigest()


def live_feed(token: str) -> CalendarFeed | None:
    """The feed a token opens, with its person; None when unknown, revoked or the person can no
    longer sign in or belongs to no organisation."""
    return (
        CalendarFeed.objects.filter(
            token_sha256=token_hash(token),
            revoked_at__isnull=True,
            user__is_active=True,
            user__organisation__isnull=False,
        )
        .select_related("user__organisation")
        .first()
    )


def feed_of(user_id: int) -> CalendarFeed | None:
    """The person's live calendar feed, if any (its address is never kept, only its digest)."""
    return CalendarFeed.objects.filter(user_id=user_id, revoked_at__isnull=True).first()

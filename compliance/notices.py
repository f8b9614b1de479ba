"""Nightly and daily checks: unsigned records of past days, certifications and inspections due."""

import datetime as dt

from django.db import IntegrityError, transaction
from django.db.models import Exists, OuterRef

from compliance.models import Anchor, DailyRecord, Equipment, Job, Notice


def _notice(**fields: object) -> bool:
    try:
        with transaction.atomic():
            Notice.objects.create(**fields)
    except IntegrityError:
        return False
    return True


def flag_unsigned(*, today: dt.date) -> int:
    """One notice a day per past job whose daily record is not signed."""
    signed = DailyRecord.objects.filter(job=OuterRef("pk"), kind="record")
    jobs = Job.objects.filter(date__lt=today).exclude(Exists(signed)).select_related("site")
    return sum(
        _notice(
            organisation_id=job.organisation_id,
            kind=Notice.Kind.UNSIGNED,
            subject=f"job:{job.pk}",
            day=today,
            message=f"The daily record of {job.site.name} on {job.date:%Y-%m-%d} is not signed.",
        )
        for job in jobs
    )


def flag_due(*, today: dt.date, within: dt.timedelta) -> int:
    """Anchor certifications and equipment inspections falling due within the window."""
    horizon = today + within
    created = 0
    for anchor in Anchor.objects.select_related("site").prefetch_related("certifications"):
        cert = anchor.current_certification()
        if cert is not None and cert.valid_until <= horizon:
            created += _notice(
                organisation_id=anchor.site.organisation_id,
                kind=Notice.Kind.CERT_DUE,
                subject=f"anchor:{anchor.pk}",
                day=today,
                due_on=cert.valid_until,
                message=f"Anchor {anchor.label} at {anchor.site.name}: certification "
                f"{'expired' if cert.valid_until < today else 'falls due'} on "
                f"{cert.valid_until:%Y-%m-%d}.",
            )
    for item in Equipment.objects.filter(next_inspection_due__lte=horizon, in_service=True):
        created += _notice(
            organisation_id=item.organisation_id,
            kind=Notice.Kind.INSPECTION_DUE,
            subject=f"equipment:{item.pk}",
            day=today,
            due_on=item.next_inspection_due,
            message=f"{item.label}: periodic inspection due on "
            f"{item.next_inspection_due:%Y-%m-%d}.",
        )
    return created

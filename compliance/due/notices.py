"""Nightly and daily checks: unsigned records of past days, certifications and inspections due;
and each notice, once, by e-mail to the people who act on it."""

import datetime as dt
import logging

from django.conf import settings
from django.core.mail import EmailMessage, get_connection
from django.db import IntegrityError, transaction
from django.db.models import Exists, OuterRef

from compliance.due.selectors import CAUTION
from compliance.models import (
    Anchor,
    DailyRecord,
    Equipment,
    Job,
    Notice,
    NoticeEmail,
    Organisation,
    Role,
    User,
)

logger = logging.getLogger(__name__)

MAIL_MAX_AGE_DAYS = 7
"""A notice older than this that was never sent (mail down for a week, or the first run after
an upgrade) is not sent late: the due list and the calendar feed show it anyway."""


def _notice(**fields: object) -> bool:
    """Raise a notice once per subject and due date: a certificate due in 20 days is not raised
    (and e-mailed) again each night; a new due date is a new notice."""
    if Notice.objects.filter(
        kind=fields["kind"], subject=fields["subject"], due_on=fields.get("due_on")
    ).exists():
        return False
    try:
        with transaction.atomic():
            Notice.objects.create(**fields)
    except IntegrityError:
        return False
    return True


def flag_unsigned(*, today: dt.date) -> int:
    """One notice per past job whose daily record is not signed."""
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


def recipients_of(notice: Notice) -> list[User]:
    """Who acts on a notice: the organisation's supervisors and admins, and for an anchor
    certificate (raised to the site's organisation) its property managers; active people with
    an e-mail address only."""
    roles = [Role.SUPERVISOR, Role.ADMIN]
    if notice.kind == Notice.Kind.CERT_DUE:
        roles.append(Role.PROPERTY_MANAGER)
    return list(
        User.objects.filter(organisation_id=notice.organisation_id, role__in=roles, is_active=True)
        .exclude(email="")
        .order_by("email", "pk")
    )


def _message(notice: Notice, organisation: Organisation, to: str) -> EmailMessage:
    body = (
        f"{notice.message}\n\n"
        f"Organisation: {organisation.name}\n"
        f"Found by the check of {notice.day:%Y-%m-%d}.\n"
        "Every date that falls due is on the due list in Parapet and in your calendar feed.\n\n"
        f"{CAUTION}\n"
    )
    return EmailMessage(
        subject=f"Parapet: {notice.get_kind_display()}",
        body=body,
        from_email=settings.DEFAULT_FROM_EMAIL,
        to=[to],
    )


def email_notice(*, notice: Notice, now: dt.datetime) -> NoticeEmail | None:
    """Send one notice to each of its recipients, one message each (no one sees another's
    address), and record it as sent in the same transaction; None when it was sent already.

    The row is written before sending: a second run waits on it or finds it, and a failed send
    rolls it back, so the notice is tried again on the next run.
    """
    with transaction.atomic():
        try:
            with transaction.atomic():
                people = recipients_of(notice)
                sent = NoticeEmail.objects.create(
                    notice=notice, sent_at=now, recipients=[p.email for p in people]
                )
        except IntegrityError:
            return None
        messages = [_message(notice, notice.organisation, p.email) for p in people]
        if messages:
            get_connection().send_messages(messages)
        return sent


def email_new_notices(*, now: dt.datetime) -> int:
    """E-mail every notice not yet sent and at most MAIL_MAX_AGE_DAYS old; returns how many
    notices were sent (to nobody, when no one has an address, so it is not tried forever)."""
    since = now.date() - dt.timedelta(days=MAIL_MAX_AGE_DAYS)
    pending = (
        Notice.objects.filter(email__isnull=True, day__gte=since)
        .select_related("organisation")
        .order_by("pk")
    )
    sent = 0
    for notice in pending:
        try:
            sent += email_notice(notice=notice, now=now) is not None
        except Exception:
            # One refused message (a bad address, the server down) must not hold back the
            # others; this notice stays unsent and is tried again on the next run.
            logger.exception("notice %s could not be e-mailed; tried again next run", notice.pk)
    return sent

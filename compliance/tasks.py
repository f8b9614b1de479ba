"""Background work; each task takes ids, is idempotent and calls a service."""

import datetime as dt
import logging

from celery import shared_task
from celery.exceptions import Retry
from django.core.cache import cache
from django.utils import timezone

from compliance.due.notices import email_new_notices, flag_due, flag_unsigned
from compliance.jobs import services as job_services
from compliance.models import DailyRecord
from compliance.records import files as record_files
from compliance.records.files import ensure_pdf

logger = logging.getLogger(__name__)


RENDER_MAX_RETRIES = 10
RENDER_BACKOFF_S = 15
RENDER_BACKOFF_MAX_S = 1800
"""A failed render is tried again after 15 s, 30 s, 60 s ... at most 30 min apart, ten
times (about two hours in all); after that the next request for the PDF, or the
sweep of records without one, queues it again."""
RENDER_EAGER_RETRIES = 1
"""Run in-process (no broker: the demo and the tests), a failed render is tried once more."""
RENDER_QUEUED_S = 120
"""A render queued for a record is not queued again for this long, however often its PDF
is asked for while it renders."""


def render_backoff_s(retries: int) -> int:
    """Seconds before retry number `retries` + 1 of a failed render."""
    return int(min(RENDER_BACKOFF_S * 2**retries, RENDER_BACKOFF_MAX_S))


@shared_task(bind=True, acks_late=True, max_retries=RENDER_MAX_RETRIES)
def render_daily_record(self, record_id: int) -> int | Retry | None:  # type: ignore[no-untyped-def]
    """Render and sign a record's PDF (no-op if it exists); returns the RecordPdf id.

    Every failure is logged and retried with backoff, a bounded number of times; then the
    next request for the PDF, or `render_missing_pdfs`, queues it again. Run in-process (no
    broker) a failure never reaches the caller: sign-off answers with the sealed record.
    """
    try:
        record = DailyRecord.objects.select_related("credential", "site").get(pk=record_id)
    except DailyRecord.DoesNotExist:
        logger.warning("render of record %s: no such record (rolled back?); dropped", record_id)
        return None
    try:
        return ensure_pdf(record).pk
    except Exception as exc:
        retries = self.request.retries or 0
        eager = bool(self.request.is_eager)
        if retries >= (RENDER_EAGER_RETRIES if eager else RENDER_MAX_RETRIES):
            logger.exception(
                "render of record %s failed %s times; it waits to be queued again",
                record_id,
                retries + 1,
            )
            if eager:
                return None
            raise
        countdown = render_backoff_s(retries)
        logger.warning(
            "render of record %s failed (try %s), tried again in %s s: %r",
            record_id,
            retries + 1,
            0 if eager else countdown,
            exc,
        )
        if eager:
            # Run in-process (no broker), a Retry returned, not raised, is run again at once
            # by Celery's apply(), and nothing propagates into the request that queued it.
            return self.retry(exc=exc, countdown=countdown, throw=False)
        raise self.retry(exc=exc, countdown=countdown) from exc


def queue_render(record_id: int) -> bool:
    """Queue the render of a record's PDF unless one was queued in the last RENDER_QUEUED_S;
    True when queued. A broker that cannot be reached is logged, never raised."""
    if not cache.add(f"parapet:render-queued:{record_id}", True, timeout=RENDER_QUEUED_S):
        return False
    try:
        render_daily_record.delay(record_id)
    except Exception:
        cache.delete(f"parapet:render-queued:{record_id}")
        logger.exception("could not queue the render of record %s", record_id)
        return False
    return True


@shared_task
def render_missing_pdfs(older_than_minutes: int = 10, limit: int = 200) -> int:
    """Queue a render for every signed record still without its PDF (a render that failed
    every retry, or whose message was lost); returns how many were queued."""
    cutoff = timezone.now() - dt.timedelta(minutes=older_than_minutes)
    ids = (
        DailyRecord.objects.filter(pdf__isnull=True, signed_at__lt=cutoff)
        .order_by("signed_at")
        .values_list("pk", flat=True)[:limit]
    )
    return sum(queue_render(pk) for pk in ids)


@shared_task
def stop_work_on_stale_weather() -> int:
    """Hold the jobs at work whose weather was not read again in time."""
    return job_services.stop_work_on_stale_weather()


@shared_task
def flag_unsigned_records() -> int:
    return flag_unsigned(today=timezone.localdate())


@shared_task
def list_due_items(days: int = 30) -> int:
    return flag_due(today=timezone.localdate(), within=dt.timedelta(days=days))


@shared_task
def email_notices() -> int:
    """Send each notice not yet sent to the people who act on it; a rerun sends nothing twice."""
    return email_new_notices(now=timezone.now())


@shared_task
def sweep_orphan_pdfs(hours: int = 6) -> int:
    """Remove record PDFs whose render was killed before its row was committed."""
    return len(
        record_files.sweep_orphan_pdfs(older_than=dt.timedelta(hours=hours), now=timezone.now())
    )

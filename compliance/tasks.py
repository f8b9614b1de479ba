"""Background work; each task takes ids, is idempotent and calls a service."""

import datetime as dt

from celery import shared_task
from django.utils import timezone

from compliance.models import DailyRecord


@shared_task(bind=True, acks_late=True, max_retries=5, default_retry_delay=10)
def render_daily_record(self, record_id: int) -> int:  # type: ignore[no-untyped-def]
    """Render and sign a record's PDF (no-op if it exists); returns the RecordPdf id."""
    from compliance.record_files import ensure_pdf

    try:
        return ensure_pdf(
            DailyRecord.objects.select_related("credential", "site").get(pk=record_id)
        ).pk
    except DailyRecord.DoesNotExist:
        raise
    except Exception as exc:
        raise self.retry(exc=exc) from exc


@shared_task
def flag_unsigned_records() -> int:
    from compliance.notices import flag_unsigned

    return flag_unsigned(today=timezone.localdate())


@shared_task
def list_due_items(days: int = 30) -> int:
    from compliance.notices import flag_due

    return flag_due(today=timezone.localdate(), within=dt.timedelta(days=days))


@shared_task
def sweep_orphan_pdfs(hours: int = 6) -> int:
    """Remove record PDFs whose render was killed before its row was committed."""
    from compliance import record_files

    return len(
        record_files.sweep_orphan_pdfs(older_than=dt.timedelta(hours=hours), now=timezone.now())
    )

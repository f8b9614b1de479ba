"""Background work: rendering on sign-off, the nightly and daily checks, a real worker on Redis."""

import datetime as dt
import os

import pytest
from django.utils import timezone

from compliance.due.notices import flag_due, flag_unsigned
from compliance.models import Notice, RecordPdf
from compliance.records.services import sign_daily_record
from compliance.tasks import render_daily_record
from tests.factories import PASSWORD, CertificationFactory, EquipmentFactory, JobFactory

pytestmark = pytest.mark.django_db


def test_signing_queues_the_pdf_which_renders_once(
    closed_job, supervisor, tmp_path, settings, django_capture_on_commit_callbacks
):
    settings.MEDIA_ROOT = tmp_path
    with django_capture_on_commit_callbacks(execute=True):
        record = sign_daily_record(
            job=closed_job, by=supervisor, password=PASSWORD, meaning="reviewed_safe"
        )
    if settings.CELERY_TASK_ALWAYS_EAGER:
        assert RecordPdf.objects.filter(record=record).count() == 1
    first = render_daily_record.apply(args=[record.pk]).get()
    again = render_daily_record.apply(args=[record.pk]).get()
    assert first == again
    assert RecordPdf.objects.filter(record=record).count() == 1


def test_unsigned_past_days_are_flagged_once_a_day(closed_job):
    today = closed_job.date + dt.timedelta(days=1)
    future = JobFactory(site=closed_job.site, date=today + dt.timedelta(days=3))
    assert flag_unsigned(today=today) == 1
    assert flag_unsigned(today=today) == 0
    notice = Notice.objects.get()
    assert notice.subject == f"job:{closed_job.pk}" and "not signed" in notice.message
    assert future.pk not in [int(n.subject.split(":")[1]) for n in Notice.objects.all()]


def test_a_signed_day_is_not_flagged(signed):
    assert flag_unsigned(today=signed.job.date + dt.timedelta(days=1)) == 0


def test_certifications_and_inspections_falling_due(job):
    today = timezone.localdate()
    anchor = job.drops.first().anchor
    CertificationFactory(
        anchor=anchor, certified_on=today, valid_until=today + dt.timedelta(days=20)
    )
    EquipmentFactory(
        organisation=job.organisation,
        kind="hose",
        next_inspection_due=today + dt.timedelta(days=10),
    )
    EquipmentFactory(
        organisation=job.organisation,
        kind="hose",
        next_inspection_due=today + dt.timedelta(days=90),
    )
    assert flag_due(today=today, within=dt.timedelta(days=30)) == 2
    assert flag_due(today=today, within=dt.timedelta(days=30)) == 0
    kinds = sorted(Notice.objects.values_list("kind", flat=True))
    assert kinds == ["certification_due", "inspection_due"]


@pytest.mark.redis
@pytest.mark.xdist_group("broker")  # one test at a time on the broker (see pyproject)
@pytest.mark.django_db(transaction=True)
def test_a_real_worker_renders_through_redis(simple_checklists, tmp_path, settings):
    """With CELERY_BROKER_URL set (as in .ci/run), the task travels through Redis to a worker."""
    from celery.contrib.testing.worker import start_worker

    from compliance.celery import app
    from compliance.jobs.services import close_job, start_job
    from compliance.records.signing import create_self_signed
    from tests.conftest import fill_all
    from tests.factories import UserFactory, make_drop

    assert os.environ.get("CELERY_BROKER_URL", "").startswith("redis://")
    settings.MEDIA_ROOT = tmp_path
    job = JobFactory()
    make_drop(job)
    operator = UserFactory(organisation=job.organisation)
    create_self_signed(organisation=job.organisation)
    fill_all(job, simple_checklists, operator)
    start_job(job=job, by=operator)
    close_job(job=job, by=operator)
    assert not app.conf.task_always_eager
    app.control.purge()  # messages left by earlier tests name rows that were rolled back
    with start_worker(app, pool="solo", perform_ping_check=False, shutdown_timeout=30):
        record = sign_daily_record(
            job=job, by=job.supervisor, password=PASSWORD, meaning="reviewed_safe"
        )
        result = render_daily_record.delay(record.pk)
        pdf_id = result.get(timeout=60)
    assert RecordPdf.objects.get(pk=pdf_id).record == record
    assert RecordPdf.objects.filter(record=record).count() == 1

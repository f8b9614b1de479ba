"""The render worker dies after the PDF is made but before its row is committed."""

from unittest import mock

import pytest

from compliance.models import RecordPdf
from compliance.tasks import render_daily_record
from compliance.verification import verify_pdf

pytestmark = pytest.mark.django_db


class WorkerLost(Exception):
    """Stands for the process being killed: nothing after this point runs."""


def crash_once(original):
    state = {"crashed": False}

    def save(self, *args, **kwargs):
        if not state["crashed"]:
            state["crashed"] = True
            raise WorkerLost("killed between rendering and committing the row")
        return original(self, *args, **kwargs)

    return save, state


def stored_files(root):
    return sorted(p.relative_to(root) for p in root.rglob("*.pdf"))


def test_a_render_killed_before_the_row_leaves_no_row_and_a_rerun_makes_one(
    signed_record, settings, tmp_path
):
    settings.MEDIA_ROOT = tmp_path
    settings.CELERY_TASK_ALWAYS_EAGER = True
    save, state = crash_once(RecordPdf.save)
    with (
        mock.patch.object(RecordPdf, "save", save),
        mock.patch.object(render_daily_record, "retry", side_effect=WorkerLost("no retry")),
    ):
        result = render_daily_record.apply(args=[signed_record.pk], throw=False)
    assert state["crashed"] and result.failed()
    assert not RecordPdf.objects.filter(record=signed_record).exists()

    result = render_daily_record.apply(args=[signed_record.pk], throw=False)
    assert result.successful(), result.traceback
    pdf = RecordPdf.objects.get(record=signed_record)
    assert result.result == pdf.pk
    # the task is idempotent: a redelivered message changes nothing
    assert render_daily_record.apply(args=[signed_record.pk]).result == pdf.pk
    assert RecordPdf.objects.filter(record=signed_record).count() == 1
    with pdf.file.open("rb") as handle:
        assert verify_pdf(handle.read(), name="record.pdf").ok


def test_the_task_retries_by_itself_after_a_crash_in_the_same_run(
    signed_record, settings, tmp_path
):
    """With its own retry (eager, as with no broker) the second attempt stores exactly one."""
    settings.MEDIA_ROOT = tmp_path
    save, state = crash_once(RecordPdf.save)
    with mock.patch.object(RecordPdf, "save", save):
        result = render_daily_record.apply(args=[signed_record.pk], throw=False)
    assert state["crashed"] and result.successful(), result.traceback
    assert RecordPdf.objects.filter(record=signed_record).count() == 1
    render_daily_record.apply(args=[signed_record.pk])
    assert RecordPdf.objects.filter(record=signed_record).count() == 1


def test_a_crashed_render_leaves_no_orphan_file_in_storage(signed_record, settings, tmp_path):
    settings.MEDIA_ROOT = tmp_path
    save, _ = crash_once(RecordPdf.save)
    with (
        mock.patch.object(RecordPdf, "save", save),
        mock.patch.object(render_daily_record, "retry", side_effect=WorkerLost("no retry")),
    ):
        render_daily_record.apply(args=[signed_record.pk], throw=False)
    render_daily_record.apply(args=[signed_record.pk])
    pdf = RecordPdf.objects.get(record=signed_record)
    assert stored_files(tmp_path) == [tmp_path.joinpath(pdf.file.name).relative_to(tmp_path)]

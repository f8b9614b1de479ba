"""The render worker dies after the PDF is made but before its row is committed."""

from unittest import mock

import pytest

from compliance.models import RecordPdf
from compliance.records.checks import verify_pdf
from compliance.tasks import render_daily_record

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


def test_the_sweep_removes_only_old_pdfs_no_row_names(signed_record, settings, tmp_path):
    """What a SIGKILL between file and row leaves (see test_worker_killed) goes; nothing else."""
    import datetime as dt
    import os

    from django.utils import timezone

    from compliance.records.files import ensure_pdf, sweep_orphan_pdfs
    from compliance.tasks import sweep_orphan_pdfs as sweep_task

    settings.MEDIA_ROOT = tmp_path
    kept = ensure_pdf(signed_record)
    folder = tmp_path / "records" / "2026" / "11"
    folder.mkdir(parents=True)
    old_orphan, fresh_orphan = folder / "record-1-1-aaaa.pdf", folder / "record-1-1-bbbb.pdf"
    for orphan in (old_orphan, fresh_orphan):
        orphan.write_bytes(b"%PDF-1.7 interrupted")
    (folder / "notes.txt").write_text("not a record file")
    seven_hours_ago = (timezone.now() - dt.timedelta(hours=7)).timestamp()
    for path in (old_orphan, tmp_path / kept.file.name):
        os.utime(path, (seven_hours_ago, seven_hours_ago))

    assert sweep_orphan_pdfs(older_than=dt.timedelta(hours=6), now=timezone.now()) == [
        "records/2026/11/record-1-1-aaaa.pdf"
    ]
    kept_path = tmp_path.joinpath(kept.file.name).relative_to(tmp_path)
    assert sorted(stored_files(tmp_path)) == sorted([fresh_orphan.relative_to(tmp_path), kept_path])
    assert sweep_task.apply(kwargs={"hours": 0}).result == 1  # the fresh one, now old enough
    assert stored_files(tmp_path) == [kept_path]
    assert (folder / "notes.txt").exists()
    with kept.file.open("rb") as handle:
        assert verify_pdf(handle.read(), name="record.pdf").ok


def test_the_sweep_runs_on_an_empty_store(db, settings, tmp_path):
    import datetime as dt

    from django.utils import timezone

    from compliance.records.files import sweep_orphan_pdfs

    settings.MEDIA_ROOT = tmp_path / "nothing-yet"
    assert sweep_orphan_pdfs(older_than=dt.timedelta(hours=6), now=timezone.now()) == []

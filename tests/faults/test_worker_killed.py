"""A real Celery worker process on Redis is SIGKILLed in the middle of rendering a record.

Each test starts ``tests.faults.stalling_worker`` as its own OS process, against the same
database as the test and the Redis broker of ``.ci/run``; the worker's first render stops at
a chosen point and the test kills it there with SIGKILL, so none of the worker's own
clean-up runs. What must follow: the message is delivered again, the task runs again, and
the database ends with exactly one RecordPdf whose file verifies; nothing half-written.
"""

import datetime as dt
import os
import signal
import subprocess
import sys
import time
import uuid
from pathlib import Path
from unittest import mock
from urllib.parse import urlsplit, urlunsplit

import pytest
from django.db import connection
from django.utils import timezone

from compliance.models import RecordPdf
from compliance.records.checks import verify_pdf
from compliance.records.files import sweep_orphan_pdfs
from compliance.tasks import render_daily_record
from tests.faults.conftest import sign_closed_job

pytestmark = [
    pytest.mark.redis,
    pytest.mark.postgres,
    pytest.mark.django_db(transaction=True),
    pytest.mark.xdist_group("broker"),  # one test at a time on the broker (see pyproject)
]

ROOT = Path(__file__).resolve().parents[2]
VISIBILITY_TIMEOUT_S = 3


@pytest.fixture
def record(job, simple_checklists, operator, supervisor):
    """A signed record whose render the test queues itself, on a queue of its own."""
    with mock.patch("compliance.records.services._queue_render"):
        return sign_closed_job(job, simple_checklists, operator, supervisor)


def _test_database_url() -> str:
    """DATABASE_URL with the test database's name, so the worker sees the test's rows."""
    parts = urlsplit(os.environ["DATABASE_URL"])
    return urlunsplit(parts._replace(path="/" + connection.settings_dict["NAME"]))


class Workers:
    """Starts stalling workers as separate process groups; kills any left at the end."""

    def __init__(self, tmp_path: Path) -> None:
        self.tmp_path = tmp_path
        self.media = tmp_path / "media"
        self.queue = f"fault-{uuid.uuid4().hex[:8]}"
        self.stall_file = tmp_path / "stalled.pid"
        self.started: list[tuple[subprocess.Popen, Path]] = []

    def start(self, point: str, pool: str) -> subprocess.Popen:
        log = self.tmp_path / f"worker-{len(self.started)}.log"
        env = {
            **os.environ,
            "DATABASE_URL": _test_database_url(),
            "PARAPET_MEDIA_ROOT": str(self.media),
            "CELERY_VISIBILITY_TIMEOUT": str(VISIBILITY_TIMEOUT_S),
            "PYTHONPATH": str(ROOT),
        }
        with log.open("wb") as out:
            command = [sys.executable, "-m", "tests.faults.stalling_worker", self.queue]
            process = subprocess.Popen(
                [*command, str(self.stall_file), point, pool],
                cwd=ROOT,
                env=env,
                stdout=out,
                stderr=subprocess.STDOUT,
                start_new_session=True,
            )
        self.started.append((process, log))
        return process

    def logs(self) -> str:
        return "\n".join(f"--- {log.name}\n{log.read_text()}" for _, log in self.started)

    def wait_for_stall(self, timeout: float = 90) -> int:
        deadline = time.monotonic() + timeout
        while time.monotonic() < deadline:
            if self.stall_file.exists():
                return int(self.stall_file.read_text())
            for process, _ in self.started:
                if process.poll() is not None:
                    pytest.fail(f"worker exited before the render stalled\n{self.logs()}")
            time.sleep(0.1)
        pytest.fail(f"no render reached the stall point in {timeout} s\n{self.logs()}")

    def kill_group(self, process: subprocess.Popen) -> None:
        os.killpg(process.pid, signal.SIGKILL)
        process.wait(timeout=30)

    def stop_all(self) -> None:
        for process, _ in self.started:
            if process.poll() is None:
                self.kill_group(process)


@pytest.fixture
def workers(tmp_path, settings):
    from compliance.celery import app

    assert not app.conf.task_always_eager, "needs CELERY_BROKER_URL pointing at Redis"
    pool = Workers(tmp_path)
    settings.MEDIA_ROOT = pool.media
    yield pool
    pool.stop_all()
    with app.connection_for_write() as conn:
        conn.default_channel.queue_delete(pool.queue)


def stored_pdfs(media: Path) -> list[str]:
    return sorted(str(p.relative_to(media)) for p in media.rglob("*.pdf"))


def assert_one_verified_pdf(record) -> RecordPdf:
    pdf = RecordPdf.objects.get(record=record)
    assert RecordPdf.objects.filter(record=record).count() == 1
    with pdf.file.open("rb") as handle:
        report = verify_pdf(handle.read(), name="record.pdf")
    assert report.ok, report
    return pdf


def test_a_pool_process_killed_after_rendering_is_requeued_and_stores_one_record(record, workers):
    """The kernel's OOM killer takes the pool process: the worker requeues the message."""
    parent = workers.start("rendered", pool="prefork")
    result = render_daily_record.apply_async(args=[record.pk], queue=workers.queue)

    child = workers.wait_for_stall()
    assert child != parent.pid  # the render runs in the pool process, not the worker's main
    assert not RecordPdf.objects.filter(record=record).exists()
    os.kill(child, signal.SIGKILL)

    try:
        pdf_id = result.get(timeout=120)
    except Exception:  # pragma: no cover - the log says why
        pytest.fail(f"the requeued render did not finish\n{workers.logs()}")
    assert parent.poll() is None, "the worker's main process lives on"
    pdf = assert_one_verified_pdf(record)
    assert pdf.pk == pdf_id
    assert stored_pdfs(workers.media) == [pdf.file.name]
    assert "WorkerLostError" in workers.logs() or "signal 9" in workers.logs()


def test_a_whole_worker_killed_between_file_and_row_is_redelivered_to_the_next(record, workers):
    """The machine goes: the message waits in Redis, unacknowledged, for another worker."""
    first = workers.start("stored", pool="solo")
    result = render_daily_record.apply_async(args=[record.pk], queue=workers.queue)

    assert workers.wait_for_stall() == first.pid
    killed_at = time.monotonic()
    workers.kill_group(first)
    assert first.returncode == -signal.SIGKILL
    # The file was stored, its row never committed: no half-written record, one orphan file.
    assert not RecordPdf.objects.filter(record=record).exists()
    (orphan,) = stored_pdfs(workers.media)

    # Redis hands the unacknowledged message out again once its visibility timeout passes.
    time.sleep(max(0.0, VISIBILITY_TIMEOUT_S + 0.5 - (time.monotonic() - killed_at)))
    workers.start("stored", pool="solo")
    try:
        pdf_id = result.get(timeout=120)
    except Exception:  # pragma: no cover - the log says why
        pytest.fail(f"the redelivered render did not finish\n{workers.logs()}")
    pdf = assert_one_verified_pdf(record)
    assert pdf.pk == pdf_id
    assert sorted(stored_pdfs(workers.media)) == sorted([orphan, pdf.file.name])

    # The sweep removes the interrupted render's file and nothing a row names.
    assert sweep_orphan_pdfs(older_than=dt.timedelta(0), now=timezone.now()) == [orphan]
    assert stored_pdfs(workers.media) == [pdf.file.name]
    assert_one_verified_pdf(record)

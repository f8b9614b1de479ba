"""A real Celery worker process whose first render stops at a chosen point, to be killed there.

    python -m tests.faults.stalling_worker QUEUE STALL_FILE POINT POOL

POINT is where the first render stops: ``rendered`` (the signed PDF's bytes exist, nothing
is stored) or ``stored`` (the file is in storage, its row not yet committed). The process
that gets there first creates STALL_FILE holding its pid and sleeps, so the test can SIGKILL
it; once STALL_FILE exists, every later render (any process) goes straight through.
Everything else is the production code path: the task, the broker and the database.
"""

import os
import sys
import time


def _stall_once(stall_file: str) -> None:
    try:  # the first process here claims the stall; the claim is never released
        os.close(os.open(stall_file + ".claimed", os.O_CREAT | os.O_EXCL | os.O_WRONLY))
    except FileExistsError:
        return
    with open(stall_file + ".tmp", "w") as out:
        out.write(str(os.getpid()))
    os.rename(stall_file + ".tmp", stall_file)  # appears whole, with the pid in it
    time.sleep(600)


def main() -> None:
    queue, stall_file, point, pool = sys.argv[1:5]
    os.environ.setdefault("DJANGO_SETTINGS_MODULE", "compliance.settings")
    import django

    django.setup()
    from compliance.celery import app
    from compliance.models import RecordPdf
    from compliance.records import files as record_files

    if point == "rendered":
        render = record_files.render_signed_pdf

        def stalling_render(record):
            data = render(record)
            _stall_once(stall_file)
            return data

        record_files.render_signed_pdf = stalling_render
    elif point == "stored":
        save = RecordPdf.save

        def stalling_save(self, *args, **kwargs):
            assert self.file.storage.exists(self.file.name)
            _stall_once(stall_file)
            return save(self, *args, **kwargs)

        RecordPdf.save = stalling_save
    else:
        raise SystemExit(f"unknown stall point {point!r}")
    app.worker_main(
        [
            "worker",
            f"--pool={pool}",
            "--concurrency=1",
            f"--queues={queue}",
            "--loglevel=INFO",
            "--without-heartbeat",
            "--without-mingle",
            "--without-gossip",
            f"--hostname={queue}-{os.getpid()}@localhost",
        ]
    )


if __name__ == "__main__":
    main()

import logging
import threading
import time
from collections.abc import Callable, Mapping
from typing import Any

from celery import current_app
from django.conf import settings
from django.core.management import call_command
from django.core.management.base import BaseCommand, CommandParser
from django.db import connection

from compliance.demo import demo_logins, load_demo

logger = logging.getLogger(__name__)

TICK_S = 5.0
"""How often the demo's beat looks for a task that is due."""


def run_due(
    schedule: Mapping[str, Mapping[str, Any]],
    due: dict[str, float],
    now: float,
    run: Callable[[str], object],
) -> list[str]:
    """Run each task of `schedule` whose time in `due` has come (a beat entry's `task` by
    name), and set its next time; returns the entries run. A task that fails is logged and
    tried again at its next time, as celery beat does."""
    ran = []
    for name, entry in schedule.items():
        if now < due.setdefault(name, now + float(entry["schedule"])):
            continue
        due[name] = now + float(entry["schedule"])
        try:
            run(str(entry["task"]))
        # What can fail: the task's own error, or SQLite busy while the server writes. Caught
        # whole because the thread must live on (a beat that died would never stop work
        # again); it is logged, and the task runs again at its next time.
        except Exception:
            logger.exception("The demo's periodic task %s failed.", entry["task"])
        ran.append(name)
    return ran


def beat_in_process(stop: threading.Event) -> None:
    """The periodic tasks of CELERY_BEAT_SCHEDULE, run in this process as `celery beat` runs
    them in production: the demo runs its tasks in-process, and without this a job at work
    whose wind reading ran out was never stopped."""
    due: dict[str, float] = {}
    while not stop.wait(TICK_S):
        run_due(
            settings.CELERY_BEAT_SCHEDULE,
            due,
            time.monotonic(),
            lambda task: current_app.tasks[task].apply(throw=True),
        )
        connection.close()  # this thread's own connection, opened again when next due


class Command(BaseCommand):
    help = "Migrate, load the defaults and the invented demo scenario, then serve the demo."

    def add_arguments(self, parser: CommandParser) -> None:
        parser.add_argument("--host", default="127.0.0.1")
        parser.add_argument("--port", default="8000")
        parser.add_argument("--no-serve", action="store_true", help="Load only; do not serve.")

    def handle(self, *args: Any, **options: Any) -> None:
        call_command("migrate", verbosity=0, interactive=False)
        call_command("collectstatic", verbosity=0, interactive=False)
        org = load_demo()
        url = f"http://{options['host']}:{options['port']}/"
        self.stdout.write(self.style.SUCCESS(f"Demo data loaded for {org.name}."))
        self.stdout.write(
            f"Open {url} (phone app), {url}admin/ (registers), {url}api/schema/ (API)."
        )
        self.stdout.write("Demo logins (invented people):")
        for username, password, role in demo_logins():
            self.stdout.write(f"  {username:<8} {password}  ({role})")
        self.stdout.write(
            "Caution: Parapet records and computes; it does not replace local regulations, the "
            "maker's manual or a licensed engineer's certification."
        )
        if not options["no_serve"]:
            stop = threading.Event()
            threading.Thread(target=beat_in_process, args=(stop,), daemon=True).start()
            self.stdout.write("Periodic tasks run in this process (the wind check each minute).")
            try:
                call_command(
                    "runserver", f"{options['host']}:{options['port']}", use_reloader=False
                )
            finally:
                stop.set()

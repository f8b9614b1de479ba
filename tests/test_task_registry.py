"""The project's background tasks are known to its Celery app from start-up, on every thread."""

import subprocess
import sys

from django.conf import settings

PROBE = """
import threading
import django
django.setup()
from compliance.celery import app
found = []
name = "compliance.tasks.render_daily_record"
thread = threading.Thread(target=lambda: found.append(name in app.tasks))
thread.start(); thread.join()
print(found[0])
"""


def test_a_fresh_process_knows_the_render_task_on_any_thread():
    """A service queues the render by name on the project's app; in a process that had not yet
    imported the task module (a web server signing its first record), the name was unknown and
    the PDF waited for the sweep."""
    done = subprocess.run(
        [sys.executable, "-c", PROBE],
        cwd=settings.BASE_DIR,
        env={"DJANGO_SETTINGS_MODULE": "compliance.settings", "DJANGO_DEBUG": "true"},
        capture_output=True,
        text=True,
        timeout=120,
        check=False,
    )
    assert done.returncode == 0, done.stderr
    assert done.stdout.strip() == "True"

"""Celery application; with no broker configured, tasks run in-process (eagerly)."""

import os

from celery import Celery

os.environ.setdefault("DJANGO_SETTINGS_MODULE", "compliance.settings")

app = Celery("parapet")
app.config_from_object("django.conf:settings", namespace="CELERY")
app.autodiscover_tasks()

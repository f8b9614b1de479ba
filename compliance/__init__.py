"""Parapet: pre-start checks, holds and signed daily records for facade-access crews."""

from compliance.celery import app as celery_app

__all__ = ["celery_app"]

"""WSGI entry point for gunicorn or any WSGI server."""

import os

from django.core.wsgi import get_wsgi_application

os.environ.setdefault("DJANGO_SETTINGS_MODULE", "compliance.settings")
application = get_wsgi_application()

"""Benchmarks: each module runs with one command and prints its figures (see RESULTS.md).

Importing the package points Django at the ``parapet_bench`` PostgreSQL database (never the test
or demo ones) and sets Django up, so every benchmark can use the ORM for its fixtures.
"""

import os
import sys
from urllib.parse import urlparse

BENCH_DB = "postgres://postgres@127.0.0.1:5432/parapet_bench"
os.environ.setdefault("DATABASE_URL", BENCH_DB)
os.environ.setdefault("DJANGO_SETTINGS_MODULE", "compliance.settings")
os.environ.setdefault("PARAPET_LOG_LEVEL", "ERROR")
# The benchmark process seeds its data as a developer would (the demo's signing passphrase);
# the gunicorn it starts runs in production mode with its own key (bench/common.py).
os.environ.setdefault("DJANGO_DEBUG", "true")

if urlparse(os.environ["DATABASE_URL"]).path.lstrip("/") != "parapet_bench":
    sys.exit("The benchmarks write a lot of rows: point DATABASE_URL at .../parapet_bench only.")

import django  # noqa: E402

django.setup()

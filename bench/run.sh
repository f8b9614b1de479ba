#!/bin/sh
# Run every benchmark against the parapet_bench database on loopback; --short for a quick pass.
# Usage: bench/run.sh [--short | --smoke]
# --smoke (run by .ci/run): the in-process benchmarks once at their smallest, so they cannot rot
# unnoticed; its figures are not compared with anything (the machine is busy with the suite).
set -eu
cd "$(dirname "$0")/.."
PY=.venv/bin/python
export DATABASE_URL="${DATABASE_URL:-postgres://postgres@127.0.0.1:5432/parapet_bench}"
export CELERY_BROKER_URL="${CELERY_BROKER_URL:-}"
pg_isready -q -h 127.0.0.1 || { echo "PostgreSQL is not up on 127.0.0.1:5432"; exit 1; }
if [ "${1:-}" = "--smoke" ]; then
  timeout 300 $PY -m bench.record --repeat 1
  timeout 300 $PY -m bench.sync --profile-only
  exit 0
fi
$PY -c "import locust" 2>/dev/null || .venv/bin/pip install --quiet -e ".[bench]"
if [ "${1:-}" = "--short" ]; then
  timeout 600 $PY -m bench.sync --short
  timeout 600 $PY -m bench.locust_sync --crews 10 50
  timeout 300 $PY -m bench.record --repeat 1
  timeout 600 $PY -m bench.auditor
  timeout 300 $PY -m bench.bundle --runs 3
else
  timeout 1200 $PY -m bench.sync
  timeout 900 $PY -m bench.locust_sync --crews 10 50 200
  timeout 600 $PY -m bench.record
  timeout 900 $PY -m bench.auditor
  timeout 300 $PY -m bench.bundle
fi

"""The deploy's gunicorn settings: one worker per core unless WEB_CONCURRENCY says otherwise."""

import os
import runpy
from pathlib import Path

CONF = Path(__file__).resolve().parents[1] / "gunicorn.conf.py"


def test_one_worker_per_core_the_process_may_use(monkeypatch):
    monkeypatch.delenv("WEB_CONCURRENCY", raising=False)
    assert runpy.run_path(str(CONF))["workers"] == len(os.sched_getaffinity(0))


def test_web_concurrency_sets_the_workers(monkeypatch):
    monkeypatch.setenv("WEB_CONCURRENCY", "5")
    settings = runpy.run_path(str(CONF))
    assert settings["workers"] == 5
    assert settings["timeout"] == 120

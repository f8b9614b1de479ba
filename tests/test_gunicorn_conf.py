"""The deploy's gunicorn settings: one worker per core, at least two, unless WEB_CONCURRENCY
says otherwise."""

import os
import runpy
from pathlib import Path

CONF = Path(__file__).resolve().parents[1] / "gunicorn.conf.py"


def test_one_worker_per_core_the_process_may_use_and_at_least_two(monkeypatch):
    monkeypatch.delenv("WEB_CONCURRENCY", raising=False)
    cores = len(os.sched_getaffinity(0))
    assert runpy.run_path(str(CONF))["workers"] == max(2, cores)
    monkeypatch.setattr(os, "sched_getaffinity", lambda pid: {0})
    assert runpy.run_path(str(CONF))["workers"] == 2


def test_web_concurrency_sets_the_workers(monkeypatch):
    monkeypatch.setenv("WEB_CONCURRENCY", "5")
    settings = runpy.run_path(str(CONF))
    assert settings["workers"] == 5
    assert settings["timeout"] == 120

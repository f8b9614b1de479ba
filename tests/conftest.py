import pytest
from rest_framework.test import APIClient

from checklists.models import ChecklistVersion
from compliance.models import Job
from tests.factories import (
    JobFactory,
    UserFactory,
    make_drop,
    published_checklist,
    reading,
    tick,
)


@pytest.fixture
def api() -> APIClient:
    return APIClient()


def client_for(user) -> APIClient:
    client = APIClient()
    client.force_authenticate(user)
    return client


@pytest.fixture
def job(db) -> Job:
    job = JobFactory()
    make_drop(job)
    return job


@pytest.fixture
def operator(job):
    return UserFactory(organisation=job.organisation, role="operator")


@pytest.fixture
def supervisor(job):
    return job.supervisor


@pytest.fixture
def simple_checklists(db) -> dict[str, ChecklistVersion]:
    """One small checklist per subject kind: a blocking tick and, for anchors, a limit."""
    return {
        "anchor": published_checklist(
            "anchor-check",
            "anchor",
            [
                tick("sound"),
                reading("tag_capacity", "kN", {"min": {"profile": "min_anchor_capacity_kn"}}),
            ],
        ),
        "robot": published_checklist(
            "robot-check", "robot", [tick("stops_work"), tick("cups", blocking=False)]
        ),
        "tether": published_checklist("tether-check", "tether", [tick("sheath")]),
        "safety_line": published_checklist("line-check", "safety_line", [tick("sheath")]),
        "hose": published_checklist(
            "hose-check",
            "hose",
            [
                tick("condition"),
                reading("valve_pressure", "kPa", {"max": {"equipment": "rating_kpa"}}),
            ],
        ),
        "site": published_checklist(
            "site-check",
            "site",
            [
                tick("zone_closed"),
                reading("roof_wind", "m/s", {"max": {"profile": "max_wind_ms"}}),
            ],
        ),
    }


PASSING = {
    "anchor": {"sound": {"value": "pass"}, "tag_capacity": {"value": 22.2, "unit": "kN"}},
    "robot": {"stops_work": {"value": "pass"}, "cups": {"value": "pass"}},
    "tether": {"sheath": {"value": "pass"}},
    "safety_line": {"sheath": {"value": "pass"}},
    "hose": {"condition": {"value": "pass"}, "valve_pressure": {"value": 900, "unit": "kPa"}},
    "site": {"zone_closed": {"value": "pass"}, "roof_wind": {"value": 6.5, "unit": "m/s"}},
}


def fill_all(job: Job, versions: dict[str, ChecklistVersion], by, overrides: dict | None = None):
    """Record a passing sheet for every requirement of the job (overrides per subject kind),
    on the job's day when it has passed (a past day's checks are made on that day)."""
    from django.utils import timezone

    from checklists.services import record_sheet
    from compliance import clock
    from compliance.jobs.selectors import job_requirements

    with clock.replaying(min(job.date, timezone.localdate())):
        return _fill_all(job, versions, by, overrides, record_sheet, job_requirements)


def _fill_all(job, versions, by, overrides, record_sheet, job_requirements):
    sheets = []
    for req in job_requirements(job):
        entries = dict(PASSING[req.subject.kind])
        entries.update((overrides or {}).get(req.subject.kind, {}))
        sheet, _ = record_sheet(
            job=job,
            version=versions[req.subject.kind],
            by=by,
            entries=entries,
            anchor=req.subject.anchor,
            equipment=req.subject.equipment,
        )
        sheets.append(sheet)
    return sheets


@pytest.fixture(autouse=True)
def _fast_password_hashing(settings):
    """Argon2 stays the production hasher (tested on its own); tests hash fast."""
    settings.PASSWORD_HASHERS = ["django.contrib.auth.hashers.MD5PasswordHasher"]


def pytest_collection_modifyitems(config, items):
    """Tests that need Redis or PostgreSQL run when the environment points at them (.ci/run).

    They are deselected, not skipped, on the SQLite run, which has neither configured.
    This runs after pytest-django's own ordering (database tests, then transactional ones).
    """
    import os

    wanted = {
        "redis": os.environ.get("CELERY_BROKER_URL", "").startswith("redis://"),
        "postgres": os.environ.get("DATABASE_URL", "").startswith("postgres"),
    }
    keep, drop = [], []
    for item in items:
        needs = [m for m in wanted if item.get_closest_marker(m)]
        (keep if all(wanted[m] for m in needs) else drop).append(item)
    if drop:
        config.hook.pytest_deselected(items=drop)
    # Browser tests last: Playwright's sync API keeps an event loop running on the main thread
    # from the first of them to the end of the session, and code that calls asyncio.run()
    # (PDF signing and signature checks) cannot run on a thread whose loop is running.
    items[:] = [i for i in keep if not i.get_closest_marker("browser")] + [
        i for i in keep if i.get_closest_marker("browser")
    ]


@pytest.fixture(autouse=True)
def _fresh_cache():
    """Throttle counters live in the cache; each test starts with none."""
    from django.core.cache import cache

    cache.clear()
    yield
    cache.clear()


@pytest.fixture(autouse=True)
def _tasks_in_process(request):
    """Background tasks run in the test's own process, as with no broker, so a test that signs
    a day finds its PDF drawn; only tests marked `redis` send them through the broker (to a
    real worker they start). Without this, the run on Redis queued every render for a worker
    that no other test starts, and the tests that read the PDF waited for nothing."""
    from compliance.celery import app

    if request.node.get_closest_marker("redis"):
        yield
        return
    eager = app.conf.task_always_eager
    app.conf.task_always_eager = True
    yield
    app.conf.task_always_eager = eager

"""Real headless Chromium against the live test server, driving the built phone app."""

import io
import json
import os
from pathlib import Path

import pytest
from django.conf import settings
from django.utils import timezone

os.environ["DJANGO_ALLOW_ASYNC_UNSAFE"] = "true"

APP_DIR = Path(settings.BASE_DIR) / "compliance" / "static" / "app"
SHOTS = Path(settings.BASE_DIR) / "docs" / "screenshots"
CHROMIUM = "/usr/bin/chromium"
CHROMIUM_ARGS = [
    "--headless",
    "--no-sandbox",
    "--disable-gpu",
    "--disable-quic",
    "--no-first-run",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
]
PASSWORD = "parapet-demo-2026"


@pytest.fixture(scope="session")
def built_app() -> Path:
    missing = [
        n for n in ("index.html", "sw.js", "manifest.webmanifest") if not (APP_DIR / n).is_file()
    ]
    if missing:
        pytest.fail(
            f"The phone app is not built ({', '.join(missing)} missing in {APP_DIR}); "
            "run `make frontend` (cd frontend && npm ci && npm run build) first."
        )
    return APP_DIR


@pytest.fixture(scope="session")
def browser():
    from playwright.sync_api import sync_playwright

    if not Path(CHROMIUM).exists():
        pytest.fail(f"{CHROMIUM} is missing; run `make chromium` (Debian's chromium package).")
    with sync_playwright() as p:
        browser = p.chromium.launch(executable_path=CHROMIUM, args=CHROMIUM_ARGS)
        yield browser
        browser.close()


@pytest.fixture
def context(browser, built_app):
    context = browser.new_context(
        viewport={"width": 390, "height": 844}, device_scale_factor=1, locale="en-GB"
    )
    context.set_default_timeout(15000)
    yield context
    context.close()


@pytest.hookimpl(wrapper=True, tryfirst=True)
def pytest_runtest_makereport(item, call):
    """Keep each phase's report on the test item, so a fixture can tell that its test failed."""
    report = yield
    setattr(item, f"report_{report.when}", report)
    return report


@pytest.fixture
def page(context, request):
    page = context.new_page()
    errors: list[str] = []
    trail: list[str] = []
    page.on("pageerror", lambda exc: errors.append(str(exc)))
    page.on("console", lambda msg: trail.append(f"console {msg.type}: {msg.text}"))
    page.on("requestfailed", lambda r: trail.append(f"failed {r.method} {r.url}: {r.failure}"))
    page.on("response", lambda r: r.status >= 400 and trail.append(f"{r.status} {r.url}"))
    yield page
    failed = getattr(request.node, "report_call", None)
    if failed is not None and failed.failed:
        # What the person would have seen, and what the page said, for a failure in CI.
        try:
            seen = page.inner_text("body", timeout=2000)
        except Exception as exc:  # a diagnostic must not hide the failure
            seen = f"(could not read the page: {exc})"
        print(f"--- page at failure: {page.url}\n{seen[:3000]}\n--- trail")
        print("\n".join(trail[-60:]))
    # Leave the app before the database is flushed: a poll still running in the live server's
    # thread holds a table lock on SQLite, and the flush then fails ("table is locked").
    page.goto("about:blank")
    page.wait_for_timeout(300)
    assert not errors, f"JavaScript errors on the page: {errors}"


def draft_key(job, requirement: str, username: str = "tomas") -> str:
    """The key of a sheet's draft on the phone: its writer's, the job's and the requirement's
    (frontend/src/storage.ts draftKey)."""
    from compliance.models import User

    return f"{off_loop(lambda: User.objects.get(username=username).pk)}:{job.id}:{requirement}"


def off_loop(fn, *args):
    """Run database set-up in its own thread: Playwright's sync API keeps an event loop running
    on this one, and the demo's PDF signing calls asyncio.run()."""
    from concurrent.futures import ThreadPoolExecutor

    from django.db import connection

    def call():
        try:
            return fn(*args)
        finally:
            connection.close()

    with ThreadPoolExecutor(max_workers=1) as pool:
        return pool.submit(call).result()


@pytest.fixture
def demo(transactional_db):
    """The invented demo scenario; today's job is planned with no sheets (tomorrow's is planned
    too, and a day three days back was worked and closed but never signed)."""
    from compliance.demo import load_demo
    from compliance.models import Job

    org = off_loop(load_demo)
    job = Job.objects.filter(organisation=org, date=timezone.localdate()).first()
    assert job is not None
    return job


def shot(page, name: str) -> None:
    SHOTS.mkdir(parents=True, exist_ok=True)
    page.screenshot(path=str(SHOTS / name))


def png_bytes() -> bytes:
    from PIL import Image

    out = io.BytesIO()
    Image.new("RGB", (64, 48), (40, 120, 200)).save(out, format="PNG")
    return out.getvalue()


def fill_passing_except(job, skip: set[str]) -> None:
    """Record a passing sheet on the server for every requirement of the job not in `skip`."""
    from checklists.selectors import current_versions
    from checklists.services import record_sheet
    from compliance.demo import scenario_path
    from compliance.jobs.selectors import job_requirements

    readings = json.loads(scenario_path().read_text(encoding="utf-8"))["readings"]
    versions = {
        v.checklist.key: v for vs in current_versions(job.organisation_id).values() for v in vs
    }
    operator = job.crew.get(username="tomas")
    for req in job_requirements(job):
        if req.key in skip:
            continue
        version = versions[req.checklist_key]
        values = readings.get(req.checklist_key, {})
        entries = {}
        for item in version.items:
            if item["kind"] == "tick":
                entries[item["key"]] = {"value": "pass"}
            elif item["kind"] in ("reading", "series"):
                entries[item["key"]] = {"value": values[item["key"]], "unit": item["unit"]}
        record_sheet(
            job=job,
            version=version,
            by=operator,
            entries=entries,
            anchor=req.subject.anchor,
            equipment=req.subject.equipment,
        )


def sign_in_as(page, base: str, username: str) -> None:
    """Sign in on the phone and wait for the first sync (it keeps the day's data on the phone)."""
    page.goto(base + "/")
    page.wait_for_selector("input[name=username]")
    page.fill("input[name=username]", username)
    page.fill("input[name=password]", PASSWORD)
    page.click("button[type=submit]")
    page.wait_for_selector("[data-testid=jobs] a")
    page.wait_for_selector("[data-testid=strip][data-synced=yes][data-syncing=no]")
    wait_offline_ready(page)


def wait_offline_ready(page) -> None:
    """Wait until the service worker controls the page: it takes control only once its install
    has kept the app's files, so a reload without signal is served from the phone from then on.
    Under CI load a test went offline and reloaded before that, and the reload found no page."""
    page.wait_for_function("() => navigator.serviceWorker.controller !== null")


def fail_anchor_check(job, label: str = "R1") -> None:
    """Record a failing anchor pre-use sheet on the server (cracks found): the job goes on hold."""
    from checklists.selectors import current_versions
    from checklists.services import record_sheet
    from compliance.models import Anchor

    versions = {
        v.checklist.key: v for vs in current_versions(job.organisation_id).values() for v in vs
    }
    entries = {
        "tag_matches_register": {"value": "pass"},
        "visual_condition": {"value": "fail"},
        "fixings_tight": {"value": "pass"},
        "membrane_sound": {"value": "pass"},
        "tag_capacity": {"value": 25, "unit": "kN"},
    }
    record_sheet(
        job=job,
        version=versions["anchor-pre-use"],
        by=job.crew.get(username="tomas"),
        entries=entries,
        anchor=Anchor.objects.get(site=job.site, label=label),
    )


AXE = Path(settings.BASE_DIR) / "frontend" / "node_modules" / "axe-core" / "axe.min.js"
DESK = {"width": 1280, "height": 800}
TYPE_MS = 40  # a person typing at a desk


def axe_clean(page, screen: str) -> None:
    """No axe-core violation on the page as it stands, with WCAG AAA text contrast (7:1) on."""
    if not AXE.is_file():
        pytest.fail(f"{AXE} is missing; run `npm ci` in frontend/.")
    # The server's CSP (script-src 'self') blocks the inline <script> that add_script_tag(path=)
    # writes; evaluating the file through the driver leaves the page's policy as it is.
    if not page.evaluate("() => typeof axe !== 'undefined'"):
        page.evaluate(AXE.read_text(encoding="utf-8"))
    violations = page.evaluate(
        """async () => {
            const result = await axe.run(document, {
                rules: { "color-contrast-enhanced": { enabled: true } },
            });
            return result.violations.map((v) => ({
                id: v.id, impact: v.impact, help: v.help,
                nodes: v.nodes.map((n) => `${n.target.join(" ")}: ${n.failureSummary}`),
            }));
        }"""
    )
    assert violations == [], f"axe-core on {screen}:\n{json.dumps(violations, indent=1)}"


def desk_shot(page, name: str, top: str | None = None) -> None:
    """A 1280 x 800 screenshot from the page's top, or with the element `top` at the top."""
    if top:
        page.locator(top).evaluate("e => e.scrollIntoView()")
    else:
        page.evaluate("() => window.scrollTo(0, 0)")
    shot(page, name)

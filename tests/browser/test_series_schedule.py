"""A decay test keeps to its schedule on the phone: a reading can be added only when it is due,
a late one is named before it is taken, and each sample's time is the phone's monotonic time
since Start. Starting a finished test again asks first. The page's clock is Playwright's fake
one, so nothing waits in real time."""

import datetime as dt

import pytest

from tests.browser.conftest import draft_key, sign_in_as

pytestmark = pytest.mark.browser

SERIES = "[data-testid=item-decay_series]"
ADD_ENABLED = "[data-testid=series-add]:enabled"
ADD_DISABLED = "[data-testid=series-add]:disabled"

DRAFT_SERIES = """key => new Promise((resolve, reject) => {
  const open = indexedDB.open("parapet");
  open.onerror = () => reject(open.error);
  open.onsuccess = () => {
    const get = open.result.transaction("drafts").objectStore("drafts").get(key);
    get.onsuccess = () => {
      open.result.close();
      resolve(get.result ? get.result.draft.series : null);
    };
  };
})"""


def kept_series(page, key: str, expected: dict) -> dict | None:
    """The draft's series once it equals `expected`, or what it holds after five seconds."""
    kept = None
    for _ in range(50):
        kept = page.evaluate(DRAFT_SERIES, key)
        if kept == expected:
            break
        page.wait_for_timeout(100)
    return kept


def publish_short_schedule(job) -> str:
    """A new published version of the vacuum check whose decay test runs one reading every 10 s
    (± 2 s) for at least 20 s, the numbers drawn from the site's profile as the default
    checklist's are; returns the requirement key for robot RB-1."""
    from checklists.services import ensure_published
    from compliance.models import Equipment
    from tests.factories import tick

    profile = job.site.profile
    profile.thresholds = {
        **profile.thresholds,
        "decay_interval_s": {"value": 10, "unit": "s", "source": "test: a short schedule"},
        "decay_interval_tolerance_s": {"value": 2, "unit": "s", "source": "test"},
        "decay_min_duration_s": {"value": 20, "unit": "s", "source": "test"},
    }
    profile.save()
    series = {
        "key": "decay_series",
        "kind": "series",
        "label": "Vacuum with the pump isolated",
        "reason": "A grip that leaks drops the robot.",
        "blocking": True,
        "unit": "kPa",
        "min_samples": 3,
        "schedule": {
            "interval_s": {"profile": "decay_interval_s"},
            "tolerance_s": {"profile": "decay_interval_tolerance_s"},
            "min_duration_s": {"profile": "decay_min_duration_s"},
        },
    }
    ensure_published(
        key="vacuum-hold",
        title="Vacuum hold and decay test",
        applies_to="robot",
        description="",
        items=[tick("cups_clean"), series],
    )
    robot = Equipment.objects.get(organisation=job.organisation, label="RB-1")
    return f"vacuum-hold@equipment:{robot.pk}"


def open_paused(page, base: str, job, req_key: str) -> None:
    """Open the sheet with the page's clock installed, then stop it one second on."""
    page.clock.install()
    sign_in_as(page, base, "tomas")
    page.goto(base + f"/#/job/{job.id}/sheet/{req_key}")
    page.wait_for_selector(f"{SERIES} [data-testid=series-plan]:has-text('At least')")
    now = dt.datetime.fromtimestamp(page.evaluate("Date.now()") / 1000 + 1, tz=dt.UTC)
    page.clock.pause_at(now)


def add_reading(page, value: str, count: int) -> None:
    page.fill("[data-testid=series-value]", value)
    page.click("[data-testid=series-add]")
    page.wait_for_selector(f"{SERIES} .samples li:nth-child({count})")


def prompt(page) -> str:
    return page.inner_text(f"{SERIES} .prompt")


def samples(page) -> list[str]:
    return page.eval_on_selector_all(f"{SERIES} .samples li", "els => els.map(e => e.innerText)")


def test_readings_wait_for_their_time_and_keep_the_monotonic_offsets(live_server, demo, page):
    from checklists.models import CheckSheet

    job = demo
    req_key = publish_short_schedule(job)
    open_paused(page, live_server.url, job, req_key)
    plan = "At least 3 readings over 20 s, one every 10 s (± 2 s)."
    page.wait_for_selector(f"[data-testid=series-plan]:text-is('{plan}')")

    page.click("[data-testid=series-start]")
    page.wait_for_selector(ADD_ENABLED)  # the first reading is due at Start
    add_reading(page, "62", 1)
    page.wait_for_selector(ADD_DISABLED)
    assert "Next reading in 10 s" in prompt(page)
    page.clock.run_for(4000)
    page.wait_for_selector(f"{SERIES} .prompt:has-text('Next reading in 6 s')")
    assert page.query_selector(ADD_DISABLED) is not None
    page.clock.run_for(6000)
    page.wait_for_selector(ADD_ENABLED)
    assert "Read the gauge now" in prompt(page)
    page.clock.run_for(1300)
    add_reading(page, "61,8", 2)
    page.wait_for_selector(ADD_DISABLED)
    page.clock.run_for(8600)
    assert page.query_selector(ADD_DISABLED) is not None  # 19.9 s: not yet
    page.clock.run_for(100)
    page.wait_for_selector(ADD_ENABLED)
    page.clock.run_for(500)
    add_reading(page, "61.5", 3)

    assert samples(page) == ["0 s: 62 kPa", "11.3 s: 61.8 kPa", "20.5 s: 61.5 kPa"]
    assert page.get_attribute(SERIES, "data-verdict") == "recorded"
    page.clock.run_for(500)  # the draft is written 400 ms after the last change
    expected = {"decay_series": [[0, 62], [11.3, 61.8], [20.5, 61.5]]}
    assert kept_series(page, draft_key(job, req_key), expected) == expected

    page.click("[data-testid=series-stop]")
    page.click("[data-testid=tick-cups_clean-pass]")
    page.clock.resume()
    page.click("[data-testid=save]")
    page.wait_for_selector("[data-testid=requirements]")
    page.wait_for_selector("[data-testid=strip-waiting][data-count='0']")
    entry = CheckSheet.objects.get(job=job).entries.get(item_key="decay_series")
    assert entry.value == [[0, 62.0], [11.3, 61.8], [20.5, 61.5]]


def test_a_late_reading_is_named_before_it_is_taken_and_fails_the_spacing(live_server, demo, page):
    job = demo
    req_key = publish_short_schedule(job)
    open_paused(page, live_server.url, job, req_key)
    page.click("[data-testid=series-start]")
    add_reading(page, "62", 1)
    page.clock.run_for(12000)
    page.wait_for_selector(ADD_ENABLED)
    assert page.query_selector("[data-testid=series-late]") is None  # 12 s: just in time
    page.clock.run_for(500)
    late = page.wait_for_selector("[data-testid=series-late]")
    assert late.inner_text() == (
        "Reading 2 is late: more than 12 s since the last one. The spacing will fail; "
        "start the test again."
    )
    add_reading(page, "61.9", 2)
    page.click("[data-testid=tick-cups_clean-pass]")  # leave the test: it may move now
    page.wait_for_selector(f"[data-testid=failed-top] {SERIES}[data-verdict=fail]")
    assert page.inner_text("[data-testid=verdict-decay_series] p") == (
        "The test did not keep its schedule: two readings were 12.5 s apart; "
        "the test needs one every 10 s (± 2 s). Start it again."
    )


def test_start_again_asks_before_clearing_a_finished_test(live_server, demo, page):
    job = demo
    req_key = publish_short_schedule(job)
    open_paused(page, live_server.url, job, req_key)
    page.click("[data-testid=series-start]")
    for n, value in enumerate(("62", "61.8", "61.5")):
        if n:
            page.clock.run_for(10000)
        add_reading(page, value, n + 1)
    page.click("[data-testid=series-stop]")
    restart = page.wait_for_selector("[data-testid=series-start]")
    assert restart.inner_text() == "Start again"

    messages: list[str] = []

    def answer(accept: bool):
        def handle(dialog) -> None:
            messages.append(dialog.message)
            dialog.accept() if accept else dialog.dismiss()

        return handle

    page.once("dialog", answer(False))
    page.click("[data-testid=series-start]")
    assert messages == ["Clear the 3 readings of this test and start it again?"]
    assert samples(page) == ["0 s: 62 kPa", "10 s: 61.8 kPa", "20 s: 61.5 kPa"]
    assert page.query_selector(f"{SERIES} .prompt") is None  # not restarted

    page.once("dialog", answer(True))
    page.click("[data-testid=series-start]")
    page.wait_for_selector(f"{SERIES} .prompt")
    assert len(messages) == 2
    assert samples(page) == []
    page.clock.run_for(500)
    kept = kept_series(page, draft_key(job, req_key), {"decay_series": []})
    assert kept == {"decay_series": []}


LIVE_TEXT = """sel => [...document.querySelector(sel).querySelectorAll(
  "[role=status], [role=alert], [aria-live]:not([aria-live=off])")].map((e) => e.textContent)
  .join(" | ")"""


def test_only_a_reading_falling_due_is_announced_not_the_countdown(live_server, demo, page):
    """The countdown was a polite live region that changed every second ("Next reading in 28 s",
    "27 s", ...): a screen reader queued one announcement a second for the whole test, and
    "Read the gauge now" was lost among them."""
    job = demo
    req_key = publish_short_schedule(job)
    open_paused(page, live_server.url, job, req_key)
    page.click("[data-testid=series-start]")
    page.wait_for_selector(ADD_ENABLED)
    add_reading(page, "62", 1)
    page.wait_for_selector(ADD_DISABLED)

    heard = {page.evaluate(LIVE_TEXT, SERIES)}
    for left in range(9, 1, -1):
        page.clock.run_for(1000)
        page.wait_for_selector(f"{SERIES} .prompt:has-text('Next reading in {left} s')")
        heard.add(page.evaluate(LIVE_TEXT, SERIES))
    assert heard == {""}, heard

    page.clock.run_for(2000)
    page.wait_for_selector(ADD_ENABLED)
    assert page.evaluate(LIVE_TEXT, SERIES) == "Read the gauge now: reading 2 is due."
    page.clock.run_for(1500)  # the seconds go on on the screen, not in what is announced
    assert page.evaluate(LIVE_TEXT, SERIES) == "Read the gauge now: reading 2 is due."

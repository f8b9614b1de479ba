"""A reading typed at a person's pace is recorded whole: while its field has focus the item keeps
its place and its verdict, and it is judged when it is committed (the field left, Enter, or a
pause in typing). Before, "25" typed into a field with a 22.2 kN minimum recorded "2": the first
digit failed the limit, the item jumped into the stop-work block and the field lost the focus."""

import json
import time

import pytest

from tests.browser.conftest import draft_key, sign_in_as

pytestmark = pytest.mark.browser

# Every stop-work block or failed item that ever shows, kept across the page's navigations.
WATCH_FAILS = """(() => {
  const look = () => {
    const hits = [...document.querySelectorAll("[data-testid=failed-top], [data-verdict=fail]")]
      .map((e) => `${location.hash} ${e.dataset.testid}`);
    if (!hits.length) return;
    const seen = JSON.parse(sessionStorage.getItem("fails-seen") || "[]");
    sessionStorage.setItem("fails-seen", JSON.stringify([...new Set([...seen, ...hits])]));
  };
  new MutationObserver(look).observe(document, {
    subtree: true, childList: true, attributes: true, attributeFilter: ["data-verdict"],
  });
})()"""

DRAFT_READINGS = """key => new Promise((resolve, reject) => {
  const open = indexedDB.open("parapet");
  open.onerror = () => reject(open.error);
  open.onsuccess = () => {
    const get = open.result.transaction("drafts").objectStore("drafts").get(key);
    get.onsuccess = () => {
      open.result.close();
      const entry = get.result;
      if (!entry) return resolve(null);
      resolve({ saved_at: Date.parse(entry.saved_at), readings: entry.draft.readings });
    };
  };
})"""


def kept_readings(page, key: str, after_ms: float) -> dict[str, str]:
    """The draft's readings once it has been written after `after_ms` (the page's clock)."""
    deadline = time.monotonic() + 10
    while time.monotonic() < deadline:
        kept = page.evaluate(DRAFT_READINGS, key)
        if kept and kept["saved_at"] >= after_ms:
            return kept["readings"]
        page.wait_for_timeout(100)
    raise AssertionError(f"The draft {key} was not written after the typing.")


def as_typed(value: float) -> str:
    return f"{value:g}"


def focused_testid(page) -> str | None:
    return page.evaluate("document.activeElement?.dataset.testid ?? null")


def test_every_default_reading_typed_at_a_persons_pace_is_recorded_whole(live_server, demo, page):
    from checklists.models import ChecklistVersion, CheckSheet
    from compliance.demo import scenario_path
    from compliance.jobs.selectors import job_requirements
    from compliance.models import Hold

    job = demo
    base = live_server.url
    passing = json.loads(scenario_path().read_text(encoding="utf-8"))["readings"]
    # One sheet of each default checklist the job needs that has readings.
    sheets = {}
    for req in job_requirements(job):
        items = ChecklistVersion.objects.get(pk=req.version_id).items
        readings = [i["key"] for i in items if i["kind"] == "reading"]
        if readings and req.checklist_key not in sheets:
            has_series = any(i["kind"] == "series" for i in items)
            sheets[req.checklist_key] = (req.key, readings, has_series)
    assert set(sheets) == {
        "anchor-pre-use",
        "tether-pre-use",
        "safety-line-pre-use",
        "vacuum-hold",
        "water-line",
        "weather",
    }

    page.add_init_script(WATCH_FAILS)
    sign_in_as(page, base, "tomas")
    saved: dict[str, dict[str, float]] = {}
    for checklist, (req_key, keys, has_series) in sheets.items():
        page.goto(base + f"/#/job/{job.id}/sheet/{req_key}")
        page.wait_for_selector("[data-testid=items]")
        typed = {key: as_typed(passing[checklist][key]) for key in keys}
        for key, text in typed.items():
            field = page.locator(f"[data-testid=reading-{key}]")
            field.click()
            field.press_sequentially(text, delay=120)
            assert field.input_value() == text, (checklist, key)
            assert focused_testid(page) == f"reading-{key}", (checklist, key)
        typed_at = page.evaluate("Date.now()")
        assert kept_readings(page, draft_key(job, req_key), typed_at) == typed, checklist
        page.keyboard.press("Tab")
        for key in keys:
            verdict = page.get_attribute(f"[data-testid=item-{key}]", "data-verdict")
            assert verdict in ("pass", "recorded"), (checklist, key, verdict)
        if has_series:
            continue  # a timed test of its own (test_sheet_drafts, test_series_schedule)
        for button in page.query_selector_all("[data-testid^=tick-][data-testid$='-pass']"):
            button.click()
        page.click("[data-testid=save]")
        page.wait_for_selector("[data-testid=requirements]")
        saved[req_key] = {key: passing[checklist][key] for key in keys}

    page.wait_for_selector("[data-testid=strip-waiting][data-count='0']")
    assert page.evaluate("JSON.parse(sessionStorage.getItem('fails-seen') || '[]')") == []
    sheets_by_req = {s.requirement: s for s in CheckSheet.objects.filter(job=job)}
    assert set(sheets_by_req) == set(saved)
    for req_key, values in saved.items():
        sheet = sheets_by_req[req_key]
        recorded = {e.item_key: e.value for e in sheet.entries.filter(item_key__in=list(values))}
        assert recorded == values, req_key
        assert sheet.blocking_failures == 0, req_key
    assert not Hold.objects.filter(job=job).exists()


def open_anchor_sheet(page, base, job):
    """The operator's pre-use check of anchor R1, open on the phone."""
    from compliance.models import Anchor

    anchor_r1 = f"anchor-pre-use@anchor:{Anchor.objects.get(site=job.site, label='R1').pk}"
    sign_in_as(page, base, "tomas")
    page.goto(base + f"/#/job/{job.id}/sheet/{anchor_r1}")
    page.wait_for_selector("[data-testid=items]")


def test_a_reading_below_its_limit_moves_to_stop_work_once_committed(live_server, demo, page):
    open_anchor_sheet(page, live_server.url, demo)
    item = "[data-testid=item-tag_capacity]"
    field = page.locator("[data-testid=reading-tag_capacity]")

    # Committed by Enter: judged at once and moved to the stop-work block, every digit kept.
    field.click()
    field.press_sequentially("10", delay=120)
    assert field.input_value() == "10"
    assert page.query_selector("[data-testid=failed-top]") is None
    assert page.get_attribute(item, "data-verdict") == "missing"
    field.press("Enter")
    page.wait_for_selector(f"[data-testid=failed-top] {item}[data-verdict=fail]")
    assert "10 kN is below the minimum of 22.2 kN." in page.inner_text(item)
    assert field.input_value() == "10"

    # Corrected in the stop-work block: it stays there while typed, goes back once left.
    field.click()
    field.press("Control+a")
    field.press_sequentially("30", delay=120)
    assert page.query_selector(f"[data-testid=failed-top] {item}[data-verdict=fail]") is not None
    assert focused_testid(page) == "reading-tag_capacity"
    field.press("Tab")
    page.wait_for_selector(f"[data-testid=items] {item}[data-verdict=pass]")
    assert page.query_selector("[data-testid=failed-top]") is None
    assert field.input_value() == "30"

    # A pause in typing judges the reading where it stands, and the field keeps the focus.
    field.click()
    field.press("Control+a")
    field.press_sequentially("12", delay=120)
    page.wait_for_selector(f"[data-testid=items] {item}[data-verdict=fail]", timeout=4000)
    assert page.query_selector("[data-testid=failed-top]") is None
    assert focused_testid(page) == "reading-tag_capacity"
    # A tap on the next item while the failing field still has focus lands on that item.
    page.click("[data-testid=tick-visual_condition-pass]")
    assert page.get_attribute("[data-testid=tick-visual_condition-pass]", "aria-pressed") == "true"
    page.wait_for_selector(f"[data-testid=failed-top] {item}[data-verdict=fail]")
    assert field.input_value() == "12"


def test_a_failed_tick_stays_under_the_finger_keeps_the_focus_and_is_announced(
    live_server, demo, page
):
    """Fail on a tick item lifted it into the stop-work block some 900 px above: the next card
    took its place under the finger, the keyboard focus fell to the page and nothing was
    announced. It now stays while it is being answered, says 'Stop work' beside its buttons
    (an alert), and takes its place in the stop-work block once the person goes on."""
    open_anchor_sheet(page, live_server.url, demo)

    # A tap.
    fixings = "[data-testid=item-fixings_tight]"
    fail = page.locator("[data-testid=tick-fixings_tight-fail]")
    fail.evaluate("e => e.scrollIntoView({ block: 'center' })")
    before = fail.bounding_box()
    fail.click()
    alert = page.wait_for_selector(f"[data-testid=items] {fixings} [role=alert]", timeout=3000)
    assert alert.inner_text().startswith("Stop work")
    after = fail.bounding_box()
    assert abs(after["y"] - before["y"]) < 1, (before, after)  # not a card's height: a pixel's part
    assert fail.get_attribute("aria-pressed") == "true"
    assert page.query_selector("[data-testid=failed-top]") is None

    # The keyboard: Space on Fail keeps the focus on Fail.
    page.focus("[data-testid=tick-membrane_sound-pass]")
    page.keyboard.press("Tab")
    assert focused_testid(page) == "tick-membrane_sound-fail"
    page.keyboard.press("Space")
    page.wait_for_selector("[data-testid=items] [data-testid=item-membrane_sound] [role=alert]")
    assert focused_testid(page) == "tick-membrane_sound-fail"

    # Going on to another item: the failed ones take their place in the stop-work block, and
    # the button tapped is the one pressed.
    page.click("[data-testid=tick-tag_matches_register-pass]")
    page.wait_for_selector(f"[data-testid=failed-top] {fixings}")
    page.wait_for_selector("[data-testid=failed-top] [data-testid=item-membrane_sound]")
    assert (
        page.get_attribute("[data-testid=tick-tag_matches_register-pass]", "aria-pressed") == "true"
    )
    assert focused_testid(page) == "tick-tag_matches_register-pass"

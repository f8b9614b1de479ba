"""A sheet being filled is kept on the phone as the operator goes; the timed decay test records
its samples on a clock and draws the curve; a lapsed session keeps what waits and resumes."""

import datetime as dt
import json
import math
import re

import pytest

from tests.browser.conftest import PASSWORD, shot, sign_in_as

pytestmark = pytest.mark.browser


DRAFT_COUNT = """() => new Promise((resolve, reject) => {
  const open = indexedDB.open("parapet");
  open.onerror = () => reject(open.error);
  open.onsuccess = () => {
    const count = open.result.transaction("drafts").objectStore("drafts").count();
    count.onsuccess = () => { resolve(count.result); open.result.close(); };
  };
})"""


def wait_draft_kept(page) -> str:
    """Wait for the debounced write of the draft and return its time."""
    page.wait_for_selector("[data-testid=still-needed][data-draft=kept]")
    return page.get_attribute("[data-testid=still-needed]", "data-kept-at")


def pressed(page, testid: str) -> str | None:
    return page.get_attribute(f"[data-testid={testid}]", "aria-pressed")


def test_a_half_filled_sheet_survives_a_reload_and_goes_when_saved(live_server, demo, page):
    from checklists.models import CheckSheet
    from compliance.models import Anchor

    job = demo
    # Keyed by the anchor's id, which depends on what the database made before this test.
    anchor_r1 = f"anchor-pre-use@anchor:{Anchor.objects.get(site=job.site, label='R1').pk}"
    base = live_server.url
    sign_in_as(page, base, "tomas")
    page.goto(base + f"/#/job/{job.id}/sheet/{anchor_r1}")
    page.wait_for_selector("[data-testid=items]")
    page.click("[data-testid=tick-tag_matches_register-pass]")
    page.click("[data-testid=tick-visual_condition-pass]")
    page.fill("[data-testid=reading-tag_capacity]", "25")
    page.fill("[data-testid=remarks]", "Tag faded but legible.")
    first = wait_draft_kept(page)
    page.fill("[data-testid=reading-tag_capacity]", "24,5")
    page.wait_for_function(
        "t => document.querySelector('[data-testid=still-needed]').dataset.keptAt !== t", arg=first
    )

    page.reload()
    page.wait_for_selector("[data-testid=draft-restored]")
    assert pressed(page, "tick-tag_matches_register-pass") == "true"
    assert pressed(page, "tick-visual_condition-pass") == "true"
    assert pressed(page, "tick-fixings_tight-pass") == "false"
    assert page.input_value("[data-testid=reading-tag_capacity]") == "24,5"
    assert page.input_value("[data-testid=remarks]") == "Tag faded but legible."
    assert "2 still to answer" in page.inner_text("[data-testid=still-needed]")

    # Leaving the sheet and coming back restores it too.
    page.goto(base + f"/#/job/{job.id}")
    page.wait_for_selector("[data-testid=requirements]")
    page.click(f"[data-testid='req-{anchor_r1}']")
    page.wait_for_selector("[data-testid=draft-restored]")
    assert page.input_value("[data-testid=reading-tag_capacity]") == "24,5"

    # Saved to the outbox: the draft is gone and the sheet opens empty again.
    page.click("[data-testid=tick-fixings_tight-pass]")
    page.click("[data-testid=tick-membrane_sound-pass]")
    page.click("[data-testid=save]")
    page.wait_for_selector("[data-testid=requirements]")
    assert page.evaluate(DRAFT_COUNT) == 0
    page.wait_for_selector("[data-testid=strip-waiting][data-count='0']")
    sheet = CheckSheet.objects.get(job=job)
    assert sheet.remarks == "Tag faded but legible."
    assert sheet.entries.get(item_key="tag_capacity").value == 24.5
    page.click(f"[data-testid='req-{anchor_r1}']")
    page.wait_for_selector("[data-testid=items]")
    assert page.query_selector("[data-testid=draft-restored]") is None
    assert pressed(page, "tick-tag_matches_register-pass") == "false"
    assert page.input_value("[data-testid=reading-tag_capacity]") == ""


def test_a_half_filled_sheet_is_restored_only_to_the_person_who_filled_it(live_server, demo, page):
    """Tomas answered part of a check and signed out; Rhea signed in on the same phone and
    opened it: "Restored the answers kept on this phone", his ticks and his remark, which saved
    would have gone on the record under her name."""
    from compliance.models import Anchor

    job = demo
    anchor_r1 = f"anchor-pre-use@anchor:{Anchor.objects.get(site=job.site, label='R1').pk}"
    sheet = f"/#/job/{job.id}/sheet/{anchor_r1}"
    base = live_server.url
    sign_in_as(page, base, "tomas")
    page.goto(base + sheet)
    page.wait_for_selector("[data-testid=items]")
    page.click("[data-testid=tick-visual_condition-pass]")
    page.fill("[data-testid=remarks]", "Tag faded but legible.")
    wait_draft_kept(page)

    page.goto(base + "/#/")
    page.click("[data-testid=sign-out]")
    sign_in_as(page, base, "rhea")
    page.goto(base + sheet)
    page.wait_for_selector("[data-testid=items]")
    page.wait_for_selector("[data-testid=still-needed][data-draft=none]")  # drafts read
    assert page.query_selector("[data-testid=draft-restored]") is None
    assert pressed(page, "tick-visual_condition-pass") == "false"
    assert page.input_value("[data-testid=remarks]") == ""

    page.goto(base + "/#/")
    page.click("[data-testid=sign-out]")
    sign_in_as(page, base, "tomas")
    page.goto(base + sheet)
    page.wait_for_selector("[data-testid=draft-restored]")
    assert pressed(page, "tick-visual_condition-pass") == "true"
    assert page.input_value("[data-testid=remarks]") == "Tag faded but legible."


def test_timed_decay_capture_records_samples_and_draws_the_curve(live_server, demo, page):
    from checklists.models import CheckSheet
    from compliance.demo import scenario_path

    job = demo
    base = live_server.url
    # The default checklist's schedule, its numbers from the site's profile.
    profile = job.site.profile
    interval = profile.threshold("decay_interval_s")
    count = max(3, math.ceil(profile.threshold("decay_min_duration_s") / interval) + 1)
    passing = json.loads(scenario_path().read_text(encoding="utf-8"))["readings"]["vacuum-hold"]
    gauge = [v for _, v in passing["decay_series"]][:count]
    assert len(gauge) == count and interval > 10

    page.clock.install()
    sign_in_as(page, base, "tomas")
    page.goto(base + f"/#/job/{job.id}")
    page.wait_for_selector("[data-testid=requirements]")
    page.click("[data-testid^='req-vacuum-hold']")
    page.wait_for_selector("[data-testid=item-decay_series] [data-testid=series-plan]")
    for button in page.query_selector_all("[data-testid^=tick-][data-testid$='-pass']"):
        button.click()
    for field in page.query_selector_all("[data-testid^=reading-]"):
        key = field.get_attribute("data-testid").removeprefix("reading-")
        field.fill(f"{passing[key]:g}")
    page.keyboard.press("Tab")  # the last reading is judged once its field is left
    # The wind and hold-margin calculations run on the phone (the site's terrain is known).
    for key in ("wind_load", "hold_margin"):
        verdict = page.inner_text(f"[data-testid=verdict-{key}]")
        assert "Server decides" not in verdict and "Pass" in verdict, verdict

    # From here on the page's time moves only when the test moves it.
    now = dt.datetime.fromtimestamp(page.evaluate("Date.now()") / 1000 + 1, tz=dt.UTC)
    page.clock.pause_at(now)
    page.click("[data-testid=series-start]")
    page.wait_for_selector("[data-testid=item-decay_series] .prompt-due")
    for n, value in enumerate(gauge):
        if n:
            page.clock.run_for(int(interval - 10) * 1000)
            page.wait_for_selector(
                "[data-testid=item-decay_series] .prompt:has-text('Next reading in 10 s')"
            )
            page.clock.run_for(10000)
            page.wait_for_selector("[data-testid=item-decay_series] .prompt-due")
            assert f"({interval * n:g} s)" in page.inner_text(
                "[data-testid=item-decay_series] .prompt"
            )
        page.fill("[data-testid=series-value]", f"{value:g}")
        page.click("[data-testid=series-add]")
        page.wait_for_selector(f"[data-testid=item-decay_series] .samples li:nth-child({n + 1})")
        if n == 1:
            page.wait_for_selector("[data-testid=item-decay_series] svg.curve")

    samples = page.inner_text("[data-testid=item-decay_series] .samples")
    assert f"0 s: {gauge[0]:g} kPa" in samples
    assert f"{interval * (count - 1):g} s: {gauge[-1]:g} kPa" in samples
    curve = page.locator("[data-testid=item-decay_series] svg.curve")
    assert curve.get_attribute("aria-label") == f"Curve of {count} readings"
    assert curve.locator("circle").count() == count
    assert page.get_attribute("[data-testid=item-decay_series]", "data-verdict") == "recorded"
    assert page.get_attribute("[data-testid=item-decay_test]", "data-verdict") in ("pass", "fail")
    page.click("[data-testid=series-stop]")
    page.locator("[data-testid=item-decay_series]").scroll_into_view_if_needed()
    shot(page, "series.png")

    page.clock.resume()
    page.click("[data-testid=save]")
    page.wait_for_selector("[data-testid=requirements]")
    page.wait_for_selector("[data-testid=strip-waiting][data-count='0']")
    entry = CheckSheet.objects.get(job=job).entries.get(item_key="decay_series")
    assert entry.value == [[interval * n, v] for n, v in enumerate(gauge)]


def test_a_timed_test_in_progress_resumes_after_a_reload(live_server, demo, page):
    job = demo
    base = live_server.url
    sign_in_as(page, base, "tomas")
    page.goto(base + f"/#/job/{job.id}")
    page.wait_for_selector("[data-testid=requirements]")
    page.click("[data-testid^='req-vacuum-hold']")
    page.wait_for_selector("[data-testid=item-decay_series] [data-testid=series-plan]")
    page.click("[data-testid=series-start]")
    page.fill("[data-testid=series-value]", "62")
    page.click("[data-testid=series-add]")
    page.wait_for_selector("[data-testid=item-decay_series] .samples li")
    taken = page.inner_text("[data-testid=item-decay_series] .samples li")
    assert re.fullmatch(r"\d+(\.\d)? s: 62 kPa", taken), taken
    wait_draft_kept(page)
    page.reload()
    page.wait_for_selector("[data-testid=draft-restored]")
    assert page.inner_text("[data-testid=item-decay_series] .samples li") == taken
    prompt = page.inner_text("[data-testid=item-decay_series] .prompt")
    # The timer kept running through the reload: the next reading is still counted from Start.
    assert "Next reading in" in prompt, prompt
    assert page.query_selector("[data-testid=series-add]:disabled") is not None


def test_a_lapsed_session_keeps_the_records_and_resumes_after_sign_in(
    live_server, demo, context, page
):
    from django.contrib.sessions.models import Session

    from checklists.models import CheckSheet

    job = demo
    base = live_server.url
    sign_in_as(page, base, "tomas")
    page.goto(base + f"/#/job/{job.id}")
    page.wait_for_selector("[data-testid=requirements]")

    context.set_offline(True)
    page.wait_for_selector("[data-testid=strip-online]:has-text('Offline')")
    page.goto(base + f"/#/job/{job.id}/sheet/rescue-comms@site")
    page.wait_for_selector("[data-testid=items]")
    for button in page.query_selector_all("[data-testid$='-pass']"):
        button.click()
    page.click("[data-testid=save]")
    page.wait_for_selector("[data-testid=requirements]")
    page.wait_for_selector("[data-testid=strip-waiting][data-count='1']")

    # The session ends on the server while the phone is without signal.
    Session.objects.all().delete()
    context.set_offline(False)
    page.wait_for_selector("[data-testid=session-ended]")
    assert "1 record is kept on this phone" in page.inner_text("[data-testid=session-ended]")
    assert page.input_value("input[name=username]") == "tomas"
    page.wait_for_selector("[data-testid=strip-signed-out]")
    assert page.get_attribute("[data-testid=strip-waiting]", "data-count") == "1"
    assert CheckSheet.objects.filter(job=job).count() == 0
    shot(page, "session-ended.png")

    page.fill("input[name=password]", PASSWORD)
    page.click("button[type=submit]")
    # Back on the same screen, and the record goes.
    page.wait_for_selector("[data-testid=requirements]")
    page.wait_for_selector("[data-testid=strip-waiting][data-count='0']")
    page.wait_for_selector("[data-testid='req-rescue-comms@site']:has-text('Done')")
    assert page.query_selector("[data-testid=strip-signed-out]") is None
    assert CheckSheet.objects.filter(job=job).count() == 1

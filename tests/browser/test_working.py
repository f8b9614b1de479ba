"""The phone's verdicts and working as a person reads them.

"Show the working" names each output with its unit ("Speed at height: 6.53 m/s"), where it
listed raw keys ("speed at height ms: 6.53", "measured gust at height ms: null"). A pass shows
the caution triangle only on an item whose checklist names a caution band (the wind carried to
height), never on an anchor rated a little over its minimum: its rating already holds the
standard's factor.
"""

import re

import pytest

from tests.browser.conftest import sign_in_as

pytestmark = pytest.mark.browser


def requirement_keys(job) -> dict[str, str]:
    from compliance.jobs.selectors import job_requirements

    keys: dict[str, str] = {}
    for req in job_requirements(job):
        keys.setdefault(req.checklist_key, req.key)
    return keys


def open_sheet(page, base: str, job, req_key: str) -> None:
    page.goto(base + f"/#/job/{job.id}/sheet/{req_key}")
    page.wait_for_selector("[data-testid=items]")


def enter(page, key: str, text: str) -> None:
    field = page.locator(f"[data-testid=reading-{key}]")
    field.click()
    field.fill(text)
    page.keyboard.press("Tab")


def sign_of(page, key: str) -> tuple[str | None, str]:
    badge = page.locator(f"[data-testid=verdict-{key}] .badge")
    return badge.get_attribute("data-sign"), badge.inner_text().strip()


def test_show_the_working_names_quantities_with_units(live_server, demo, page):
    job = demo
    base = live_server.url
    weather = requirement_keys(job)["weather"]
    sign_in_as(page, base, "tomas")
    open_sheet(page, base, job, weather)
    enter(page, "forecast_10m", "3")  # the demo's forecast: 6.2 m/s at the 118 m roof, limit 14
    item = page.locator("[data-testid=item-forecast_at_height]")
    page.wait_for_selector("[data-testid=item-forecast_at_height][data-verdict=pass]")
    item.get_by_role("button", name="Show the working").click()
    lines = [t.strip() for t in item.locator(".working ul li").all_inner_texts()]
    assert "Speed at height: 6.22 m/s" in lines
    assert "Gust at height: 9.76 m/s" in lines
    assert "Beaufort number: 4" in lines
    assert all(re.fullmatch(r"[A-Z][^:_]*: \S.*", line) for line in lines), lines
    shown = item.locator(".working ul").inner_text()
    assert not re.search(r"\bnull\b", shown), shown
    assert "_" not in shown, shown
    # A measured gust was not given: its output is null on the phone and is left out.
    assert not any(line.startswith("Measured gust") for line in lines), lines


def test_a_caution_shows_only_where_the_item_names_a_band(live_server, demo, page):
    job = demo
    base = live_server.url
    keys = requirement_keys(job)
    sign_in_as(page, base, "tomas")

    # Anchor: 25 kN on the tag against the profile's 22.2 kN minimum, margin 12.6 %.
    open_sheet(page, base, job, keys["anchor-pre-use"])
    enter(page, "tag_capacity", "25")
    page.wait_for_selector("[data-testid=item-tag_capacity][data-verdict=pass]")
    assert sign_of(page, "tag_capacity") == ("safe", "Pass")

    # Wind: a 3.8 m/s forecast is about 12 m/s at the roof against 14 m/s, margin about 9 %.
    open_sheet(page, base, job, keys["weather"])
    enter(page, "forecast_10m", "3.8")
    page.wait_for_selector("[data-testid=item-forecast_at_height][data-verdict=pass]")
    assert sign_of(page, "forecast_at_height") == ("caution", "Pass, within 20 % of the limit")
    reason = page.locator("[data-testid=caution-forecast_at_height]").inner_text()
    assert reason.startswith("A wind result passes but within 20 % of its limit:")
    # The same item far from its limit is a plain pass.
    enter(page, "forecast_10m", "3")
    page.wait_for_selector("[data-testid=verdict-forecast_at_height] [data-sign=safe]")
    assert sign_of(page, "forecast_at_height") == ("safe", "Pass")
    assert page.locator("[data-testid=caution-forecast_at_height]").count() == 0

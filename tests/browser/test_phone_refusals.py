"""What a person does on the phone and at the desk, against what the server will take: a drop is
logged once with the words the operator chose, a check kept on the phone is named when it is
reopened, actions the server would refuse are not offered, a refusal can be dismissed, equipment
out of service is shown with its reason before anyone reaches the roof, and the sign page counts
the day's stop-work holds even once they are cleared."""

import pytest

from tests.browser.conftest import (
    DESK,
    fail_anchor_check,
    fill_passing_except,
    off_loop,
    sign_in_as,
)

pytestmark = pytest.mark.browser


def wait_state(page, state: str) -> None:
    page.wait_for_selector(f".state-card [data-state='{state}']", timeout=20000)


def wait_waiting(page, count: int) -> None:
    page.wait_for_selector(f"[data-testid=strip-waiting][data-count='{count}']")


def two_taps(page, selector: str, gap_ms: int = 150) -> None:
    """Two taps on the same button `gap_ms` apart, as a gloved double tap lands."""
    page.eval_on_selector(
        selector,
        "async (el, gap) => { el.click(); await new Promise((r) => setTimeout(r, gap));"
        " el.click(); }",
        gap_ms,
    )


def anchor_r1_key(job) -> str:
    from compliance.models import Anchor

    return f"anchor-pre-use@anchor:{Anchor.objects.get(site=job.site, label='R1').pk}"


def test_a_drop_is_logged_once_with_the_words_the_operator_chose(live_server, demo, context, page):
    from compliance.jobs import services
    from compliance.models import DropLog, Job

    job = demo
    off_loop(fill_passing_except, job, set())
    base = live_server.url
    sign_in_as(page, base, "tomas")
    page.goto(base + f"/#/job/{job.id}")
    wait_state(page, "cleared")
    page.click("[data-testid=start]")
    wait_state(page, "working")

    north1 = ".drop:has-text('North 1')"
    page.click(f"{north1} button:has-text('Log drop done')")
    two_taps(page, f"{north1} [data-testid=drop-whole]")
    page.wait_for_selector(f"{north1} :text('Logged done')")
    wait_waiting(page, 0)
    page.wait_for_timeout(500)
    logs = list(
        DropLog.objects.filter(drop__job=job, drop__label="North 1").values_list("note", flat=True)
    )
    assert logs == ["Whole drop done."]

    # Part of a drop: the note is what was typed, after the choice; nothing is sent without it.
    north2 = ".drop:has-text('North 2')"
    page.click(f"{north2} button:has-text('Log drop done')")
    page.click(f"{north2} [data-testid=drop-part]")
    page.click(f"{north2} [data-testid=drop-part-send]")
    assert "Say which part" in page.inner_text(north2)
    page.fill(f"{north2} [data-testid=drop-part-note]", "Top half, down to level 20")
    page.click(f"{north2} [data-testid=drop-part-send]")
    wait_waiting(page, 0)
    page.wait_for_timeout(300)
    notes = list(
        DropLog.objects.filter(drop__job=job, drop__label="North 2").values_list("note", flat=True)
    )
    assert notes == ["Part of the drop: Top half, down to level 20"]

    # A refusal (logged offline after the supervisor paused the job) can be dismissed. The
    # first log of North 1 was moments ago: a tap within a few seconds of it is not taken.
    page.wait_for_timeout(4500)
    context.set_offline(True)
    off_loop(lambda: services.pause_job(job=Job.objects.get(pk=job.pk), by=job.supervisor))
    # Some seconds later: the phone gives whole seconds, so a drop within a second or two of a
    # pause may count as done before it.
    page.wait_for_timeout(3000)
    page.click(f"{north1} button:has-text('Log drop done')")
    page.click(f"{north1} [data-testid=drop-whole]")
    wait_waiting(page, 1)
    context.set_offline(False)
    page.wait_for_selector("[data-testid=rejected]")
    page.wait_for_selector("[data-testid=strip-rejected]")
    page.click("[data-testid=rejected] [data-testid=dismiss-refusal]")
    page.wait_for_selector("[data-testid=rejected]", state="detached")
    page.wait_for_selector("[data-testid=strip-rejected]", state="detached")
    page.reload()
    wait_state(page, "cleared")
    assert page.locator("[data-testid=rejected]").count() == 0


def test_a_check_saved_on_the_phone_is_named_when_reopened(live_server, demo, context, page):
    job = demo
    key = off_loop(anchor_r1_key, job)
    base = live_server.url
    sign_in_as(page, base, "tomas")
    context.set_offline(True)
    page.goto(base + f"/#/job/{job.id}/sheet/{key}")
    page.wait_for_selector("[data-testid=items]")
    assert page.locator("[data-testid=sheet-waiting]").count() == 0
    for item in ("tag_matches_register", "visual_condition", "fixings_tight", "membrane_sound"):
        page.click(f"[data-testid=tick-{item}-pass]")
    page.fill("[data-testid=reading-tag_capacity]", "25")
    page.click("[data-testid=save]")
    wait_waiting(page, 1)
    page.goto(base + f"/#/job/{job.id}/sheet/{key}")
    page.wait_for_selector("[data-testid=items]")
    words = page.inner_text("[data-testid=sheet-waiting]")
    assert words.startswith("Saved on this phone at ")
    assert "waiting to send; what you fill in here is a new check" in words


def test_the_phone_does_not_offer_what_the_server_refuses(live_server, demo, page):
    from compliance.models import Job

    job = demo
    later = (
        Job.objects.filter(organisation=job.organisation, date__gt=job.date)
        .order_by("date")
        .first()
    )
    assert later is not None
    base = live_server.url
    sign_in_as(page, base, "tomas")

    # An operator cannot close a job before any work: no Close is offered.
    page.goto(base + f"/#/job/{job.id}")
    wait_state(page, "planned")
    page.wait_for_selector("[data-testid=start]")
    assert page.locator("[data-testid=close]").count() == 0

    # A later day's checks are shown, read only, with the day they open.
    page.goto(base + f"/#/job/{later.id}")
    page.wait_for_selector("[data-testid=job-opens]")
    opens = f"Opens on {later.date.isoformat()}"
    assert opens in page.inner_text("[data-testid=requirements]")
    first = page.locator("[data-testid=requirements] a").first
    first.click()
    page.wait_for_selector("[data-testid=items]")
    assert opens in page.inner_text("[data-testid=sheet-opens]")
    assert page.locator("[data-testid=save]").count() == 0


def test_the_supervisor_may_still_close_a_job_before_work(live_server, demo, page):
    job = demo
    base = live_server.url
    sign_in_as(page, base, "rhea")
    page.goto(base + f"/#/job/{job.id}")
    wait_state(page, "planned")
    page.wait_for_selector("[data-testid=close]")


def take_robot_out(job) -> str:
    from compliance.models import User
    from compliance.registers.services import update_equipment

    drop = job.drops.order_by("id").first()
    rhea = User.objects.get(username="rhea")
    update_equipment(item=drop.robot, by=rhea, reason="Vacuum pump fault.", in_service=False)
    return drop.robot.label


def test_the_phone_job_says_it_will_be_refused_for_equipment_out_of_service(
    live_server, demo, page
):
    job = demo
    label = off_loop(take_robot_out, job)
    base = live_server.url
    sign_in_as(page, base, "tomas")
    page.goto(base + f"/#/job/{job.id}")
    page.wait_for_selector("[data-testid=blockers]")
    blockers = page.inner_text("[data-testid=blockers]")
    assert f"{label} is out of service" in blockers
    assert "Vacuum pump fault." in blockers


def test_the_desk_shows_why_equipment_is_out_and_which_jobs_it_stops(live_server, demo, page):
    from django.utils import timezone

    job = demo
    label = off_loop(take_robot_out, job)
    today = timezone.localdate().isoformat()
    base = live_server.url
    sign_in_as(page, base, "rhea")
    page.set_viewport_size(DESK)
    page.goto(base + "/#/desk/equipment")
    card = page.locator(f"[data-testid=item-{label}]")
    card.wait_for()
    why = card.locator("[data-testid=item-out-why]").inner_text()
    assert "Vacuum pump fault." in why and today in why

    page.goto(base + "/#/desk/jobs")
    row = page.locator(f"[data-testid=desk-job-{job.id}] [data-testid=job-blockers]")
    row.wait_for()
    assert f"{label} is out of service" in row.inner_text()

    page.goto(base + f"/#/desk/plan/{job.id}")
    plan = page.locator("[data-testid=job-blockers]")
    plan.wait_for()
    assert f"{label} is out of service" in plan.inner_text()


def hold_then_clear_then_close(job) -> None:
    from compliance.jobs import services
    from compliance.models import Job

    fail_anchor_check(job)
    fill_passing_except(job, set())
    job = Job.objects.get(pk=job.pk)
    assert job.state == "cleared"
    services.close_job(job=job, by=job.supervisor, reason="Wind rising; no work today.")


def test_the_sign_page_counts_the_days_stop_work_holds(live_server, demo, page):
    job = demo
    off_loop(hold_then_clear_then_close, job)
    base = live_server.url
    sign_in_as(page, base, "rhea")
    page.goto(base + f"/#/job/{job.id}/sign")
    page.wait_for_selector("[data-testid=sign-day]")
    assert page.locator("[data-testid=sign-no-holds]").count() == 0
    day = page.inner_text("[data-testid=sign-holds-day]")
    assert "Stop work 1 time this day" in day
    assert "opened" in day and "cleared" in day


def test_a_refused_start_is_shown_beside_the_button_and_announced(live_server, demo, page):
    """Start work tapped at the foot of the job screen was refused with its reasons some 3000 px
    above, out of view and not announced: nothing seemed to happen."""
    base = live_server.url
    sign_in_as(page, base, "tomas")
    page.goto(base + f"/#/job/{demo.id}")
    wait_state(page, "planned")
    page.evaluate("window.scrollTo(0, document.body.scrollHeight)")
    page.click("[data-testid=start]")
    refused = page.wait_for_selector("[role=alert][data-testid=bar-refused]")
    assert "cannot start" in refused.inner_text()
    assert len(refused.query_selector_all("[data-testid=start-reasons] li")) > 1
    page.wait_for_function(
        "() => document.activeElement?.dataset.testid === 'bar-refused'", timeout=3000
    )
    # Its heading is in view, above the bar with the button.
    top, bar = page.evaluate(
        """() => [document.querySelector('[data-testid=bar-refused]').getBoundingClientRect().top,
                  document.querySelector('.bottom-bar').getBoundingClientRect().top]"""
    )
    assert 0 <= top < bar - 40, (top, bar)


SMALLEST_TEXT_PX = 16
"""The phone's smallest text: read at arm's length on a roof, in sun, with gloves on (common
practice, no source; 16 CSS px is the browsers' default body size)."""

SMALLEST_TEXT = """() => {
  const sizes = [];
  const walk = document.createTreeWalker(document.body, NodeFilter.SHOW_TEXT);
  for (let node = walk.nextNode(); node; node = walk.nextNode()) {
    const el = node.parentElement;
    if (!node.textContent.trim() || !el || !el.getClientRects().length) continue;
    if (getComputedStyle(el).visibility === "hidden") continue;
    sizes.push([parseFloat(getComputedStyle(el).fontSize), node.textContent.trim().slice(0, 40)]);
  }
  sizes.sort((a, b) => a[0] - b[0]);
  return sizes[0];
}"""


def test_no_text_on_the_job_and_sheet_screens_is_smaller_than_the_body(live_server, demo, page):
    """The reasons, the read-again time and the strip were set at 14.7 px (0.92 rem), small at
    arm's length with gloves; a sheet's "Blocking" tag at 12.8 px."""
    base = live_server.url
    off_loop(fail_anchor_check, demo)
    sign_in_as(page, base, "tomas")
    page.goto(base + f"/#/job/{demo.id}")
    wait_state(page, "held")
    size, words = page.evaluate(SMALLEST_TEXT)
    assert size >= SMALLEST_TEXT_PX, words
    page.goto(base + f"/#/job/{demo.id}/sheet/{off_loop(anchor_r1_key, demo)}")
    page.wait_for_selector("[data-testid=items]")
    size, words = page.evaluate(SMALLEST_TEXT)
    assert size >= SMALLEST_TEXT_PX, words

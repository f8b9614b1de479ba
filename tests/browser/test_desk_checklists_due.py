"""The desk's checklist versions and due dates at 1280 x 800: a supervisor compares two versions
of the organisation's own checklist and reads the changes in words, publishes the draft after
the confirmation, reads what falls due (overdue first, each state in words and shape), and
makes, uses and stops a calendar feed. Every write is checked in the database, every screen is
run through axe-core with no violation allowed."""

import datetime as dt
import json
import re
from pathlib import Path

import pytest
from django.conf import settings

from tests.browser.conftest import DESK, off_loop
from tests.browser.test_desk_screens import axe_clean, day, desk_shot, open_desk, sign_in

pytestmark = pytest.mark.browser

MANAGER = json.loads(
    (Path(settings.BASE_DIR) / "fixtures" / "demo" / "scenario.json").read_text(encoding="utf-8")
)["owner"]["username"]
OWN_TITLE = "Suspension tether pre-use check, Brightwater rules"


def tether_versions() -> tuple[int, int]:
    """The organisation's own tether check: version 1 published (a lax first edition: it keeps
    the default's blocking items, as an own checklist must, and adds two of its own, neither
    blocking), version 2 a draft that adds a tag check, drops the sheath colour, and tightens
    four items."""
    from checklists.models import Checklist
    from checklists.services import create_checklist, create_draft, publish_version
    from compliance.models import User

    rhea = User.objects.get(username="rhea")
    default = Checklist.objects.get(key="tether-pre-use", organisation=None)
    base = default.versions.filter(status="published").order_by("-number").first().items
    pads = {
        "key": "edge_pads_logged",
        "kind": "tick",
        "label": "Edge pads logged in the rigging plan",
        "reason": "A pad missing from the plan is a pad nobody checks at the next drop.",
        "blocking": False,
    }
    first = []
    for item in base:
        first += [dict(item), dict(pads)] if item["key"] == "edge_protection" else [dict(item)]
    first.append(
        {
            "key": "sheath_colour",
            "kind": "tick",
            "label": "Sheath colour code matches this year's inspection colour",
            "reason": "The colour shows at a glance that the yearly inspection was done.",
            "blocking": False,
        }
    )
    second = []
    for item in base:
        item = dict(item)
        if item["key"] == "edge_protection":
            second += [item, dict(pads, blocking=True)]
            continue
        if item["key"] == "robot_payload":
            item["limits"] = {"max": {"value": 25}}
        elif item["key"] == "length_needed":
            item["limits"] = {"min": {"drop": "height_m"}, "max": {"equipment": "length_m"}}
        elif item["key"] == "tether_remarks":
            item["label"] = "Remarks for the next crew"
        second.append(item)
    second.insert(
        0,
        {
            "key": "tag_legible",
            "kind": "tick",
            "label": "Tether tag legible and matching the register",
            "reason": "An unreadable tag means the line's history cannot be checked.",
            "blocking": True,
        },
    )
    checklist = create_checklist(
        by=rhea, key="tether-pre-use", title=OWN_TITLE, applies_to="tether"
    )
    one = publish_version(version=create_draft(checklist=checklist, items=first, by=rhea), by=rhea)
    two = create_draft(checklist=checklist, items=second, by=rhea, notes="After the audit.")
    return one.pk, two.pk


def test_supervisor_compares_two_versions_in_words_and_publishes_the_draft(live_server, demo, page):
    from checklists.models import ChecklistVersion
    from compliance.models import User

    one_id, two_id = off_loop(tether_versions)
    base = live_server.url
    open_desk(page, base)
    page.click("nav a[href='#/desk/checklists']")
    own = page.locator("[data-testid=checklist-tether-pre-use]")
    own.wait_for()
    axe_clean(page, "checklist versions")
    desk_shot(page, "desk-checklists.png")

    # The organisation's own checklist comes first, its versions in order with state and date.
    assert page.locator("main section h2").first.inner_text() == OWN_TITLE
    v1, v2 = own.locator("[data-testid=version-1]"), own.locator("[data-testid=version-2]")
    assert v1.get_attribute("data-status") == "published"
    assert v1.locator("[data-testid=version-state]").get_attribute("data-sign") == "safe"
    assert v1.locator("[data-testid=version-state]").inner_text() == "Published"
    published_at = ChecklistVersion.objects.get(pk=one_id).published_at
    shown = v1.locator("[data-testid=version-published]").inner_text()
    assert re.fullmatch(r"\d{1,2} [A-Z][a-z]{2,3} \d{4}, \d{2}:\d{2}", shown), shown
    assert str(published_at.year) in shown
    assert "In use for new pre-start checks" in v1.inner_text()
    assert v2.get_attribute("data-status") == "draft"
    assert v2.locator("[data-testid=version-state]").get_attribute("data-sign") == "mustdo"
    assert v2.locator("[data-testid=version-published]").inner_text() == "Not published"
    # Parapet's default of the same key is still listed, and says it is replaced.
    default = page.locator("[data-testid=checklist-tether-pre-use-default]")
    assert "Replaced by your organisation's own checklist" in default.inner_text()
    assert default.locator("[data-testid=publish]").count() == 0

    # Version 1 against version 2, the default choice: the changes in words, no JSON.
    assert own.locator("select").nth(0).input_value() == str(one_id)
    assert own.locator("select").nth(1).input_value() == str(two_id)
    own.locator("[data-testid=compare-submit]").click()
    diff = own.locator("[data-testid=version-diff]")
    diff.wait_for()
    assert diff.locator("h3").inner_text() == (f"{OWN_TITLE}: changes from version 1 to version 2")
    # The heading takes the focus after the view is painted (an effect): on a busy machine
    # that is a frame after the text is there, so wait for it rather than read it at once.
    page.wait_for_function("() => document.activeElement.tagName === 'H3'", timeout=5000)
    assert diff.locator("[data-testid=diff-summary]").inner_text() == (
        "1 added, 1 removed, 4 changed, 6 unchanged."
    )
    added = diff.locator("[data-testid=added-tag_legible]").inner_text()
    assert "Tether tag legible and matching the register" in added
    assert "A tick: pass, fail or not applicable" in added
    assert "Blocking: a fail puts the job on hold (stop work)" in added
    removed = diff.locator("[data-testid=removed-sheath_colour]").inner_text()
    assert "Sheath colour code matches this year's inspection colour" in removed
    assert "Not blocking: a fail is recorded, work is not stopped" in removed
    changed = diff.locator("[data-testid=diff-changed] > li")
    assert [changed.nth(i).get_attribute("data-key") for i in range(changed.count())] == [
        "edge_pads_logged",
        "length_needed",
        "robot_payload",
        "tether_remarks",
    ]
    assert (
        "Now blocking: a fail puts the job on hold (stop work)."
        in diff.locator("[data-testid=changed-edge_pads_logged]").inner_text()
    )
    assert (
        "Lowest accepted value: was none, now the drop's height_m."
        in diff.locator("[data-testid=changed-length_needed]").inner_text()
    )
    assert (
        "Highest accepted value: was none, now 25 kg, fixed in the checklist."
        in diff.locator("[data-testid=changed-robot_payload]").inner_text()
    )
    remarks = diff.locator("[data-testid=changed-tether_remarks]")
    assert remarks.locator(".card-title").inner_text() == "Remarks for the next crew"
    assert "Label: was “Remarks”, now “Remarks for the next crew”." in remarks.inner_text()
    assert not re.search(r"[{}\[\]]", diff.inner_text())
    axe_clean(page, "two checklist versions compared")
    page.emulate_media(color_scheme="dark")
    axe_clean(page, "two checklist versions compared, dark theme")
    page.emulate_media(color_scheme="light")
    desk_shot(page, "desk-checklist-diff.png", top="[data-testid=checklist-tether-pre-use] h2")

    # The same version on both sides is refused on the page, before any request.
    own.locator("select").nth(0).select_option(str(two_id))
    own.locator("[data-testid=compare-submit]").click()
    assert own.locator("[data-testid=compare-error]").inner_text() == (
        "Choose two different versions to compare."
    )
    assert own.locator("[data-testid=version-diff]").count() == 0

    # Publishing asks first and says a published version never changes; "keep it" keeps it.
    v2.locator("[data-testid=publish]").click()
    confirm = own.locator("[data-testid=publish-confirm]")
    assert "A published version never changes." in confirm.inner_text()
    # The question sits under the table, not squeezed into the version's row.
    assert own.locator("table [data-testid=publish-confirm]").count() == 0
    assert confirm.locator("h3").inner_text() == f"Publish version 2 of {OWN_TITLE}?"
    axe_clean(page, "publishing a checklist version, asked to confirm")
    page.wait_for_function(
        f"() => document.activeElement.id === 'publish-head-{two_id}'", timeout=5000
    )
    confirm.locator("[data-testid=publish-no]").click()
    assert own.locator("[data-testid=publish-confirm]").count() == 0
    assert ChecklistVersion.objects.get(pk=two_id).status == "draft"

    v2.locator("[data-testid=publish]").click()
    confirm.locator("[data-testid=publish-yes]").click()
    page.wait_for_selector("[data-testid=publish-done]")
    assert page.inner_text("[data-testid=publish-done]") == (
        f"Version 2 of {OWN_TITLE} is published. It never changes from now on."
    )
    two = ChecklistVersion.objects.get(pk=two_id)
    assert (two.status, two.published_by, len(two.content_hash)) == (
        "published",
        User.objects.get(username="rhea"),
        64,
    )
    assert v2.get_attribute("data-status") == "published"
    assert v2.locator("[data-testid=publish]").count() == 0
    assert "In use for new pre-start checks" in v2.inner_text()
    assert "Earlier version" in v1.inner_text()


def due_rows(job) -> tuple[int, int]:
    """The demo's own: R7's certificate runs out in 25 days, and the day three days ago was
    worked and closed but never signed. (R8's certificate ran out 55 days ago.)"""
    from compliance.models import AnchorCertification, Job

    cert = AnchorCertification.objects.get(anchor__site=job.site, anchor__label="R7")
    assert cert.valid_until == day(25)
    past = Job.objects.get(site=job.site, date=day(-3))
    assert past.state == "closed" and not past.daily_records.exists()
    return cert.pk, past.pk


def summaries(body: bytes) -> list[str]:
    from icalendar import Calendar

    return [str(e["summary"]) for e in Calendar.from_ical(body).walk("VEVENT")]


def test_due_list_and_the_calendar_feed_made_used_and_stopped(live_server, demo, page, context):
    from compliance.models import AnchorCertification, CalendarFeed, User

    cert_id, past_id = off_loop(due_rows, demo)
    r8 = AnchorCertification.objects.get(anchor__label="R8")
    context.grant_permissions(["clipboard-read", "clipboard-write"], origin=live_server.url)
    base = live_server.url
    open_desk(page, base)
    page.click("nav a[href='#/desk/due']")
    page.wait_for_selector("[data-testid=due-list]")

    # Overdue first, then by date; each state in words beside its ISO 3864-1 shape.
    rows = page.locator("[data-testid=due-list] tbody tr")
    seen = [
        (
            rows.nth(i).get_attribute("data-testid"),
            rows.nth(i).get_attribute("data-date"),
            rows.nth(i).get_attribute("data-sign"),
            rows.nth(i).locator("[data-testid=due-state]").inner_text(),
        )
        for i in range(rows.count())
    ]
    assert seen == [
        (
            f"due-anchor-cert-{r8.pk}@parapet",
            r8.valid_until.isoformat(),
            "held",
            "Overdue by 55 days",
        ),
        (f"due-unsigned-day-{past_id}@parapet", day(-3).isoformat(), "held", "Overdue by 3 days"),
        (f"due-anchor-cert-{cert_id}@parapet", day(25).isoformat(), "caution", "Due in 25 days"),
    ]
    unsigned = rows.nth(1)
    assert "Daily record of the day not signed" in unsigned.inner_text()
    assert f"Larkfield Tower on {day(-3).isoformat()}" in unsigned.inner_text()
    assert unsigned.locator("[data-testid=sign-link]").get_attribute("href") == (
        f"#/job/{past_id}/sign"
    )
    soon = rows.nth(2)
    assert "Anchor certificate runs out" in soon.inner_text()
    assert soon.locator("th").inner_text() == "Anchor R7 at Larkfield Tower"
    assert soon.locator("[data-sign=caution] svg path").count() == 1  # the triangle
    assert rows.nth(0).locator("[data-sign=held] svg circle").count() == 1  # the circle
    assert page.inner_text("[data-testid=due-summary]").endswith("3 due, 2 of them overdue.")
    # Each state reads on one line beside its sign (the sign is 28 px high).
    for i in range(rows.count()):
        box = rows.nth(i).locator("[data-testid=due-state]").bounding_box()
        assert box and box["height"] <= 32, seen[i]
    axe_clean(page, "the due dates")
    desk_shot(page, "desk-due.png")
    page.emulate_media(color_scheme="dark")
    axe_clean(page, "the due dates in the dark theme")
    page.emulate_media(color_scheme="light")

    # The calendar feed: the warning first, then the address, shown once, with a copy button.
    feed = page.locator("[data-testid=calendar-feed]")
    assert "Anyone who has the address sees your organisation's due dates" in feed.inner_text()
    # The page asks whether an address exists (the server never gives it again).
    page.wait_for_selector("[data-testid=feed-state]")
    assert page.inner_text("[data-testid=feed-state]") == "You have no calendar address."
    assert page.locator("[data-testid=feed-revoke]").count() == 0
    page.click("[data-testid=feed-create]")
    page.wait_for_selector("[data-testid=feed-url]")
    page.wait_for_function(
        "() => document.querySelector('[data-testid=feed-state]').textContent.includes('made on')"
    )
    assert page.inner_text("[data-testid=feed-state]") == (
        f"You have a calendar address, made on {dt.date.today().isoformat()}."
    )
    url = page.input_value("[data-testid=feed-url]")
    assert re.fullmatch(re.escape(base) + r"/calendar/[A-Za-z0-9_-]{43}\.ics", url), url
    rhea = User.objects.get(username="rhea")
    live = CalendarFeed.objects.filter(user=rhea, revoked_at__isnull=True)
    assert live.count() == 1
    page.click("[data-testid=feed-copy]")
    assert page.inner_text("[data-testid=feed-copied]") == "Copied to the clipboard."
    assert page.evaluate("() => navigator.clipboard.readText()") == url
    axe_clean(page, "the calendar address shown")

    # Anyone with the address reads the dates: a calendar, with the due items' summaries.
    answer = page.request.get(url)
    assert answer.status == 200
    assert answer.headers["content-type"] == "text/calendar; charset=utf-8"
    events = summaries(answer.body())
    assert "Anchor R7 at Larkfield Tower: anchor certificate, due within 25 days" in events
    assert f"Larkfield Tower on {day(-3).isoformat()}: daily record not signed, overdue" in events

    # Stopped: the page says so, the address is gone from it, and the feed answers 404.
    page.click("[data-testid=feed-revoke]")
    page.wait_for_selector("[data-testid=feed-message]")
    assert page.inner_text("[data-testid=feed-message]") == (
        "Your calendar address is stopped: a calendar that uses it gets no more dates."
    )
    assert page.locator("[data-testid=feed-url]").count() == 0
    assert page.inner_text("[data-testid=feed-state]") == "You have no calendar address."
    assert page.locator("[data-testid=feed-revoke]").count() == 0
    assert live.count() == 0
    assert CalendarFeed.objects.filter(user=rhea, revoked_at__isnull=False).count() == 1
    assert page.request.get(url).status == 404
    axe_clean(page, "the calendar address stopped")


def test_property_manager_has_due_dates_but_not_checklist_versions(live_server, demo, page):
    base = live_server.url
    sign_in(page, base, MANAGER)
    page.wait_for_selector("[data-testid=desk-link]")
    page.set_viewport_size(DESK)
    page.click("[data-testid=desk-link]")
    page.wait_for_selector("[data-testid=desk-building]")
    nav = page.locator("nav[aria-label=Desk] a")
    names = [nav.nth(i).inner_text() for i in range(nav.count())]
    assert "Due dates" in names
    assert "Checklist versions" not in names
    # Asked for by address, checklist versions open the manager's first page instead.
    page.goto(base + "/#/desk/checklists")
    page.wait_for_selector("[data-testid=desk-building]")

    # The owner's due list: its anchors only (unsigned days are each contractor's own).
    page.click("nav a[href='#/desk/due']")
    page.wait_for_selector("[data-testid=due-list]")
    rows = page.locator("[data-testid=due-list] tbody tr")
    kinds = {rows.nth(i).get_attribute("data-kind") for i in range(rows.count())}
    assert kinds == {"anchor_certificate"}
    r8 = rows.first
    assert r8.locator("th").inner_text() == "Anchor R8 at Larkfield Tower"
    assert r8.locator("a").inner_text() == "Anchors and certificates"
    axe_clean(page, "the owner's due dates")


def test_due_window_is_chosen_on_the_page(live_server, demo, page):
    """Equipment inspections 90 days out show once the window reaches them, as must-do."""
    from compliance.models import Equipment

    base = live_server.url
    open_desk(page, base)
    page.goto(base + "/#/desk/due")
    page.wait_for_selector("[data-testid=due-list]")
    assert page.locator("[data-kind=equipment_inspection]").count() == 0
    page.select_option("#due-within", "90")
    page.wait_for_selector("[data-kind=equipment_inspection]")
    inspections = page.locator("[data-kind=equipment_inspection]")
    # Every piece of the demo's kit (three robots' sets and two stop buttons) falls due then.
    assert inspections.count() == Equipment.objects.count() == 14
    first = inspections.first
    assert first.get_attribute("data-sign") == "mustdo"
    assert first.locator("[data-testid=due-state]").inner_text() == "Due in 90 days"
    assert first.locator("a").inner_text() == "Equipment register"
    assert (dt.date.fromisoformat(first.get_attribute("data-date")) - day(0)).days == 90

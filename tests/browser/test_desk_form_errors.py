"""A desk form that refuses a submit says so where a screen reader hears it: a summary with
role="alert" at the form's top naming every field in error by its label, focus on the first
of them, and each such field marked aria-invalid and described by its own message. The same
for the page's own checks and for the server's 400 answers. Nothing is stored meanwhile."""

import pytest

from tests.browser.conftest import DESK, PASSWORD, TYPE_MS, axe_clean
from tests.browser.test_desk_owner import log_rows
from tests.browser.test_desk_owner import open_desk as open_owner_desk
from tests.browser.test_desk_screens import open_desk as open_supervisor_desk

pytestmark = pytest.mark.browser


def focused(page) -> str:
    return page.evaluate("() => document.activeElement && document.activeElement.id")


def description(page, field: str) -> str:
    """The text the field's aria-describedby points at (every id it names must exist)."""
    return page.evaluate(
        """(sel) => {
            const named = document.querySelector(sel).getAttribute('aria-describedby');
            const ids = (named || '').split(' ');
            return ids.filter(Boolean).map((id) => {
                const el = document.getElementById(id);
                if (!el) throw new Error('aria-describedby names a missing id: ' + id);
                return el.innerText;
            }).join(' | ');
        }""",
        field,
    )


def summary_fields(page, form: str) -> list[str]:
    """The field labels the form's alert names, in order (the links' words)."""
    return page.locator(f"{form} [role=alert] .desk-summary-fields a").all_inner_texts()


def assert_invalid(page, field: str, words: str) -> None:
    assert page.get_attribute(field, "aria-invalid") == "true", field
    assert words in description(page, field), field


@pytest.mark.django_db(transaction=True)
def test_owner_s_log_book_and_certificate_forms_name_every_field_in_error(page, live_server, demo):
    site = demo.site
    before = log_rows(site)
    open_owner_desk(page, live_server.url)
    page.click("nav.desk-nav a:has-text('Anchor log book')")
    form = "[data-testid=log-form]"
    page.wait_for_selector(f"{form} #log-anchor")
    assert page.get_attribute("#log-anchor", "aria-invalid") is None

    # Signed empty: one alert names the anchor, what was done and the password at once, and
    # focus goes to the first of them, the anchor, which says what it lacks.
    page.click("[data-testid=log-submit]")
    alert = page.locator(f"{form} [role=alert]")
    alert.wait_for()
    assert "Nothing was signed into the log book" in alert.inner_text()
    assert summary_fields(page, form) == ["Anchor", "What was done and found", "Your password"]
    assert focused(page) == "log-anchor"
    assert_invalid(page, "#log-anchor", "Choose the anchor.")
    assert_invalid(page, "#log-details", "Say what was done and found.")
    assert_invalid(page, "#log-password", "Re-enter your password to sign.")
    assert page.get_attribute("#log-kind", "aria-invalid") is None
    axe_clean(page, "the log book, signed empty")
    # The alert's link takes focus to its field.
    alert.locator("a:has-text('Your password')").click()
    assert focused(page) == "log-password"
    assert page.url.endswith("#/desk/log")

    # The server's 400 (a date before the log book could hold one) in the same way.
    spare = site.anchors.order_by("label").last()
    page.select_option("#log-anchor", str(spare.pk))
    page.fill("#log-details", "Visual check, all sound.")
    page.fill("#log-on", "1900-01-01")
    page.type("#log-password", PASSWORD, delay=TYPE_MS)
    page.click("[data-testid=log-submit]")
    page.wait_for_selector("[data-testid=error-log-performed_on]")
    assert summary_fields(page, form) == ["Done on"]
    page.wait_for_function("() => document.activeElement && document.activeElement.id === 'log-on'")
    assert_invalid(page, "#log-on", "1950")
    assert page.get_attribute("#log-anchor", "aria-invalid") is None
    assert log_rows(site) == before

    # The certificate form: every missing field at once, focus on the anchor.
    page.click("nav.desk-nav a:has-text('Anchors and certificates')")
    form = "[data-testid=cert-form]"
    page.wait_for_selector(f"{form} #cert-anchor")
    page.click("[data-testid=cert-submit]")
    page.locator(f"{form} [role=alert]").wait_for()
    assert "No certificate was recorded" in page.inner_text(f"{form} [role=alert]")
    assert summary_fields(page, form) == [
        "Anchor",
        "Certified by (the competent person)",
        "Rated capacity",
        "Valid until",
    ]
    assert focused(page) == "cert-anchor"
    assert_invalid(page, "#cert-anchor", "Choose the anchor.")
    assert_invalid(page, "#cert-certifier", "competent person")
    assert_invalid(page, "#cert-capacity", "rated capacity in kN")
    assert_invalid(page, "#cert-until", "Enter the date the certificate runs to.")
    axe_clean(page, "anchors and certificates, recorded empty")


@pytest.mark.django_db(transaction=True)
def test_equipment_form_shows_the_server_s_refusal_field_by_field(page, live_server, demo):
    from compliance.models import Equipment

    open_supervisor_desk(page, live_server.url)
    page.click("nav a[href='#/desk/equipment']")
    form = "[data-testid=add-equipment]"
    page.wait_for_selector(f"{form} [data-testid=ratings]")
    page.set_viewport_size(DESK)
    assert page.input_value("#add-kind") == "robot"
    required = page.locator(f"{form} [data-testid=ratings] input[required]").evaluate_all(
        "(els) => els.map((e) => e.id)"
    )
    assert len(required) >= 2

    # A robot with a label and no ratings: the server's 400 names each required rating; the
    # alert lists them all in the form's order and focus goes to the first.
    page.type("#add-label", "RB-9", delay=TYPE_MS)
    page.click("[data-testid=add-equipment-submit]")
    page.locator(f"{form} [role=alert]").wait_for()
    assert "Nothing was added to the register" in page.inner_text(f"{form} [role=alert]")
    named = page.locator(f"{form} [role=alert] .desk-summary-fields li").evaluate_all(
        "(els) => els.map((e) => e.dataset.field)"
    )
    # The server also refuses the ratings as a whole (none were given): listed first, atop them.
    assert named == ["ratings"] + [f"ratings.{r.removeprefix('rating-')}" for r in required]
    page.wait_for_function(
        f"() => document.activeElement && document.activeElement.id === {required[0]!r}"
    )
    for field in required:
        assert_invalid(page, f"#{field}", "Required")
    assert page.get_attribute("#add-label", "aria-invalid") is None
    assert not Equipment.objects.filter(label="RB-9").exists()
    axe_clean(page, "the equipment register, ratings refused")

    # A hose taken out with no reason: the page's own check, the same way.
    card = page.locator("[data-testid=item-H-2]")
    card.locator("[data-testid=item-change]").click()
    card.locator("[data-testid=item-take-out]").click()
    card.locator("[role=alert]").wait_for()
    reason = card.locator("input[id^=reason-]")
    assert card.locator("[role=alert] .desk-summary-fields a").all_inner_texts() == [
        "Reason for taking it out of service"
    ]
    assert focused(page) == reason.get_attribute("id")
    assert_invalid(page, f"#{reason.get_attribute('id')}", "Say why it comes out of service.")

"""Signing the day's record from the phone: the supervisor re-enters the password, picks what the
signature means and sees the seal; a wrong password signs nothing; operators get no sign action."""

import pytest

from tests.browser.conftest import (
    PASSWORD,
    fail_anchor_check,
    fill_passing_except,
    off_loop,
    shot,
    sign_in_as,
)

pytestmark = pytest.mark.browser


def close_day(job) -> None:
    """Every check passes, work starts and the supervisor closes it for the day."""
    from compliance.jobs import services
    from compliance.models import Job

    fill_passing_except(job, set())
    services.start_job(job=Job.objects.get(pk=job.pk), by=job.crew.get(username="tomas"))
    services.close_job(job=Job.objects.get(pk=job.pk), by=job.supervisor, reason="Day done.")


def test_supervisor_signs_a_closed_day_and_sees_the_seal(live_server, demo, context, page):
    from compliance.models import DailyRecord

    job = demo
    off_loop(close_day, job)
    base = live_server.url
    sign_in_as(page, base, "rhea")

    # A past demo day is already signed: its record shows instead of the form.
    past = DailyRecord.objects.filter(site=job.site, kind="record").order_by("-sequence").first()
    assert past is not None
    page.goto(base + f"/#/job/{past.job_id}")
    page.wait_for_selector("[data-testid=record-signed]")
    page.click("[data-testid=record-signed]")
    page.wait_for_selector("[data-testid=record]")
    assert page.get_attribute("[data-testid=seal]", "data-seal") == past.seal
    assert page.query_selector("[data-testid=sign-password]") is None

    # Today's closed job: sign it as safe.
    page.goto(base + f"/#/job/{job.id}")
    page.wait_for_selector("[data-testid=sign-card]")
    page.click("[data-testid=sign-action]")
    page.wait_for_selector("[data-testid=meanings]")
    assert page.query_selector("[data-testid=sign-no-holds]") is not None
    # What is signed is said, with the way to the day's checks (the page asked to confirm a
    # review with nothing of the day on it).
    summary = page.inner_text("[data-testid=sign-day]")
    assert "17 of 17 pre-start checks done and passing" in summary, summary
    assert page.get_attribute("[data-testid=sign-read-day]", "href") == f"#/job/{job.id}"
    password = page.locator("[data-testid=sign-password]")
    assert password.get_attribute("autocomplete") == "current-password"
    assert password.get_attribute("type") == "password"
    assert "competent person" in page.inner_text("[data-testid=statement]")
    assert "does not replace" in page.inner_text("[data-testid=caution-line]")
    for code in ("reviewed_safe", "reviewed_stopped", "reviewed_exceptions"):
        box = page.locator(f"[data-testid=meaning-{code}]").bounding_box()
        assert box and box["height"] >= 48 and box["width"] >= 300

    # Nothing chosen and no password: the phone says what is missing and sends nothing.
    page.click("[data-testid=sign-submit]")
    page.wait_for_selector("[data-testid=sign-error]:has-text('Choose what your signature means')")
    assert DailyRecord.objects.filter(job=job).count() == 0

    page.click("[data-testid=meaning-reviewed_safe]")
    page.wait_for_selector("[data-testid=meaning-reviewed_safe]:has-text('Chosen')")
    page.fill("[data-testid=sign-remarks]", "Routine day; checks complete before the first drop.")
    page.fill("[data-testid=sign-password]", PASSWORD)
    page.evaluate("window.scrollTo(0, 0)")
    shot(page, "sign-off.png")
    page.click("[data-testid=sign-submit]")

    page.wait_for_selector("[data-testid=record]")
    record = DailyRecord.objects.get(job=job, kind="record")
    assert record.signer.username == "rhea"
    assert record.meaning.startswith("Reviewed: the pre-start checks were complete")
    assert record.previous_seal == past.seal
    grouped = page.inner_text("[data-testid=seal]")
    assert grouped == " ".join(record.seal[i : i + 4] for i in range(0, 16, 4))
    assert "Rhea Okafor" in page.inner_text("[data-testid=signer]")
    assert page.inner_text("[data-testid=meaning]") == record.meaning
    page.wait_for_selector("[data-testid=signed-message]")
    shot(page, "signed.png")

    link = page.get_attribute("[data-testid=record-pdf]", "href")
    assert link == f"/api/v1/records/{record.id}/pdf/"
    pdf = page.request.get(base + link)
    assert pdf.status == 200
    assert pdf.headers["content-type"] == "application/pdf"
    assert pdf.body()[:5] == b"%PDF-"

    # Back on the job: the signed state, and no second sign action.
    page.goto(base + f"/#/job/{job.id}")
    page.wait_for_selector("[data-testid=record-signed]")
    assert page.query_selector("[data-testid=sign-action]") is None


def test_wrong_password_signs_nothing_then_a_held_day_is_signed_as_stopped(
    live_server, demo, browser, page
):
    from compliance.models import DailyRecord, Job

    job = demo
    off_loop(fill_passing_except, job, set())
    off_loop(fail_anchor_check, job)
    assert Job.objects.get(pk=job.pk).state == "held"
    before = DailyRecord.objects.count()
    base = live_server.url
    sign_in_as(page, base, "rhea")
    page.goto(base + f"/#/job/{job.id}")
    page.wait_for_selector("[data-testid=sign-card]")
    page.click("[data-testid=sign-action]")

    # The open hold is shown first, and "safe" is not open while it stands.
    page.wait_for_selector("[data-testid=sign-holds]")
    assert "No cracks" in page.inner_text("[data-testid=sign-holds]")
    assert page.is_disabled("[data-testid=meaning-reviewed_safe] input")
    assert "open holds" in page.inner_text("[data-testid=meaning-reviewed_safe]")

    page.click("[data-testid=meaning-reviewed_stopped]")
    page.fill("[data-testid=sign-password]", "not-the-password")
    page.click("[data-testid=sign-submit]")
    page.wait_for_selector("[data-testid=sign-error]:has-text('Not signed')")
    assert "password" in page.inner_text("[data-testid=sign-error]")
    assert page.input_value("[data-testid=sign-password]") == ""
    # The focus is back in the emptied box, not on the page.
    page.wait_for_function("document.activeElement?.dataset?.testid === 'sign-password'")
    assert DailyRecord.objects.count() == before
    assert DailyRecord.objects.filter(job=job).count() == 0
    assert Job.objects.get(pk=job.pk).state == "held"
    # A refused password is not a lapsed session: still signed in, nothing asks to sign in again.
    assert page.query_selector("[data-testid=session-ended]") is None
    assert page.query_selector("[data-testid=strip-signed-out]") is None

    # The same screen in the dark theme, for the record of how it reads at night.
    dark = browser.new_context(
        viewport={"width": 390, "height": 844},
        device_scale_factor=1,
        locale="en-GB",
        color_scheme="dark",
        storage_state=page.context.storage_state(),
    )
    try:
        night = dark.new_page()
        night.goto(base + f"/#/job/{job.id}/sign")
        night.wait_for_selector("[data-testid=sign-holds]")
        night.click("[data-testid=meaning-reviewed_stopped]")
        assert night.evaluate("matchMedia('(prefers-color-scheme: dark)').matches")
        night.evaluate("window.scrollTo(0, 0)")
        shot(night, "sign-off-dark.png")
    finally:
        dark.close()

    page.fill("[data-testid=sign-password]", PASSWORD)
    page.click("[data-testid=sign-submit]")
    page.wait_for_selector("[data-testid=record]")
    record = DailyRecord.objects.get(job=job, kind="record")
    assert record.meaning.startswith("Reviewed: work was stopped")
    assert DailyRecord.objects.count() == before + 1
    # Signing with the hold open closes the day; the hold stays on the record.
    assert Job.objects.get(pk=job.pk).state == "closed"
    assert '"open_holds":1' in record.canonical_json.replace(" ", "")


@pytest.mark.parametrize("username", ["tomas", "ivy"])
def test_operators_and_auditors_get_no_sign_action(live_server, demo, page, username):
    job = demo
    off_loop(fill_passing_except, job, set())
    off_loop(fail_anchor_check, job)
    base = live_server.url
    sign_in_as(page, base, username)
    page.goto(base + f"/#/job/{job.id}")
    page.wait_for_selector("[data-testid=holds]")
    assert page.query_selector("[data-testid=sign-action]") is None
    assert page.query_selector("[data-testid=sign-action-bar]") is None
    assert page.query_selector("[data-testid=sign-card]") is None
    # Even by address, there is no form: only a plain refusal.
    page.goto(base + f"/#/job/{job.id}/sign")
    page.wait_for_selector("[data-testid=sign-refusal]")
    assert "supervisor" in page.inner_text("[data-testid=sign-refusal]")
    assert page.query_selector("[data-testid=sign-password]") is None

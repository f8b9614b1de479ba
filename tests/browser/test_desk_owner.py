"""The property manager's desk at 1280 x 800: the building's anchors with their state on the
roof plan, the anchor log book signed with the password re-entered, certificates, and the
contractors' access grants. Every write is checked row by row in the database; taking an anchor
out of service holds the contractor's job, as its operator's phone then shows. Every new screen
is run through axe-core with no violation allowed."""

import datetime as dt
import hashlib
import json
from pathlib import Path

import pytest
from django.conf import settings

from tests.browser.conftest import (
    DESK,
    PASSWORD,
    TYPE_MS,
    axe_clean,
    desk_shot,
    sign_in_as,
)

pytestmark = pytest.mark.browser

MANAGER = json.loads(
    (Path(settings.BASE_DIR) / "fixtures" / "demo" / "scenario.json").read_text(encoding="utf-8")
)["owner"]["username"]
CERT_PDF = b"%PDF-1.7\n1 0 obj <<>> endobj\ntrailer <<>>\n%%EOF\n"
"""A certificate file as a competent person's office might send it (a minimal PDF)."""


def open_desk(page, base: str) -> None:
    """Sign in as the property manager (its first requests all back, as the desk tests do),
    then take the header's Desk link."""
    page.goto(base + "/")
    page.wait_for_selector("input[name=username]")
    page.wait_for_load_state("networkidle")
    page.fill("input[name=username]", MANAGER)
    page.fill("input[name=password]", PASSWORD)
    page.click("button[type=submit]")
    page.wait_for_selector("[data-testid=desk-link]")
    page.set_viewport_size(DESK)
    page.click("[data-testid=desk-link]")
    page.wait_for_selector("[data-testid=desk-building] [data-testid=building-anchors]")


def log_rows(site) -> list[tuple]:
    from compliance.models import AnchorLogEntry

    return list(
        AnchorLogEntry.objects.filter(site=site)
        .order_by("sequence")
        .values_list("anchor__label", "kind", "result", "details", "recorded_by__username")
    )


def sign_entry(
    page, anchor_id: int, kind: str, details: str, password: str, result: str = ""
) -> None:
    page.select_option("#log-anchor", str(anchor_id))
    page.select_option("#log-kind", kind)
    if result:
        page.check(f"input[name=log-result][value={result}]")
    page.fill("#log-details", details)
    page.type("#log-password", password, delay=TYPE_MS)
    page.click("[data-testid=log-submit]")


@pytest.mark.django_db(transaction=True)
def test_manager_keeps_the_log_book_and_removal_holds_the_contractors_job(
    page, browser, live_server, demo
):
    from compliance.models import Anchor, Hold

    job = demo
    site = job.site
    drop = job.drops.order_by("id").first()
    used = drop.anchor
    spare = (
        Anchor.objects.filter(site=site)
        .exclude(
            pk__in=[d.anchor_id for d in job.drops.all()]
            + [d.safety_anchor_id for d in job.drops.all()]
        )
        .order_by("label")
        .first()
    )
    before = log_rows(site)

    open_desk(page, live_server.url)
    # The building: each anchor's state in words and shape, on the plan and in the table.
    page.wait_for_selector(f"[data-testid=building-plan] [data-testid=mark-{used.label}]")
    assert page.get_attribute("[data-testid=anchor-R8]", "data-state") == "lapsed"
    assert (
        page.inner_text("[data-testid=anchor-R8] [data-testid=anchor-state]")
        == "Certificate lapsed"
    )
    assert (
        page.get_attribute("[data-testid=anchor-R8] [data-testid=anchor-state]", "data-sign")
        == "held"
    )
    assert page.get_attribute(f"[data-testid=anchor-{used.label}]", "data-state") == "in_service"
    axe_clean(page, "building")
    desk_shot(page, "desk-owner-building.png")

    # The log book: an inspection signed with the password typed at a person's speed.
    page.click("nav.desk-nav a:has-text('Anchor log book')")
    page.wait_for_selector("[data-testid=desk-log] [data-testid=log-form]")
    sign_entry(
        page,
        spare.pk,
        "periodic_inspection",
        "Visual and torque check, all sound.",
        PASSWORD,
        "pass",
    )
    page.wait_for_selector("[data-testid=log-done]")
    rows = log_rows(site)
    assert rows[len(before) :] == [
        (spare.label, "periodic_inspection", "pass", "Visual and torque check, all sound.", MANAGER)
    ]
    # Newest first: the entry just signed heads the table.
    first = page.locator("[data-testid=log-entries] tbody tr").first
    assert first.get_attribute("data-kind") == "periodic_inspection"
    assert spare.label in first.inner_text()

    # A wrong password is refused in words, beside the field, and stores nothing.
    sign_entry(page, used.pk, "removed_from_service", "Cracked base plate.", "not-my-password")
    page.wait_for_selector("[data-testid=error-log-password]")
    assert "Wrong password" in page.inner_text("[data-testid=error-log-password]")
    assert log_rows(site) == rows
    assert not Hold.objects.filter(job=job, clearance__isnull=True).exists()

    # A field the server refuses (400) is shown beside its field; a refusal of the whole entry
    # (a date still to come) above the form. Neither stores anything.
    page.fill("#log-on", "1900-01-01")
    page.type("#log-password", PASSWORD, delay=TYPE_MS)
    page.click("[data-testid=log-submit]")
    page.wait_for_selector("[data-testid=error-log-performed_on]")
    assert "1950" in page.inner_text("[data-testid=error-log-performed_on]")
    page.fill("#log-on", (dt.date.today() + dt.timedelta(days=40)).isoformat())
    page.type("#log-password", PASSWORD, delay=TYPE_MS)
    page.click("[data-testid=log-submit]")
    page.wait_for_selector("[data-testid=error-log-form]")
    assert "future" in page.inner_text("[data-testid=error-log-form]")
    assert log_rows(site) == rows

    # Taking the anchor the contractor's job uses out of service, with its reason.
    page.fill("#log-on", dt.date.today().isoformat())
    page.wait_for_selector("[data-testid=removal-warning]")
    axe_clean(page, "log book")
    page.fill("#log-details", "Cracked base plate found on the roof walk.")
    page.type("#log-password", PASSWORD, delay=TYPE_MS)
    desk_shot(page, "desk-owner-log-book.png")
    page.click("[data-testid=log-submit]")
    page.wait_for_selector("[data-testid=log-done]")
    rows2 = log_rows(site)
    assert rows2[len(rows) :] == [
        (
            used.label,
            "removed_from_service",
            "none",
            "Cracked base plate found on the roof walk.",
            MANAGER,
        )
    ]
    holds = Hold.objects.filter(job=job, clearance__isnull=True)
    assert holds.count() == 1 and used.label in holds.get().reason
    job.refresh_from_db()
    assert job.state == "held"

    # The building shows the anchor out of service, with the reason.
    page.click("nav.desk-nav a:has-text('Building')")
    page.wait_for_selector(f"[data-testid=anchor-{used.label}][data-state=out_of_service]")
    assert "Cracked base plate" in page.inner_text(f"[data-testid=anchor-{used.label}]")
    assert page.get_attribute(f"[data-testid=mark-{used.label}]", "data-state") == "out_of_service"
    axe_clean(page, "building with an anchor out of service")
    desk_shot(page, "desk-owner-building-held.png", top="#plan-head")

    # The contractor's operator sees the job held on the phone.
    phone = browser.new_context(viewport={"width": 390, "height": 844}, locale="en-GB")
    try:
        tomas = phone.new_page()
        sign_in_as(tomas, live_server.url, "tomas")
        tomas.wait_for_selector(f"[data-testid=job-{job.pk}] [data-state=held]")
        tomas.click(f"[data-testid=job-{job.pk}]")
        tomas.wait_for_selector(".state-card [data-state='held']")
        tomas.goto("about:blank")
    finally:
        phone.close()

    # Returned to service: the hold the removal opened is cleared.
    page.click("nav.desk-nav a:has-text('Anchor log book')")
    page.wait_for_selector("[data-testid=desk-log] [data-testid=log-form]")
    # The log book's signed PDF, fetched with the manager's session.
    pdf = page.request.get(live_server.url + page.get_attribute("[data-testid=log-pdf]", "href"))
    assert (pdf.status, pdf.headers["content-type"]) == (200, "application/pdf")
    sign_entry(
        page, used.pk, "returned_to_service", "Base plate replaced and proof loaded.", PASSWORD
    )
    page.wait_for_selector("[data-testid=log-done]")
    assert log_rows(site)[-1][:2] == (used.label, "returned_to_service")
    assert not Hold.objects.filter(job=job, clearance__isnull=True).exists()


@pytest.mark.django_db(transaction=True)
def test_manager_records_a_certificate_and_gives_and_ends_a_grant(page, live_server, demo):
    from compliance.models import AnchorCertification, Organisation, SiteGrant, SiteGrantEnd

    site = demo.site
    other = Organisation.objects.create(name="Second Facade Crew (test)", kind="contractor")
    open_desk(page, live_server.url)

    # Anchors and certificates: a new certificate for the lapsed anchor.
    page.click("nav.desk-nav a:has-text('Anchors and certificates')")
    page.wait_for_selector("[data-testid=desk-anchors] [data-testid=cert-form]")
    r8 = site.anchors.get(label="R8")
    # The lapsed certificate is the last one, not the one in force.
    lapsed = page.inner_text("[data-testid=certs-R8] [data-testid=cert-current]")
    assert "Last certificate (lapsed)" in lapsed and "In force" not in lapsed
    page.select_option("#cert-anchor", str(r8.pk))
    page.type("#cert-certifier", "Noor Haddad", delay=TYPE_MS)
    page.type("#cert-company", "Roofline Testing (test)", delay=TYPE_MS)
    assert page.get_attribute("#cert-capacity", "inputmode") == "decimal"
    page.type("#cert-capacity", "0", delay=TYPE_MS)
    until = (dt.date.today() + dt.timedelta(days=365)).isoformat()
    page.fill("#cert-until", until)
    page.click("[data-testid=cert-submit]")
    # The server's refusal of a capacity of zero shows beside the field; nothing stored.
    page.wait_for_selector("[data-testid=error-cert-rated_capacity_kn]")
    assert r8.certifications.count() == 1
    # A page saved with a .pdf name is not a certificate: refused beside the file field.
    page.set_input_files(
        "#cert-file",
        {"name": "certificate.pdf", "mimeType": "application/pdf", "buffer": b"<html></html>"},
    )
    page.fill("#cert-capacity", "")
    page.type("#cert-capacity", "22,5", delay=TYPE_MS)
    page.click("[data-testid=cert-submit]")
    page.wait_for_selector("[data-testid=error-cert-document]")
    assert r8.certifications.count() == 1
    # The real certificate, a PDF, kept as evidence with its SHA-256.
    page.set_input_files(
        "#cert-file",
        {"name": "R8-certificate.pdf", "mimeType": "application/pdf", "buffer": CERT_PDF},
    )
    page.click("[data-testid=cert-submit]")
    page.wait_for_selector("[data-testid=cert-done]")
    cert = AnchorCertification.objects.filter(anchor=r8).order_by("-id").first()
    assert (
        cert.certifier,
        cert.certifier_company,
        cert.rated_capacity_kn,
        cert.certified_on.isoformat(),
        cert.valid_until.isoformat(),
        cert.recorded_by.username,
    ) == (
        "Noor Haddad",
        "Roofline Testing (test)",
        22.5,
        dt.date.today().isoformat(),
        until,
        MANAGER,
    )
    page.wait_for_selector("[data-testid=certs-R8] [data-testid=cert-current]:has-text('22.5 kN')")
    assert cert.document_sha256 == hashlib.sha256(CERT_PDF).hexdigest()
    link = page.locator("[data-testid=certs-R8] [data-testid=cert-file-link]")
    assert page.request.get(live_server.url + link.get_attribute("href")).body() == CERT_PDF
    axe_clean(page, "anchors and certificates")
    desk_shot(page, "desk-owner-certificates.png")

    # Access grants: give one to a second contractor, then end it with a reason.
    page.click("nav.desk-nav a:has-text('Access grants')")
    page.wait_for_selector("[data-testid=desk-grants] [data-testid=grant-form]")
    assert SiteGrant.objects.filter(site=site).count() == 1
    page.select_option("#grant-contractor", "other")
    page.type("#grant-number", str(other.pk), delay=TYPE_MS)
    start = dt.date.today().isoformat()
    end = (dt.date.today() + dt.timedelta(days=30)).isoformat()
    page.fill("#grant-to", end)
    page.click("[data-testid=grant-submit]")
    page.wait_for_selector("[data-testid=grant-done]")
    grant = SiteGrant.objects.get(site=site, contractor=other)
    assert (grant.starts_on.isoformat(), grant.ends_on.isoformat(), grant.granted_by.username) == (
        start,
        end,
        MANAGER,
    )
    page.wait_for_selector(
        f"[data-testid=grant-{grant.pk}] [data-testid=grant-state]:has-text('In force')"
    )
    axe_clean(page, "access grants")
    desk_shot(page, "desk-owner-grants.png")

    page.type(f"#end-{grant.pk}-reason", "Work finished early.", delay=TYPE_MS)
    # Ending access acts at once, on a robot that may be on the facade: the owner is asked
    # first (it ended on one click), and a "no" ends nothing.
    asked: list[str] = []
    page.once("dialog", lambda d: (asked.append(d.message), d.dismiss()))
    page.click(f"[data-testid=end-grant-{grant.pk}] [data-testid=end-grant-submit]")
    assert asked and "stops at once" in asked[0]
    assert not SiteGrantEnd.objects.filter(grant=grant).exists()
    page.once("dialog", lambda d: d.accept())
    page.click(f"[data-testid=end-grant-{grant.pk}] [data-testid=end-grant-submit]")
    page.wait_for_selector(
        f"[data-testid=grant-{grant.pk}] [data-testid=grant-state]:has-text('Ended')"
    )
    ended = SiteGrantEnd.objects.get(grant=grant)
    assert (ended.ended_by.username, ended.reason) == (MANAGER, "Work finished early.")
    # What it did, and why, stay on the screen.
    assert page.inner_text("[data-testid=grant-ended]") == (
        f"Access ended for {other.name}. None of their jobs was at work here."
    )
    assert "Work finished early." in page.inner_text(f"[data-testid=grant-{grant.pk}]")
    # The demo contractor's grant is untouched.
    assert SiteGrant.objects.filter(site=site, end__isnull=True).count() == 1


@pytest.mark.django_db(transaction=True)
def test_contractor_supervisor_reads_the_building_but_manages_no_access(page, live_server, demo):
    base = live_server.url
    page.goto(base + "/")
    page.wait_for_selector("input[name=username]")
    page.wait_for_load_state("networkidle")
    page.fill("input[name=username]", "rhea")
    page.fill("input[name=password]", PASSWORD)
    page.click("button[type=submit]")
    page.wait_for_selector("[data-testid=desk-link]")
    page.set_viewport_size(DESK)
    page.click("[data-testid=desk-link]")
    page.wait_for_selector("[data-testid=desk-jobs]")
    assert page.locator("nav.desk-nav a").all_inner_texts() == [
        "Days and jobs",
        "Plan a day",
        "Equipment register",
        "Checklist versions",
        "Building",
        "Anchor log book",
        "Anchors and certificates",
        "Due dates",
        "Daily records",
    ]
    # The owner's grants page is not the contractor's: the address opens its first page.
    page.goto(base + "/#/desk/grants")
    page.wait_for_selector("[data-testid=desk-jobs]")
    page.click("nav.desk-nav a:has-text('Building')")
    page.wait_for_selector("[data-testid=desk-building] [data-testid=anchor-R8][data-state=lapsed]")
    axe_clean(page, "building for a contractor's supervisor")

"""The auditor's desk at 1280 x 800: a site, a month (each day's record in words, its sheets,
in two API requests), a signed day with its seal, the server's verdict on its signature word for
word, the signed PDF and the export of a period, checked on the server too. The auditor reads
only: no screen offers a form that writes, and no row is added anywhere. Every screen is run
through axe-core with no violation allowed."""

import datetime as dt
import io
import zipfile
from urllib.parse import parse_qs, urlparse

import pytest

from tests.browser.conftest import PASSWORD, fill_passing_except, off_loop
from tests.browser.test_desk_screens import DESK, TYPE_MS, axe_clean, day, desk_shot, sign_in

pytestmark = pytest.mark.browser

AUDITOR = "wren"
ADDENDUM = "Drop North 2 was cleaned by A. Prescott, not T. Lind as the remarks say."


def add_auditor(org) -> None:
    from compliance.models import User

    User.objects.create_user(
        username=AUDITOR,
        password=PASSWORD,
        first_name="Wren",
        last_name="Haldane",
        role="auditor",
        organisation=org,
    )


def add_addendum_to(job) -> None:
    """The supervisor amends yesterday's signed record (its PDF renders in-process)."""
    from compliance.models import DailyRecord
    from compliance.records.services import add_addendum

    record = DailyRecord.objects.get(job=job, kind="record")
    add_addendum(record=record, by=job.supervisor, password=PASSWORD, text=ADDENDUM)


def row_counts() -> dict[str, int]:
    """Rows in every table of the project's own apps, but the kept page checks and the notes of
    exports made: a verification keeps its passed page comparison (a cache,
    compliance.models.PageCheck), and an export the server's note of it (ExportMade, counted on
    its own below); neither is a record or changes anything an auditor reads."""
    from django.apps import apps

    return {
        model._meta.label: model.objects.count()
        for name in ("compliance", "checklists")
        for model in apps.get_app_config(name).get_models()
        if model._meta.label not in ("compliance.PageCheck", "compliance.ExportMade")
    }


def sheets_words(job) -> str:
    """What the month says of a job's sheets: the count, then each verdict present in order."""
    from checklists.models import CheckSheet

    verdicts = list(CheckSheet.objects.filter(job=job).values_list("verdict", flat=True))
    words = {"pass": "pass", "fail": "fail", "na": "not applicable", "recorded": "recorded"}
    counts = [f"{verdicts.count(v)} {w}" for v, w in words.items() if verdicts.count(v)]
    noun = "sheet" if len(verdicts) == 1 else "sheets"
    return f"{len(verdicts)} {noun}: {', '.join(counts)}"


def assert_reads_only(page) -> None:
    """No form that writes: no password to re-enter, no text to keep, no field but the export's
    dates, no button but the export's and the checks'."""
    assert page.locator("main input[type=password], main textarea, main select").count() == 0
    for field in page.locator("main input").all():
        assert field.get_attribute("id") in ("export-start", "export-end")
    for button in page.locator("main button").all():
        assert button.get_attribute("data-testid") in ("export-build", "verify-button")


def api_paths(urls: list[str]) -> list[str]:
    return sorted(urlparse(u).path + "?" + urlparse(u).query for u in urls)


def test_auditor_walks_a_month_checks_a_signed_day_and_exports_it(live_server, demo, page):
    from compliance.models import DailyRecord, ExportMade, Job, Organisation, Site
    from compliance.records.checks import verify_export, verify_pdf

    org = demo.organisation
    site = demo.site
    yesterday, before = (
        Job.objects.get(organisation=org, date=day(-1)),
        Job.objects.get(organisation=org, date=day(-2)),
    )
    # Today's job gets its sheets and stays unsigned; yesterday's record gets an addendum.
    off_loop(fill_passing_except, demo, set())
    off_loop(add_addendum_to, yesterday)
    add_auditor(org)
    record = DailyRecord.objects.get(job=yesterday, kind="record")
    addendum = DailyRecord.objects.get(job=yesterday, kind="addendum")
    assert hasattr(record, "pdf") and hasattr(addendum, "pdf")
    base = live_server.url

    # On the phone the auditor has the Desk link; the desk opens on the daily records alone.
    sign_in(page, base, AUDITOR)
    page.wait_for_selector("[data-testid=desk-link]")
    page.set_viewport_size(DESK)
    page.click("[data-testid=desk-link]")
    page.wait_for_selector("[data-testid=desk-records] [data-testid=record-sites]")
    assert "Wren Haldane, Auditor (read only)" in page.inner_text("[data-testid=desk-user]")
    assert page.locator("nav.desk-nav a").all_inner_texts() == ["Daily records"]
    before_rows = row_counts()
    assert page.locator("[data-testid=record-sites] a").all_inner_texts() == [
        f"{site.name}\n{site.address}"
    ]
    assert_reads_only(page)
    axe_clean(page, "the auditor's sites")
    desk_shot(page, "desk-auditor-sites.png")

    # A writing page by address opens the records instead.
    page.goto(base + "/#/desk/equipment")
    page.wait_for_selector("[data-testid=desk-records] [data-testid=record-sites]")

    # The site's months: this one and eleven before, each with its signed records.
    page.click(f"[data-testid=record-site-{site.pk}]")
    month = day(-1).strftime("%Y-%m")
    month_link = page.locator(f"[data-testid=record-month-{month}]")
    month_link.wait_for()
    months = page.locator("[data-testid=record-months] a")
    assert months.count() == 12
    assert months.first.get_attribute("data-testid") == (f"record-month-{day(0).strftime('%Y-%m')}")
    first = dt.date.fromisoformat(f"{month}-01")
    last = (first.replace(day=28) + dt.timedelta(days=4)).replace(day=1) - dt.timedelta(days=1)
    in_month = DailyRecord.objects.filter(site=site, job__date__range=(first, last))
    signed_in_month = in_month.filter(kind="record").count()
    addenda_in_month = in_month.filter(kind="addendum").count()
    assert signed_in_month >= 1 and addenda_in_month == 1
    words = f"{signed_in_month} signed record{'s' if signed_in_month > 1 else ''}, 1 addendum"
    assert words in month_link.inner_text()
    assert_reads_only(page)
    axe_clean(page, "the auditor's months")
    desk_shot(page, "desk-auditor-months.png")

    # The month: the sheets and the records, two requests and nothing else.
    page.wait_for_load_state("networkidle")
    asked: list[str] = []

    def on_request(request) -> None:
        if "/api/v1/" in request.url:
            asked.append(request.url)

    page.on("request", on_request)
    month_link.click()
    page.wait_for_selector("[data-testid=record-month]")
    page.wait_for_load_state("networkidle")
    page.remove_listener("request", on_request)
    period = f"site={site.pk}&start={first}&end={last}&limit=1000&offset=0"
    assert api_paths(asked) == [f"/api/v1/records/?{period}", f"/api/v1/sheets/?{period}"]

    rows = page.locator("[data-testid=record-month] tbody tr")
    assert rows.count() == last.day
    row = page.locator(f"[data-testid=day-{day(-1)}]")
    assert row.get_attribute("data-state") == "signed"
    assert row.locator("[data-testid=day-state]").inner_text() == "Signed"
    # When it was signed, with its date: a time alone read as signed on the day of the row.
    signed_on = row.locator("[data-testid=day-record]").first.inner_text()
    assert signed_on.startswith("by Rhea Okafor on "), signed_on
    assert record.signed_at.strftime("%b") in signed_on and str(record.signed_at.year) in signed_on
    assert f"record {record.sequence}" in row.inner_text()
    assert row.locator("[data-testid=day-addenda]").inner_text() == "1 addendum"
    assert row.locator("[data-testid=day-sheets]").inner_text() == sheets_words(yesterday)
    assert "fail" in sheets_words(yesterday)  # the vacuum test that failed before the repair
    if day(-2).strftime("%Y-%m") == month:
        row = page.locator(f"[data-testid=day-{day(-2)}]")
        assert row.get_attribute("data-state") == "signed"
        assert row.locator("[data-testid=day-addenda]").count() == 0
        assert row.locator("[data-testid=day-sheets]").inner_text() == sheets_words(before)
    if day(0).strftime("%Y-%m") == month:
        # Today's sheets are in, its record is not signed yet.
        row = page.locator(f"[data-testid=day-{day(0)}]")
        assert row.get_attribute("data-state") == "open"
        assert row.locator("[data-testid=day-state]").inner_text() == (
            "Not signed yet: sheets filled"
        )
        assert row.locator("[data-testid=day-sheets]").inner_text() == sheets_words(demo)
        assert row.locator("[data-testid=day-link]").count() == 1
    if day(-3).strftime("%Y-%m") == month:
        # Worked and closed, its record never signed: the month says so.
        row = page.locator(f"[data-testid=day-{day(-3)}]")
        assert row.get_attribute("data-state") == "unsigned"
        assert row.locator("[data-testid=day-state]").inner_text() == (
            "Not signed: sheets without a signed record"
        )
    quiet = [
        d
        for d in range(1, last.day + 1)
        if first.replace(day=d) not in (day(0), day(-1), day(-2), day(-3))
    ]
    for d in quiet:
        row = page.locator(f"[data-testid=day-{first.replace(day=d)}]")
        assert row.get_attribute("data-state") == "none"
        assert row.locator("[data-testid=day-state]").inner_text() == "No sheets, no record"
        assert row.locator("[data-testid=day-link]").count() == 0
    assert_reads_only(page)
    axe_clean(page, "the auditor's month")
    desk_shot(page, "desk-auditor-month.png")

    # Yesterday: the record's signer, time, meaning and seal as sealed, and its addendum.
    page.click(f"[data-testid=day-{day(-1)}] [data-testid=day-link]")
    card = page.locator(f"[data-testid=record-{record.pk}]")
    card.wait_for()
    assert card.locator("[data-testid=record-state]").first.inner_text() == "Signed, 1 addendum"
    assert card.locator("[data-testid=record-signer]").first.inner_text() == (
        f"{record.signer_name}, {record.signer_role}"
    )
    assert card.locator("[data-testid=record-meaning]").first.inner_text() == record.meaning
    assert card.locator("[data-testid=record-seal]").first.inner_text() == record.seal
    shown_at = card.locator("time").first.get_attribute("datetime")
    assert dt.datetime.fromisoformat(shown_at) == record.signed_at
    page.wait_for_selector("[data-testid=addendum-text]")
    assert page.inner_text("[data-testid=addendum-text]") == ADDENDUM
    sheet_rows = page.locator("[data-testid=day-sheet-table] tbody tr")
    assert sheet_rows.count() == yesterday.sheets.count()
    failed = page.locator("[data-testid=day-sheet-table] tbody tr[data-verdict=fail]")
    assert failed.count() == yesterday.sheets.filter(verdict="fail").count() == 1
    assert "Vacuum fell fast" in failed.inner_text()
    # Its items, one tap away: the failed one says so in words.
    failed.locator("summary").click()
    failed_items = failed.locator("li[data-verdict=fail]")
    assert failed_items.count() >= 1
    assert "Fail" in failed_items.first.inner_text()
    # A calculation's inputs are not spilled across the page: it stays 1280 px wide.
    assert page.evaluate("() => document.documentElement.scrollWidth") <= DESK["width"]
    assert_reads_only(page)
    axe_clean(page, "the auditor's signed day")
    desk_shot(page, "desk-auditor-day.png")

    # The server's check of the record: its verdict word for word, with the signer it names.
    # Checked where the server keeps it: no download and upload again.
    verify_url = f"/api/v1/records/{record.pk}/verify/"
    with page.expect_response(lambda r: r.url.endswith(verify_url)) as answer:
        card.locator("[data-testid=record-verify] [data-testid=verify-button]").click()
    assert answer.value.status == 200 and answer.value.request.method == "GET"
    result = card.locator("[data-testid=record-verify] [data-testid=verify-result]")
    result.wait_for()
    record.pdf.file.open("rb")
    stored_pdf = record.pdf.file.read()
    record.pdf.file.close()
    expected = off_loop(
        lambda: verify_pdf(stored_pdf, name=f"daily record {site.pk}-{record.sequence}")
    ).as_dict()
    assert expected["ok"] is True
    assert result.locator("[data-testid=verify-verdict]").inner_text() == expected["verdict"]
    assert result.get_attribute("data-ok") == "true"
    assert result.locator("[data-testid=verify-opening]").inner_text() == "VERIFIED"
    assert result.locator("[data-testid=verify-organisation]").inner_text() == org.name
    assert result.locator("[data-testid=verify-fingerprint]").inner_text() == (
        record.credential.fingerprint_sha256
    )
    assert org.name in expected["verdict"]
    assert record.credential.fingerprint_sha256 in expected["verdict"]
    failed_checks = result.locator("[data-testid=verify-checks] li[data-ok=false]")
    assert failed_checks.count() == 0
    assert result.locator("[data-testid=verify-checks] li").count() == len(expected["checks"])
    axe_clean(page, "the server's verdict on a record")
    desk_shot(
        page,
        "desk-auditor-verified.png",
        top=f"[data-testid=record-{record.pk}] [data-testid=record-verify]",
    )

    # The signed PDF, the very file the server holds.
    with page.expect_download() as got:
        card.locator("[data-testid=record-pdf]").first.click()
    assert got.value.suggested_filename == f"daily-record-{site.pk}-{record.sequence}.pdf"
    with open(got.value.path(), "rb") as pdf:
        assert pdf.read() == stored_pdf

    # The export of a period: from the day before, typed in, to this day.
    page.fill("#export-start", day(-2).isoformat())
    assert page.input_value("#export-end") == day(-1).isoformat()
    with page.expect_response(lambda r: "/api/v1/records/export/" in r.url) as answer:
        page.click("[data-testid=export-build]")
    assert answer.value.status == 200
    assert parse_qs(urlparse(answer.value.url).query) == {
        "site": [str(site.pk)],
        "start": [day(-2).isoformat()],
        "end": [day(-1).isoformat()],
    }
    link = page.locator("[data-testid=export-download]")
    link.wait_for()
    name = f"records-{site.pk}-{day(-2)}-{day(-1)}.zip"
    assert link.inner_text().startswith(f"Download {name} (")
    with page.expect_download() as got:
        link.click()
    assert got.value.suggested_filename == name
    with open(got.value.path(), "rb") as exported:
        zipped = exported.read()
    in_period = DailyRecord.objects.filter(site=site, job__date__range=(day(-2), day(-1)))
    assert in_period.count() == 3  # two days' records and the addendum
    with zipfile.ZipFile(io.BytesIO(zipped)) as archive:
        pdfs = sorted(n for n in archive.namelist() if n.endswith(".pdf"))
    assert pdfs == sorted(
        f"records/{r.organisation_id}/{r.sequence:05d}-{r.kind}-{r.seal[:12]}.pdf"
        for r in in_period
    )
    checked = page.locator("[data-testid=export-verify]")
    checked.locator("[data-testid=verify-button]").click()
    checked.locator("[data-testid=verify-result]").wait_for()
    expected = off_loop(lambda: verify_export(zipped, use_database=True)).as_dict()
    assert checked.locator("[data-testid=verify-verdict]").inner_text() == expected["verdict"]
    assert checked.locator("[data-testid=verify-result]").get_attribute("data-ok") == (
        "true" if expected["ok"] else "false"
    )
    assert_reads_only(page)
    axe_clean(page, "the auditor's export")
    desk_shot(page, "desk-auditor-export.png", top="[data-testid=export]")

    # Reading, checking and exporting added nothing anywhere, but the note of the one export.
    assert row_counts() == before_rows
    assert ExportMade.objects.count() == 1
    assert Organisation.objects.get(pk=org.pk).name == org.name
    assert Site.objects.get(pk=site.pk).name == site.name


def test_supervisor_reads_the_records_too(live_server, demo, page):
    from compliance.models import DailyRecord, Job

    job = Job.objects.get(organisation=demo.organisation, date=day(-2))
    record = DailyRecord.objects.get(job=job, kind="record")
    base = live_server.url
    sign_in(page, base, "rhea")
    page.wait_for_selector("[data-testid=desk-link]")
    page.set_viewport_size(DESK)
    page.click("[data-testid=desk-link]")
    page.wait_for_selector("[data-testid=desk-jobs]")
    assert page.locator("nav.desk-nav a").all_inner_texts()[-1] == "Daily records"
    page.click("nav.desk-nav a:has-text('Daily records')")
    page.wait_for_selector("[data-testid=record-sites]")
    # By address, straight to the day: its record and the link to its signed PDF.
    page.goto(base + f"/#/desk/records/{demo.site_id}/{day(-2)}")
    card = page.locator(f"[data-testid=record-{record.pk}]")
    card.wait_for()
    assert card.locator("[data-testid=record-seal]").inner_text() == record.seal
    assert card.locator("[data-testid=record-pdf]").get_attribute("href") == (
        f"/api/v1/records/{record.pk}/pdf/"
    )
    assert card.locator("[data-testid=record-state]").inner_text() == "Signed"
    axe_clean(page, "a signed day for a supervisor")
    # A day that is not a day opens the site's months.
    page.goto(base + f"/#/desk/records/{demo.site_id}/2026-02-30")
    page.wait_for_selector("[data-testid=record-months]")


def test_the_next_person_on_the_same_screen_sees_only_their_own_sites(live_server, demo, page):
    """Signing out and in again without reloading keeps the desk's code loaded: the sites it
    read for the first person must not be shown to the next."""
    from compliance.models import Organisation, User

    add_auditor(demo.organisation)
    other = Organisation.objects.create(name="Harbourline Rope Access (test)")
    User.objects.create_user(username="moss", password=PASSWORD, role="auditor", organisation=other)
    base = live_server.url
    sign_in(page, base, AUDITOR)
    page.wait_for_selector("[data-testid=desk-link]")
    page.set_viewport_size(DESK)
    page.click("[data-testid=desk-link]")
    page.wait_for_selector(f"[data-testid=record-site-{demo.site_id}]")
    page.click(".desk-head a:has-text('Phone screens')")
    page.click("[data-testid=sign-out]")
    page.wait_for_selector("input[name=username]")
    # Requests the first person's screens had under way end (refused) before the next types:
    # under load, one ended mid-typing and the sign-in was refused (CI, once).
    page.wait_for_load_state("networkidle")
    page.type("input[name=username]", "moss", delay=TYPE_MS)
    page.type("input[name=password]", PASSWORD, delay=TYPE_MS)
    assert page.input_value("input[name=username]") == "moss"
    assert page.input_value("input[name=password]") == PASSWORD
    page.click("button[type=submit]")
    page.click("[data-testid=desk-link]")
    page.wait_for_selector("[data-testid=desk-records] [data-testid=no-sites]")
    assert page.locator("[data-testid=record-sites]").count() == 0

"""The record a person reads: the checklist's words, times in the site's zone to the second,
holds that name what they concern, a drop plan with certificate and inspection dates. Records
sealed in the first format keep the pages they were signed with, and still verify."""

import io
import re
import subprocess
from pathlib import Path

import pytest
from django.conf import settings as django_settings
from pypdf import PdfReader

from compliance import clock
from compliance.jobs.services import close_job, start_job
from compliance.models import Hold
from compliance.records import pdf as record_pdf
from compliance.records import services as daily_records
from compliance.records.checks import verify_pdf
from compliance.records.files import render_signed_pdf
from compliance.records.page_check import page_prints
from compliance.records.services import sign_daily_record
from tests.conftest import fill_all
from tests.factories import PASSWORD

pytestmark = pytest.mark.django_db

SCREENSHOTS = Path(django_settings.BASE_DIR) / "docs" / "screenshots"


def text_of(pdf: bytes) -> str:
    """The text as poppler's pdftotext reads it, pages in order (what a person sees)."""
    done = subprocess.run(
        ["pdftotext", "-layout", "-", "-"], input=pdf, capture_output=True, check=True
    )
    return done.stdout.decode("utf-8")


@pytest.fixture
def held_day(job, simple_checklists, operator, supervisor, credential, settings, tmp_path):
    """A day with a failed blocking anchor item (a hold on the anchor), signed as stopped."""
    settings.MEDIA_ROOT = tmp_path
    settings.TIME_ZONE = "Europe/Helsinki"
    fill_all(job, simple_checklists, operator, overrides={"anchor": {"sound": {"value": "fail"}}})
    return job


def test_a_record_reads_in_the_checklist_s_words_and_the_site_s_time(held_day, supervisor):
    record = sign_daily_record(
        job=held_day, by=supervisor, password=PASSWORD, meaning="reviewed_stopped"
    )
    pdf = render_signed_pdf(record)
    text = text_of(pdf)
    labels = {
        entry["item"]: entry["label"]
        for sheet in daily_records.json.loads(record.canonical_json)["record"]["sheets"]
        for entry in sheet["entries"]
    }
    # The test checklists label "tag_capacity" as "tag capacity": the page shows the label.
    assert labels["tag_capacity"] == "tag capacity"
    for key, label in labels.items():
        assert label in text, label
        assert "_" not in key or key not in text, key
    drop = held_day.drops.get()
    # Times to the second in the site's zone, and no microseconds anywhere.
    from zoneinfo import ZoneInfo

    local = record.signed_at.astimezone(ZoneInfo("Europe/Helsinki"))
    assert f"{local:%Y-%m-%d %H:%M:%S} (Europe/Helsinki)" in text
    assert not re.search(r"\d{2}:\d{2}:\d{2}\.\d+", text)
    # The hold names the anchor it concerns.
    holds = Hold.objects.filter(job=held_day).order_by("id")
    assert [h.requirement.partition("@")[2] for h in holds] == [
        f"anchor:{a.pk}" for a in sorted((drop.anchor, drop.safety_anchor), key=lambda a: a.pk)
    ]
    concerns = text[text.index("Holds and failed items") :]
    for anchor in (drop.anchor, drop.safety_anchor):
        assert f"anchor {anchor.label}" in concerns
    # The drop plan: anchors' certificates and the equipment's inspection dates.
    cert = drop.anchor.current_certification()
    assert "Drop plan" in text and f"Drop {drop.label}" in text
    assert f"valid until {cert.valid_until:%Y-%m-%d}" in text
    assert drop.robot.label in text
    assert verify_pdf(pdf).ok


def signed_in_format(fmt, job, checklists, operator, supervisor, monkeypatch):
    """The job's day, filled, closed and signed as a record of format `fmt`."""
    from compliance.jobs.services import close_job, start_job

    fill_all(job, checklists, operator)
    with clock.replaying(job.date):
        start_job(job=job, by=operator)
        close_job(job=job, by=operator)
    with monkeypatch.context() as patched:
        patched.setattr(daily_records, "FORMAT", fmt)
        record = sign_daily_record(
            job=job, by=supervisor, password=PASSWORD, meaning="reviewed_safe"
        )
    document = daily_records.json.loads(record.canonical_json)
    assert document["format"] == fmt
    return record, document


def test_a_record_sealed_in_the_first_format_keeps_its_pages_and_verifies(
    job, simple_checklists, operator, supervisor, credential, settings, tmp_path, monkeypatch
):
    settings.MEDIA_ROOT = tmp_path
    record, document = signed_in_format(
        "parapet.daily-record/2", job, simple_checklists, operator, supervisor, monkeypatch
    )
    assert "time_zone" not in document["record"]
    assert all("label" not in e for s in document["record"]["sheets"] for e in s["entries"])
    pdf = render_signed_pdf(record)
    text = text_of(pdf)
    assert "Drop plan" not in text and "Signed at (UTC)" in text
    report = verify_pdf(pdf)
    assert report.ok, report.lines()
    assert daily_records.verify_against_database(record) == []


def test_a_record_sealed_in_the_third_format_keeps_its_pages_and_verifies(
    job, simple_checklists, operator, supervisor, credential, settings, tmp_path, monkeypatch
):
    """/3 and /4 hold the same document; a /3 record is drawn again the /3 way (every cell a
    paragraph, plots as graphics), so it still verifies after /4 drew cells plainly."""
    settings.MEDIA_ROOT = tmp_path
    record, document = signed_in_format(
        "parapet.daily-record/3", job, simple_checklists, operator, supervisor, monkeypatch
    )
    pdf = render_signed_pdf(record)
    assert "Drop plan" in text_of(pdf)
    report = verify_pdf(pdf)
    assert report.ok, report.lines()
    assert daily_records.verify_against_database(record) == []
    drawn_as_four = record_pdf.render({**document, "format": "parapet.daily-record/4"}, record.seal)
    assert page_prints(PdfReader(io.BytesIO(drawn_as_four))) != page_prints(
        PdfReader(io.BytesIO(pdf))
    )


NOTES = "Rain from noon: both drops stopped at the 20th floor."


def test_the_job_s_notes_sealed_in_the_record_are_printed_on_its_pages(
    job, simple_checklists, operator, supervisor, credential, settings, tmp_path
):
    """The notes the day was planned with are sealed in every format, and no page printed
    them: an auditor reading the signed PDF never saw what the record held."""
    settings.MEDIA_ROOT = tmp_path
    job.notes = NOTES
    job.save()
    fill_all(job, simple_checklists, operator)
    with clock.replaying(job.date):
        start_job(job=job, by=operator)
        close_job(job=job, by=operator)
    record = sign_daily_record(job=job, by=supervisor, password=PASSWORD, meaning="reviewed_safe")

    pdf = render_signed_pdf(record)

    document = daily_records.json.loads(record.canonical_json)
    assert document["record"]["job"]["notes"] == NOTES
    assert NOTES in " ".join(text_of(pdf).split())
    assert verify_pdf(pdf).ok


def test_a_record_sealed_in_the_fourth_format_keeps_its_pages_and_verifies(
    job, simple_checklists, operator, supervisor, credential, settings, tmp_path, monkeypatch
):
    """/4 holds the same document as /5 and leaves the job's notes off its pages; a /4 record
    is drawn again the /4 way, so it still verifies."""
    settings.MEDIA_ROOT = tmp_path
    job.notes = NOTES
    job.save()
    record, _ = signed_in_format(
        "parapet.daily-record/4", job, simple_checklists, operator, supervisor, monkeypatch
    )
    pdf = render_signed_pdf(record)
    assert NOTES not in " ".join(text_of(pdf).split())
    report = verify_pdf(pdf)
    assert report.ok, report.lines()


def test_the_demo_s_record_is_drawn_to_images_a_person_can_look_at(db, settings, tmp_path):
    """The demo's signed day, first three pages as PNG: kept in docs/screenshots/."""
    from compliance.demo import load_demo
    from compliance.models import DailyRecord

    settings.MEDIA_ROOT = tmp_path
    org = load_demo()
    record = (
        DailyRecord.objects.filter(organisation=org, kind="record").order_by("-sequence").first()
    )
    pdf = render_signed_pdf(record)
    assert "Drop plan" in text_of(pdf)
    out = tmp_path / "page"
    subprocess.run(
        ["pdftoppm", "-png", "-r", "60", "-f", "1", "-l", "3", "-", str(out)],
        input=pdf,
        check=True,
    )
    pages = sorted(tmp_path.glob("page-*.png"))
    assert len(pages) == 3
    SCREENSHOTS.mkdir(parents=True, exist_ok=True)
    for n, page in enumerate(pages, start=1):
        assert page.stat().st_size > 5000  # drawn, not blank
        (SCREENSHOTS / f"record-page-{n}.png").write_bytes(page.read_bytes())


def test_a_hold_found_offline_prints_when_its_check_was_made(
    job, simple_checklists, operator, supervisor, credential, settings, tmp_path
):
    """A failure found on a phone offline on the roof opened its hold when the check reached
    the server: the page read "opened" at that later time alone, as if found then."""
    import datetime as dt

    from django.utils import timezone

    from checklists.services import record_sheet
    from compliance.jobs.selectors import job_requirements

    settings.MEDIA_ROOT = tmp_path
    fill_all(job, simple_checklists, operator)
    made = timezone.make_aware(dt.datetime.combine(job.date, dt.time(7, 5)))
    with clock.replaying(job.date):
        site = next(r for r in job_requirements(job) if r.subject.kind == "site")
        record_sheet(
            job=job,
            version=simple_checklists["site"],
            by=operator,
            entries={"zone_closed": {"value": "fail"}, "roof_wind": {"value": 3, "unit": "m/s"}},
            device_time=made,
            phone_clock_offset_s=0,
        )
        assert site.key == Hold.objects.get(job=job).requirement
        close_job(job=job, by=supervisor, reason="Zone not closed.")
    record = sign_daily_record(
        job=job, by=supervisor, password=PASSWORD, meaning="reviewed_stopped"
    )

    pdf = render_signed_pdf(record)

    zone = record_pdf._Look.of(daily_records.json.loads(record.canonical_json)).zone
    words = " ".join(text_of(pdf).split())
    assert f"its check was made {made.astimezone(zone):%Y-%m-%d %H:%M:%S}" in words
    assert verify_pdf(pdf).ok

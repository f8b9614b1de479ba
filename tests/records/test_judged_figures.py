"""A record seals and prints the figures each check was judged on (from /7).

A check reads figures from the register, the profile and the plan (a hose's rated pressure,
the profile's wind limit); its verdict holds for those figures. The record also snapshots the
register as it reads at signing, so a hose re-rated between its check and the signature printed
only its new rating beside a verdict made on the old. From /7 the record seals each check's
figures, prints them under the check, and lists on its first page every one the register read
otherwise at signing.
"""

import json

import pytest

from compliance.records import services as daily_records
from compliance.records.checks import verify_pdf
from compliance.records.files import render_signed_pdf
from compliance.records.services import sign_daily_record
from compliance.registers.services import update_equipment
from tests.factories import PASSWORD
from tests.records.test_readable_record import signed_in_format, text_of

pytestmark = pytest.mark.django_db


def _flat(text: str) -> str:
    return " ".join(text.split())


def _hose(job):
    return job.drops.get().hose


def test_the_record_seals_the_figures_each_check_was_judged_on(
    closed_job, supervisor, settings, tmp_path
):
    settings.MEDIA_ROOT = tmp_path

    record = sign_daily_record(
        job=closed_job, by=supervisor, password=PASSWORD, meaning="reviewed_safe"
    )

    document = json.loads(record.canonical_json)
    assert document["format"] == "parapet.daily-record/7"
    sealed = {s["id"]: s["judged_on"] for s in document["record"]["sheets"]}
    stored = {s.pk: s.judged_on for s in closed_job.sheets.all()}
    assert sealed == stored
    hose = _hose(closed_job)
    drop = str(closed_job.drops.get().pk)
    hose_sheet = closed_job.sheets.get(equipment=hose)
    assert sealed[hose_sheet.pk] == {drop: {"equipment.rating_kpa": hose.ratings["rating_kpa"]}}
    text = _flat(text_of(render_signed_pdf(record)))
    assert f"hose {hose.label} rating {hose.ratings['rating_kpa']:g} kPa" in text
    assert "Figures changed between a check and signing" not in text


def test_a_hose_re_rated_after_its_check_prints_both_ratings_and_verifies(
    closed_job, supervisor, settings, tmp_path
):
    """The valve pressure was checked against 2,500 kPa; the hose was re-rated to 1,000 kPa
    after the day closed. The record printed only 1,000 kPa; now it prints what the check was
    judged on and what the register read at signing, on the first page."""
    settings.MEDIA_ROOT = tmp_path
    hose = _hose(closed_job)
    judged = hose.ratings["rating_kpa"]
    update_equipment(
        item=hose,
        by=supervisor,
        reason="Re-rated after a bulge at the coupling.",
        ratings={**hose.ratings, "rating_kpa": 1000},
    )

    record = sign_daily_record(
        job=closed_job,
        by=supervisor,
        password=PASSWORD,
        meaning="reviewed_exceptions",
        remarks="The hose was re-rated after the day's work.",
    )

    pdf = render_signed_pdf(record)
    text = _flat(text_of(pdf))
    assert "Figures changed between a check and signing" in text
    assert f"rating {judged:g} kPa (the register read 1000 kPa at signing)" in text
    first_page = _flat(text_of(pdf).split("\f")[0])
    assert "Figures changed between a check and signing" in first_page
    assert f"hose {hose.label} rating (drop" in first_page
    report = verify_pdf(pdf)
    assert report.ok, report.lines()
    assert daily_records.verify_against_database(record) == []


def test_a_record_sealed_in_the_sixth_format_keeps_its_document_and_verifies(
    job, simple_checklists, operator, supervisor, credential, settings, tmp_path, monkeypatch
):
    """/6 sealed no figures: it is rebuilt without them to compare with the database, and
    drawn again without them to compare its pages."""
    settings.MEDIA_ROOT = tmp_path
    record, document = signed_in_format(
        "parapet.daily-record/6", job, simple_checklists, operator, supervisor, monkeypatch
    )

    assert all("judged_on" not in s for s in document["record"]["sheets"])
    pdf = render_signed_pdf(record)
    assert "Judged on" not in text_of(pdf)
    report = verify_pdf(pdf)
    assert report.ok, report.lines()
    assert daily_records.verify_against_database(record) == []


def test_a_changed_judged_figure_in_the_database_is_found(
    closed_job, supervisor, settings, tmp_path
):
    """The sealed figures are compared with the sheet's stored ones like every other row (an
    edit by raw SQL, behind the ORM's append-only guard)."""
    from django.db import connection

    settings.MEDIA_ROOT = tmp_path
    record = sign_daily_record(
        job=closed_job, by=supervisor, password=PASSWORD, meaning="reviewed_safe"
    )
    sheet = closed_job.sheets.get(equipment=_hose(closed_job))
    drop = str(closed_job.drops.get().pk)
    with connection.cursor() as cursor:
        cursor.execute(
            "UPDATE checklists_checksheet SET judged_on = %s WHERE id = %s",
            [json.dumps({drop: {"equipment.rating_kpa": 99999}}), sheet.pk],
        )

    assert any("judged_on" in path for path in daily_records.verify_against_database(record))


def test_a_rating_stored_a_hair_apart_is_the_same_rating(
    closed_job, supervisor, settings, tmp_path
):
    """2500.0000000001 kPa is the 2500 kPa the check read: the day read "judged with 2500 kPa;
    it now reads 2500 kPa: check it again" and safe was refused."""
    settings.MEDIA_ROOT = tmp_path
    hose = _hose(closed_job)
    update_equipment(
        item=hose,
        by=supervisor,
        reason="Typed again.",
        ratings={**hose.ratings, "rating_kpa": hose.ratings["rating_kpa"] + 1e-10},
    )

    record = sign_daily_record(
        job=closed_job, by=supervisor, password=PASSWORD, meaning="reviewed_safe"
    )

    assert "Figures changed" not in text_of(render_signed_pdf(record))


def test_a_small_real_change_prints_figures_that_differ(closed_job, supervisor, settings, tmp_path):
    settings.MEDIA_ROOT = tmp_path
    hose = _hose(closed_job)
    judged = hose.ratings["rating_kpa"]
    update_equipment(
        item=hose,
        by=supervisor,
        reason="Re-rated.",
        ratings={**hose.ratings, "rating_kpa": judged + 0.001},
    )

    record = sign_daily_record(
        job=closed_job,
        by=supervisor,
        password=PASSWORD,
        meaning="reviewed_exceptions",
        remarks="Re-rated.",
    )

    text = _flat(text_of(render_signed_pdf(record)))
    assert f"(the register read {judged + 0.001!r} kPa at signing)" in text


@pytest.mark.parametrize(
    ("a", "b", "same", "texts"),
    [
        (2500, 2500.0000000001, True, ("2500", "2500")),
        (2500, 2500.0, True, ("2500", "2500")),
        (30, 30.0001, False, ("30", "30.0001")),
        (30, 10, False, ("30", "10")),
        ("II", "III", False, ("II", "III")),
        (True, 1, True, ("True", "1")),
    ],
)
def test_figures_are_compared_to_within_a_hair_and_printed_apart_when_they_differ(
    a, b, same, texts
):
    from compliance.engineering.working import same_figure, told_apart

    assert same_figure(a, b) is same
    assert told_apart(a, b) == texts

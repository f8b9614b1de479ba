"""The tamper matrix: each forgery is caught with its reason; each routine change is not flagged.

Forgeries are made the way an insider with the database (and, in the worst case, a copied
signing key) would make them: by raw SQL behind the ORM's append-only guard.
"""

import datetime as dt
import hashlib
import io
import json
import shutil
import subprocess

import pytest
from django.db import connection

from compliance import clock
from compliance.models import DailyRecord, Equipment, RecordChainHead, SiteGrant
from compliance.records.checks import verify_pdf
from compliance.records.files import render_signed_pdf
from compliance.records.sealing import canonical_bytes, seal_of
from compliance.records.services import sign_daily_record, verify_chain
from compliance.records.signing import KeyMaterial, create_self_signed, sign_seal
from compliance.registers.services import record_certification
from tests.conftest import fill_all
from tests.factories import (
    PASSWORD,
    EquipmentFactory,
    JobFactory,
    OrganisationFactory,
    UserFactory,
    make_drop,
)
from tests.records.conftest import next_day_job

pytestmark = pytest.mark.django_db


def _sql(statement, params):
    with connection.cursor() as cursor:
        cursor.execute(statement, params)


def _verify(record):
    record = DailyRecord.objects.get(pk=record.pk)
    return verify_pdf(render_signed_pdf(record))


@pytest.fixture
def three_days(signed, simple_checklists, operator, supervisor):
    records = [signed]
    for days in (1, 2):
        job = next_day_job(signed.job, simple_checklists, operator, days)
        records.append(
            sign_daily_record(job=job, by=supervisor, password=PASSWORD, meaning="reviewed_safe")
        )
    return records


# -- Columns outside the canonical text are sealed too -------------------------------------


@pytest.mark.parametrize(
    ("column", "value", "named"),
    [
        ("signer_name", "'Someone Else'", "signer_name"),
        ("meaning", "'Reviewed: all fine.'", "meaning"),
        ("signed_at", "'2020-01-01 00:00:00+00:00'", "signed_at"),
        ("signer_role", "'admin'", "signer_role"),
    ],
)
def test_an_edited_column_outside_the_text_is_caught(signed, column, value, named):
    _sql(f"UPDATE compliance_dailyrecord SET {column} = {value} WHERE id = %s", [signed.pk])
    report = _verify(signed)
    assert not report.ok
    assert report.first_failure.name == "stored_columns_sealed"
    assert named in report.first_failure.detail


def test_another_signer_put_in_the_signer_column_is_caught(signed, job):
    other = UserFactory(organisation=job.organisation, role="supervisor")
    _sql("UPDATE compliance_dailyrecord SET signer_id = %s WHERE id = %s", [other.pk, signed.pk])
    report = _verify(signed)
    assert report.first_failure.name == "stored_columns_sealed"
    assert "signer" in report.first_failure.detail


def test_a_record_moved_to_another_tenant_is_caught(signed):
    other = OrganisationFactory()
    theirs = create_self_signed(organisation=other)
    _sql(
        "UPDATE compliance_dailyrecord SET organisation_id = %s, credential_id = %s WHERE id = %s",
        [other.pk, theirs.pk, signed.pk],
    )
    report = _verify(signed)
    assert not report.ok
    # The stored key is now the other tenant's, but the PDF and the sealed text name the first.
    assert report.first_failure.name in (
        "signer_is_organisation",
        "stored_record_intact",
        "signer_is_the_records_organisation",
    )


def test_a_record_moved_with_its_own_key_is_caught_by_the_sealed_organisation(signed):
    other = OrganisationFactory()
    _sql(
        "UPDATE compliance_signingcredential SET organisation_id = %s WHERE id = %s",
        [other.pk, signed.credential_id],
    )
    _sql(
        "UPDATE compliance_dailyrecord SET organisation_id = %s WHERE id = %s",
        [other.pk, signed.pk],
    )
    report = _verify(signed)
    assert report.first_failure.name == "stored_columns_sealed"
    assert "organisation" in report.first_failure.detail


# -- Truncation and the signed chain head ----------------------------------------------------


def test_the_head_is_signed_at_each_append(three_days):
    head = RecordChainHead.objects.get(
        organisation_id=three_days[0].organisation_id, site_id=three_days[0].site_id
    )
    assert (head.sequence, head.seal) == (3, three_days[2].seal)
    assert json.loads(head.statement)["sequence"] == 3
    assert verify_chain(head.organisation_id, head.site_id).ok


def test_deleting_the_last_day_is_caught(three_days):
    _sql("DELETE FROM compliance_dailyrecord WHERE id = %s", [three_days[2].pk])
    chain = verify_chain(three_days[0].organisation_id, three_days[0].site_id)
    assert chain.first_break.code == "truncated"
    assert "records 3 to 3 were removed" in chain.first_break.message
    report = _verify(three_days[1])
    assert report.first_failure.name == "chain_intact"


def test_deleting_a_middle_day_is_caught(three_days):
    _sql("DELETE FROM compliance_dailyrecord WHERE id = %s", [three_days[1].pk])
    report = _verify(three_days[0])
    assert report.first_failure.name == "chain_intact"
    assert "missing" in report.first_failure.detail


def test_a_deleted_day_whose_pdf_an_auditor_holds_is_not_stored(three_days):
    """Rolling the head back to an earlier signed head hides a deletion from the chain check;
    the deleted day's own PDF then answers that no such record is stored."""
    pdf = render_signed_pdf(three_days[2])
    earlier = RecordChainHead.objects.get(organisation_id=three_days[0].organisation_id)
    _sql("DELETE FROM compliance_dailyrecord WHERE id = %s", [three_days[2].pk])
    _sql(
        "UPDATE compliance_recordchainhead SET sequence = 2, seal = %s WHERE id = %s",
        [three_days[1].seal, earlier.pk],
    )
    report = verify_pdf(pdf)
    assert report.first_failure.name == "record_stored"


def test_a_forged_head_is_caught(three_days):
    head = RecordChainHead.objects.get(organisation_id=three_days[0].organisation_id)
    _sql(
        "UPDATE compliance_recordchainhead SET sequence = 2, seal = %s WHERE id = %s",
        [three_days[1].seal, head.pk],
    )
    _sql("DELETE FROM compliance_dailyrecord WHERE id = %s", [three_days[2].pk])
    chain = verify_chain(head.organisation_id, head.site_id)
    assert chain.first_break.code == "head_forged"


# -- A copied (leaked) key, after the organisation replaced it -------------------------------


def _rewrite(record, credential, **changes):
    """Rewrite a record's text and seal and sign the new seal with `credential`'s key."""
    document = json.loads(record.canonical_json)
    document["remarks"] = "Rewritten after the fact."
    document["signature"].update(changes)
    seal = seal_of(document)
    _sql(
        "UPDATE compliance_dailyrecord SET canonical_json = %s, seal = %s, seal_signature = %s"
        " WHERE id = %s",
        [canonical_bytes(document).decode(), seal, sign_seal(seal, credential), record.pk],
    )
    return seal


def test_a_middle_day_rewritten_with_a_leaked_key_breaks_the_chain(three_days, credential):
    _rewrite(three_days[1], credential)
    chain = verify_chain(three_days[0].organisation_id, three_days[0].site_id)
    assert chain.first_break.code == "broken_link"
    assert chain.first_break.sequence == 3


def test_the_last_day_rewritten_with_a_replaced_key_is_caught(three_days, credential, job):
    create_self_signed(organisation=job.organisation)  # the organisation replaces its key
    seal = _rewrite(three_days[2], credential)
    head = RecordChainHead.objects.get(organisation_id=job.organisation_id)
    from compliance.records.signing import sign_chain_head

    sign_chain_head(head, credential, sequence=3, seal=seal)  # the head too, with the old key
    chain = verify_chain(job.organisation_id, job.site_id)
    assert chain.first_break.code == "head_old_key"


def test_a_record_claiming_a_time_after_its_key_was_replaced_is_caught(signed, credential, job):
    create_self_signed(organisation=job.organisation)
    later = dt.datetime.now(dt.UTC) + dt.timedelta(days=3)
    _sql("UPDATE compliance_dailyrecord SET signed_at = %s WHERE id = %s", [later, signed.pk])
    report = _verify(signed)
    assert report.first_failure.name == "key_in_use_when_signed"


def test_replacing_the_key_leaves_every_record_verified(three_days, job):
    create_self_signed(organisation=job.organisation)
    head = RecordChainHead.objects.get(organisation_id=job.organisation_id)
    assert head.credential.active
    for record in three_days:
        assert _verify(record).ok


def test_key_material_of_a_replaced_key_stays_readable(credential, job):
    create_self_signed(organisation=job.organisation)
    assert KeyMaterial.of(credential).certificate is not None


# -- Routine register work never flags an old record; a real edit always does ----------------


def _anchor_of(record):
    return record.job.drops.first().anchor


def test_renewing_an_anchor_certificate_leaves_the_record_verified(signed, supervisor):
    anchor = _anchor_of(signed)
    record_certification(
        anchor=anchor,
        by=supervisor,
        certifier="A. Tester",
        rated_capacity_kn=15.0,
        certified_on=signed.job.date + dt.timedelta(days=1),
        valid_until=signed.job.date + dt.timedelta(days=366),
    )
    assert _verify(signed).ok


def test_changing_equipment_registers_leaves_the_record_verified(signed, job):
    drop = signed.job.drops.first()
    robot = drop.robot
    Equipment.objects.filter(pk=robot.pk).update(
        next_inspection_due=signed.job.date + dt.timedelta(days=200),
        label="Robot renamed",
        in_service=False,
    )
    EquipmentFactory(organisation=job.organisation, kind="hose")
    assert _verify(signed).ok


def test_renaming_people_and_the_site_leaves_the_record_verified(signed, supervisor, operator):
    for user in (supervisor, operator):
        user.first_name = "Renamed"
        user.save()
    site = signed.site
    site.name = "Tower with a new name"
    site.save()
    assert _verify(signed).ok


def test_a_new_profile_revision_leaves_the_record_verified(signed):
    profile = signed.site.profile
    profile.thresholds = {**profile.thresholds, "wind_mean_max_ms": 9.0}
    profile.content_hash = "0" * 64
    profile.save()
    assert _verify(signed).ok


def test_editing_a_sealed_reading_is_caught(signed):
    entry = signed.job.sheets.first().entries.first()
    _sql(
        "UPDATE checklists_itementry SET message = 'edited' WHERE id = %s",
        [entry.pk],
    )
    report = _verify(signed)
    assert report.first_failure.name == "rows_unchanged"


def test_editing_the_certificate_in_force_is_caught(signed):
    cert = _anchor_of(signed).certifications.first()
    _sql(
        "UPDATE compliance_anchorcertification SET valid_until = '2099-01-01' WHERE id = %s",
        [cert.pk],
    )
    report = _verify(signed)
    assert report.first_failure.name == "rows_unchanged"
    assert "certification" in report.first_failure.detail


# -- One chain per contractor per site -------------------------------------------------------


def test_two_contractors_at_one_building_keep_separate_chains(
    signed, simple_checklists, operator, job
):
    other = OrganisationFactory()
    create_self_signed(organisation=other)
    SiteGrant.objects.create(
        site=job.site,
        contractor=other,
        starts_on=job.date - dt.timedelta(days=30),
        ends_on=job.date + dt.timedelta(days=30),
        granted_by=job.supervisor,
    )
    boss = UserFactory(organisation=other, role="supervisor")
    crew = UserFactory(organisation=other, role="operator")
    theirs = JobFactory(site=job.site, organisation=other, supervisor=boss, date=job.date)
    make_drop(theirs)
    fill_all(theirs, simple_checklists, crew)
    from compliance.jobs.services import close_job, start_job

    with clock.replaying(theirs.date):
        start_job(job=theirs, by=crew)
        close_job(job=theirs, by=crew)
    record = sign_daily_record(job=theirs, by=boss, password=PASSWORD, meaning="reviewed_safe")
    assert (record.sequence, record.previous_seal) == (1, "")
    assert (signed.sequence, signed.previous_seal) == (1, "")
    assert verify_chain(other.pk, job.site_id).records == 1
    assert verify_chain(job.organisation_id, job.site_id).records == 1
    mine, theirs_report = _verify(signed), _verify(record)
    assert mine.ok, mine.as_dict()
    assert theirs_report.ok, theirs_report.as_dict()


# -- Pages that say something other than the sealed record -----------------------------------


def _false_pages(record, change, *, overlay: str | None = None) -> bytes:
    """The genuine attachment and seal under pages drawn from an altered copy, signed with the
    organisation's own key (an insider at the signing service)."""
    from pypdf import PdfReader, PdfWriter
    from pypdf.annotations import FreeText

    from compliance.records.pdf import ATTACHMENT_NAME, render
    from compliance.records.signing import sign_pdf

    genuine = json.loads(record.canonical_json)
    altered = json.loads(record.canonical_json)
    change(altered)
    reader = PdfReader(io.BytesIO(render(altered, record.seal)))
    writer = PdfWriter()
    for page in reader.pages:
        writer.add_page(page)
    writer.add_attachment(ATTACHMENT_NAME, canonical_bytes(genuine))
    if overlay:
        writer.add_annotation(0, FreeText(text=overlay, rect=(50, 700, 400, 750)))
    out = io.BytesIO()
    writer.write(out)
    return sign_pdf(out.getvalue(), record.credential, signer_name="x", reason="x", location="x")


def _remarks(doc):
    doc["remarks"] = "All anchors re-certified today; no defects."


def _signer(doc):
    doc["signature"]["name"] = "Chief Engineer"


def _state(doc):
    doc["record"]["job"]["state"] = "working"


def _nothing(doc):
    pass


@pytest.mark.parametrize(
    ("change", "overlay"),
    [(_remarks, None), (_signer, None), (_state, None), (_nothing, "Passed: no holds")],
    ids=["remarks", "signer", "job-state", "overlaid-note"],
)
def test_pages_that_say_something_else_are_caught(signed, change, overlay, tmp_path):
    forged = _false_pages(signed, change, overlay=overlay)
    report = verify_pdf(forged)
    assert not report.ok
    assert report.first_failure.name == "pages_match_record"
    # The signature itself is sound: a signature check alone would have passed this file.
    names = [c.name for c in report.checks if c.ok]
    assert {"signature_valid", "signature_covers_file", "seal_matches"} <= set(names)
    if shutil.which("pdfsig") is None:
        pytest.fail("pdfsig (poppler-utils) is missing: make test installs it")
    path = tmp_path / "forged.pdf"
    path.write_bytes(forged)
    out = subprocess.run(["pdfsig", str(path)], capture_output=True, text=True).stdout
    assert "Signature is Valid." in out


def test_the_genuine_pages_match_offline_too(signed, signed_pdf):
    report = verify_pdf(signed_pdf, use_database=False)
    check = next(c for c in report.checks if c.name == "pages_match_record")
    assert check.ok


def test_a_pass_written_into_the_database_for_lying_pages_is_not_believed(signed):
    """The kept page checks are a cache an insider could write to: a row for a forged file,
    without the server's HMAC, is ignored; the pages are drawn again and the lie is caught."""
    from compliance.records.checks import PAGE_CHECK_METHOD

    forged = _false_pages(signed, _remarks)
    digest = hashlib.sha256(forged).hexdigest()
    _sql(
        "INSERT INTO compliance_pagecheck (pdf_sha256, seal, method, checked_at, mac)"
        " VALUES (%s, %s, %s, %s, %s)",
        [digest, signed.seal, PAGE_CHECK_METHOD, dt.datetime.now(dt.UTC), "0" * 64],
    )
    report = verify_pdf(forged)
    assert not report.ok
    assert report.first_failure.name == "pages_match_record"


def test_a_failed_page_check_is_never_kept_and_a_pass_is_kept_once(signed, signed_pdf):
    from compliance.models import PageCheck

    verify_pdf(_false_pages(signed, _signer))
    assert PageCheck.objects.count() == 0
    assert verify_pdf(signed_pdf).ok
    assert verify_pdf(signed_pdf).ok
    kept = PageCheck.objects.get()
    assert kept.pdf_sha256 == hashlib.sha256(signed_pdf).hexdigest() and kept.seal == signed.seal

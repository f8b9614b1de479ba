"""Every way a record can be tampered with is detected and reported with the right reason."""

import hashlib
import io
import json
import shutil
import subprocess
import zipfile

import pytest
import rfc8785
from django.core.management import call_command
from django.db import connection
from django.urls import reverse
from PIL import Image
from pypdf import PdfReader

from compliance.models import DailyRecord
from compliance.records.checks import TrustList, verify_export, verify_pdf
from compliance.records.exports import build_export, export_scope
from compliance.records.files import ensure_pdf
from compliance.records.pdf import ATTACHMENT_NAME, render
from compliance.records.sealing import merkle_root, seal_of
from compliance.records.services import sign_daily_record, verify_chain
from compliance.records.signing import create_self_signed, sign_pdf, sign_seal
from tests.conftest import client_for
from tests.factories import PASSWORD, OrganisationFactory
from tests.records.conftest import next_day_job

pytestmark = pytest.mark.django_db


def failed(report):
    return report.first_failure.name


def export_of(record, start, end):
    """The export its own signer would download for the record's site and a period."""
    for stored in DailyRecord.objects.filter(site_id=record.site_id):
        ensure_pdf(stored)  # rendered on commit in the app; tests run inside one transaction
    scope = export_scope(user=record.signer, site_id=record.site_id)
    return build_export(scope=scope, by=record.signer, start=start, end=end)


def test_published_hash_vectors():
    # FIPS 180-4 / NIST's published SHA-256 examples (from memory): SHA-256("abc")
    assert hashlib.sha256(b"abc").hexdigest() == (
        "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
    )
    assert hashlib.sha256(b"").hexdigest() == (
        "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855"
    )


def test_canonical_json_follows_rfc8785():
    # RFC 8785 section 3.2.2 example (input and output recalled from memory)
    source = (
        '{"numbers": [333333333.33333329, 1E30, 4.50, 2e-3, 0.000000000000000000000000001], '
        '"string": "\\u20ac$\\u000F\\u000aA\'\\u0042\\u0022\\u005c\\\\\\"\\/", '
        '"literals": [null, true, false]}'
    )
    expected = (
        '{"literals":[null,true,false],"numbers":[333333333.3333333,1e+30,4.5,0.002,1e-27],'
        '"string":"€$\\u000f\\nA\'B\\"\\\\\\\\\\"/"}'
    )
    assert rfc8785.dumps(json.loads(source)).decode() == expected
    assert seal_of(json.loads(source)) == hashlib.sha256(expected.encode()).hexdigest()


def test_merkle_root_follows_rfc6962():
    # RFC 6962 section 2.1: MTH({}) = SHA-256(); MTH({d}) = SHA-256(0x00 || d);
    # MTH(D[n]) = SHA-256(0x01 || MTH(D[0:k]) || MTH(D[k:n])), k the largest power of two < n.
    a, b, c = b"a", b"b", b"c"
    leaf = [hashlib.sha256(b"\x00" + x).digest() for x in (a, b, c)]
    ab = hashlib.sha256(b"\x01" + leaf[0] + leaf[1]).digest()
    assert merkle_root([]) == hashlib.sha256(b"").hexdigest()
    assert merkle_root([a]) == leaf[0].hex()
    assert merkle_root([a, b, c]) == hashlib.sha256(b"\x01" + ab + leaf[2]).hexdigest()


def test_a_genuine_record_verifies(signed, signed_pdf):
    report = verify_pdf(signed_pdf)
    assert report.ok, report.as_dict()
    assert report.seal == signed.seal
    assert report.verdict().startswith("VERIFIED")
    names = [c.name for c in report.checks]
    assert names == [
        "pdf_readable",
        "signature_valid",
        "signature_covers_file",
        "record_attached",
        "seal_matches",
        "signer_is_organisation",
        "pages_match_record",
        "record_stored",
        "stored_record_intact",
        "signer_is_the_records_organisation",
        "stored_columns_sealed",
        "rows_unchanged",
        "chain_intact",
        "signer_vouched",
    ]
    assert report.signer.fingerprint_sha256 == signed.credential.fingerprint_sha256
    assert report.signer.organisation == signed.organisation.name
    assert signed.credential.fingerprint_sha256 in report.verdict()


@pytest.mark.parametrize("where", [0.0, 0.001, 0.25, 0.5, 0.75, 0.97, 0.9999])
def test_flipping_one_byte_anywhere_is_detected(signed_pdf, where):
    data = bytearray(signed_pdf)
    position = min(int(len(data) * where), len(data) - 1)
    data[position] ^= 0x01
    report = verify_pdf(bytes(data))
    assert not report.ok, position
    assert failed(report) in {
        "pdf_readable",
        "signature_present",
        "signature_valid",
        "signature_covers_file",
    }, (position, report.as_dict())


def test_a_changed_byte_in_the_signature_padding_is_detected(signed_pdf):
    """The /Contents hex string sits outside the signed byte range; its padding is checked too."""
    reader = PdfReader(io.BytesIO(signed_pdf))
    _, _, start2, _ = reader.get_fields()["DailyRecordSignature"]["/V"]["/ByteRange"]
    padding_at = start2 - 5  # inside the trailing zeros of the hex container
    assert signed_pdf[padding_at : padding_at + 1] == b"0"
    for replacement in (b"1", b"A"):
        data = bytearray(signed_pdf)
        data[padding_at : padding_at + 1] = replacement
        report = verify_pdf(bytes(data))
        assert failed(report) == "signature_valid"
        assert "container" in report.verdict()


def test_the_signature_byte_range_covers_the_whole_file(signed_pdf):
    reader = PdfReader(io.BytesIO(signed_pdf))
    field = reader.get_fields()["DailyRecordSignature"]["/V"]
    start1, _, start2, len2 = field["/ByteRange"]
    assert start1 == 0 and start2 + len2 == len(signed_pdf)


def test_editing_the_attached_json_is_detected(signed, credential):
    """An insider with the signing key edits a reading and re-signs: the seal no longer matches."""
    document = json.loads(signed.canonical_json)
    entry = document["record"]["sheets"][0]["entries"][0]
    entry["value"] = "pass" if entry["value"] != "pass" else "fail"
    forged = sign_pdf(
        render(document, signed.seal), credential, signer_name="x", reason="x", location="x"
    )
    report = verify_pdf(forged)
    assert failed(report) == "seal_matches"
    assert "edited" in report.verdict()


def test_a_pdf_signed_with_another_key_is_not_trusted(signed):
    outsider = create_self_signed(organisation=OrganisationFactory())
    known = [signed.credential.certificate_pem]
    pdf = sign_pdf(
        render(json.loads(signed.canonical_json), signed.seal),
        outsider,
        signer_name="x",
        reason="x",
        location="x",
    )
    report = verify_pdf(pdf, trusted_pems=known, use_database=False)
    # The outsider's certificate names its own organisation, not the record's: refused before
    # the trust list is even asked (it would not vouch for it either).
    assert failed(report) == "signer_is_organisation"
    assert not report.ok and "signed with a certificate of" in report.verdict()
    trusted_too = verify_pdf(
        pdf, trusted_pems=[*known, outsider.certificate_pem], use_database=False
    )
    assert failed(trusted_too) == "signer_is_organisation"


def test_a_record_signed_with_another_organisations_registered_key_is_refused(signed):
    """Another tenant's genuine, registered key over this record's genuine pages and seal."""
    other = create_self_signed(organisation=OrganisationFactory())
    pdf = sign_pdf(
        render(json.loads(signed.canonical_json), signed.seal),
        other,
        signer_name="x",
        reason="x",
        location="x",
    )
    report = verify_pdf(pdf)
    assert failed(report) == "signer_is_organisation"
    assert not report.ok


def test_offline_the_verdict_claims_nothing_of_the_chain_it_did_not_check(signed, signed_pdf):
    """Offline, with a trust list, VERIFIED said "its place in the chain is intact" of a single
    PDF: no chain is read offline. On the server, where the chain is checked, it says so."""
    trusted = [signed.credential.certificate_pem]

    offline = verify_pdf(signed_pdf, trusted_pems=trusted, use_database=False)
    online = verify_pdf(signed_pdf)

    assert offline.ok and online.ok
    assert "chain" not in offline.verdict()
    assert "its place in its organisation's chain is intact" in online.verdict()


def test_without_a_trust_anchor_the_answer_is_integrity_only(signed, signed_pdf):
    report = verify_pdf(signed_pdf, use_database=False)
    assert report.intact and not report.ok and not report.vouched
    assert report.verdict().startswith("INTEGRITY INTACT, SIGNER NOT VOUCHED FOR")
    assert "VERIFIED:" not in report.verdict()
    assert signed.credential.fingerprint_sha256 in report.verdict()


def test_a_well_formed_record_unknown_to_the_database_is_reported(signed, credential):
    document = json.loads(signed.canonical_json)
    document["remarks"] = "never stored"
    seal = seal_of(document)
    pdf = sign_pdf(render(document, seal), credential, signer_name="x", reason="x", location="x")
    report = verify_pdf(pdf)
    assert failed(report) == "record_stored"


def test_editing_a_row_behind_a_sealed_record_is_detected(signed, signed_pdf):
    with connection.cursor() as cursor:
        cursor.execute(
            "UPDATE checklists_itementry SET verdict = 'fail' WHERE id = "
            "(SELECT MIN(id) FROM checklists_itementry)"
        )
    report = verify_pdf(signed_pdf)
    assert failed(report) == "rows_unchanged"
    assert "entries[0].verdict" in report.verdict()


def test_editing_the_stored_canonical_json_is_detected(signed, signed_pdf):
    with connection.cursor() as cursor:
        cursor.execute(
            "UPDATE compliance_dailyrecord SET canonical_json = REPLACE(canonical_json, "
            "'All drops done.', 'Nothing done.') WHERE id = %s",
            [signed.pk],
        )
    assert failed(verify_pdf(signed_pdf)) == "stored_record_intact"
    assert verify_chain(signed.organisation_id, signed.site_id).first_break.code == "altered"


def _three_days(signed, simple_checklists, operator, supervisor):
    records = [signed]
    for days in (1, 2):
        job = next_day_job(signed.job, simple_checklists, operator, days)
        records.append(
            sign_daily_record(job=job, by=supervisor, password=PASSWORD, meaning="reviewed_safe")
        )
    return records


def test_the_chain_links_each_day_to_the_one_before(
    signed, simple_checklists, operator, supervisor
):
    records = _three_days(signed, simple_checklists, operator, supervisor)
    assert [r.sequence for r in records] == [1, 2, 3]
    assert (
        records[1].previous_seal == records[0].seal and records[2].previous_seal == records[1].seal
    )
    assert verify_chain(signed.organisation_id, signed.site_id).ok


def test_deleting_a_day_is_detected(signed, simple_checklists, operator, supervisor):
    records = _three_days(signed, simple_checklists, operator, supervisor)
    with connection.cursor() as cursor:
        cursor.execute("DELETE FROM compliance_dailyrecord WHERE id = %s", [records[1].pk])
    first = verify_chain(signed.organisation_id, signed.site_id).first_break
    assert (first.code, first.sequence) == ("missing", 3)


def test_reordering_days_is_detected(signed, simple_checklists, operator, supervisor):
    records = _three_days(signed, simple_checklists, operator, supervisor)
    with connection.cursor() as cursor:
        cursor.execute(
            "UPDATE compliance_dailyrecord SET sequence = 99 WHERE id = %s", [records[1].pk]
        )
        cursor.execute(
            "UPDATE compliance_dailyrecord SET sequence = 2 WHERE id = %s", [records[2].pk]
        )
        cursor.execute(
            "UPDATE compliance_dailyrecord SET sequence = 3 WHERE id = %s", [records[1].pk]
        )
    first = verify_chain(signed.organisation_id, signed.site_id).first_break
    assert first.sequence == 2 and first.code == "altered"


def test_an_export_verifies_offline(
    signed, simple_checklists, operator, supervisor, tmp_path, settings
):
    settings.MEDIA_ROOT = tmp_path
    records = _three_days(signed, simple_checklists, operator, supervisor)
    start, end = records[0].job.date, records[-1].job.date
    data = export_of(signed, start, end)
    trust = TrustList(fingerprints=frozenset({signed.credential.fingerprint_sha256}))
    report = verify_export(data, trust=trust)
    assert report.ok, report.as_dict()
    assert sum(c.name.startswith("file:") for c in report.checks) == 3
    assert verify_export(data, use_database=True).ok
    alone = verify_export(data)
    assert alone.intact and not alone.ok
    assert alone.verdict().startswith("INTEGRITY INTACT, SIGNER NOT VOUCHED FOR")
    # the same check from the command line, with no database rows at all
    path = tmp_path / "export.zip"
    path.write_bytes(data)
    from compliance.models import DailyRecord

    with connection.cursor() as cursor:
        cursor.execute("DELETE FROM compliance_recordpdf")
        cursor.execute("DELETE FROM compliance_dailyrecord")
    assert not DailyRecord.objects.exists()
    assert verify_export(path.read_bytes(), trust=trust).ok


def _rezip(data: bytes, change) -> bytes:
    source = zipfile.ZipFile(io.BytesIO(data))
    files = {name: source.read(name) for name in source.namelist()}
    change(files)
    out = io.BytesIO()
    with zipfile.ZipFile(out, "w") as archive:
        for name, content in files.items():
            archive.writestr(name, content)
    return out.getvalue()


def test_a_tampered_export_is_detected(
    signed, simple_checklists, operator, supervisor, tmp_path, settings
):
    settings.MEDIA_ROOT = tmp_path
    records = _three_days(signed, simple_checklists, operator, supervisor)
    data = export_of(signed, records[0].job.date, records[-1].job.date)

    def drop_middle(files):
        manifest = json.loads(files["manifest.json"])
        manifest["chains"][0]["records"].pop(1)
        manifest["merkle_root"] = merkle_root(
            [bytes.fromhex(e["seal"]) for e in manifest["chains"][0]["records"]]
        )
        files["manifest.json"] = json.dumps(manifest).encode()

    def drop_only_entry(files):
        manifest = json.loads(files["manifest.json"])
        manifest["chains"][0]["records"].pop(1)
        files["manifest.json"] = json.dumps(manifest).encode()

    def swap_pdf(files):
        names = sorted(n for n in files if n.endswith(".pdf"))
        files[names[0]], files[names[1]] = files[names[1]], files[names[0]]

    assert failed(verify_export(_rezip(data, drop_only_entry))) == "manifest"
    assert failed(verify_export(_rezip(data, drop_middle))) == "manifest"
    assert failed(verify_export(_rezip(data, swap_pdf))).startswith("file:")
    assert "swapped" in verify_export(_rezip(data, swap_pdf)).verdict()


def _forge(data: bytes, outsider, *, resign_first_pdf: bool) -> bytes:
    """An export rebuilt with a self-made key: manifest re-signed, certificates replaced, and
    (optionally) one day's PDF re-signed after its pages were rewritten."""

    def change(files):
        manifest = json.loads(files["manifest.json"])
        if resign_first_pdf:
            entry = manifest["chains"][0]["records"][0]
            reader = PdfReader(io.BytesIO(files[entry["file"]]))
            document = json.loads(reader.attachments[ATTACHMENT_NAME][0])
            pdf = sign_pdf(
                render(document, entry["seal"]),
                outsider,
                signer_name="x",
                reason="x",
                location="x",
            )
            files[entry["file"]] = pdf
            entry["file_sha256"] = hashlib.sha256(pdf).hexdigest()
        chain = manifest["chains"][0]
        chain["certificates"] = sorted({*chain["certificates"], outsider.certificate_pem})
        raw = rfc8785.dumps(manifest)
        files["manifest.json"] = raw
        files["manifest.sig.json"] = json.dumps(
            {
                "signature": sign_seal(hashlib.sha256(raw).hexdigest(), outsider),
                "certificate_pem": outsider.certificate_pem,
            }
        ).encode()

    return _rezip(data, change)


def test_an_export_forged_with_a_self_made_certificate_is_never_verified(
    signed, simple_checklists, operator, supervisor, tmp_path, settings
):
    """Before, the verifier trusted whatever certificates the file carried: VERIFIED."""
    settings.MEDIA_ROOT = tmp_path
    records = _three_days(signed, simple_checklists, operator, supervisor)
    data = export_of(signed, records[0].job.date, records[-1].job.date)
    outsider = create_self_signed(organisation=OrganisationFactory())
    trust = TrustList(fingerprints=frozenset({signed.credential.fingerprint_sha256}))
    for resign in (False, True):
        forged = _forge(data, outsider, resign_first_pdf=resign)
        alone = verify_export(forged)
        assert not alone.ok and not alone.verdict().startswith("VERIFIED"), resign
        assert (
            outsider.fingerprint_sha256 in alone.verdict()
            or "signed with a certificate of" in alone.verdict()
        )
        assert not verify_export(forged, trust=trust).ok, resign
        assert not verify_export(forged, use_database=True).ok, resign
    checked = verify_export(_forge(data, outsider, resign_first_pdf=True), trust=trust)
    assert failed(checked).startswith("file:")
    assert "signed with a certificate of" in checked.verdict() or "not in" in checked.verdict()


def test_pdf_reads_back_with_general_purpose_tools(signed, signed_pdf, tmp_path):
    reader = PdfReader(io.BytesIO(signed_pdf))
    text = "\n".join(page.extract_text() for page in reader.pages)
    assert "Daily record" in text and signed.job.site.name in text
    assert signed.seal in text.replace("\n", "")
    assert "does not replace" in text
    assert f"Page 1 of {len(reader.pages)}" in text
    attached = reader.attachments[ATTACHMENT_NAME][0]
    assert hashlib.sha256(attached).hexdigest() == signed.seal
    path = tmp_path / "record.pdf"
    path.write_bytes(signed_pdf)
    if shutil.which("pdftoppm") is None:
        pytest.fail("pdftoppm (poppler-utils) is missing: make test installs it")
    subprocess.run(
        ["pdftoppm", "-r", "50", "-png", "-f", "1", "-l", "1", str(path), str(tmp_path / "page")],
        check=True,
    )
    with Image.open(next(tmp_path.glob("page*.png"))) as page:
        assert page.width > 300 and page.height > 400
        low, high = page.convert("L").getextrema()
        assert high - low > 100  # ink on paper, not a blank page


def test_pdfsig_an_independent_reader_accepts_the_signature(signed_pdf, tmp_path):
    if shutil.which("pdfsig") is None:
        pytest.fail("pdfsig (poppler-utils) is missing: make test installs it")
    path = tmp_path / "record.pdf"
    path.write_bytes(signed_pdf)
    out = subprocess.run(["pdfsig", str(path)], capture_output=True, text=True).stdout
    assert "Signature is Valid." in out and "Total document signed" in out
    tampered = bytearray(signed_pdf)
    tampered[len(tampered) // 3] ^= 0x01
    path.write_bytes(bytes(tampered))
    out = subprocess.run(["pdfsig", str(path)], capture_output=True, text=True).stdout
    assert "Signature is Valid." not in out


def test_verification_upload_and_command(signed, signed_pdf, tmp_path, capsys):
    from django.core.files.uploadedfile import SimpleUploadedFile
    from django.core.management import call_command

    from tests.factories import UserFactory

    auditor = UserFactory(organisation=signed.organisation, role="auditor")
    client = client_for(auditor)
    upload = SimpleUploadedFile("r.pdf", signed_pdf, content_type="application/pdf")
    body = client.post(reverse("verify"), {"file": upload}, format="multipart").json()
    assert body["ok"] is True and body["seal"] == signed.seal
    broken = bytearray(signed_pdf)
    broken[len(broken) // 2] ^= 0xFF
    upload = SimpleUploadedFile("r.pdf", bytes(broken), content_type="application/pdf")
    body = client.post(reverse("verify"), {"file": upload}, format="multipart").json()
    assert body["ok"] is False and body["verdict"].startswith("NOT VERIFIED")
    path = tmp_path / "r.pdf"
    path.write_bytes(signed_pdf)
    call_command("verify-record", str(path))
    assert "VERIFIED" in capsys.readouterr().out
    path.write_bytes(bytes(broken))
    with pytest.raises(SystemExit) as exited:
        call_command("verify-record", str(path))
    assert exited.value.code == 1


def test_auditor_downloads_pdf_and_export(signed, tmp_path, settings):
    from tests.factories import UserFactory

    settings.MEDIA_ROOT = tmp_path
    auditor = UserFactory(organisation=signed.organisation, role="auditor")
    client = client_for(auditor)
    # Not rendered yet (signed inside this test's transaction): the render is queued, 202.
    assert client.get(reverse("record-pdf", args=[signed.pk])).status_code == 202
    response = client.get(reverse("record-pdf", args=[signed.pk]))
    assert response.status_code == 200 and response["Content-Type"] == "application/pdf"
    pdf = b"".join(response.streaming_content)
    assert verify_pdf(pdf).ok
    assert ensure_pdf(signed).sha256 == hashlib.sha256(pdf).hexdigest()
    day = signed.job.date.isoformat()
    response = client.get(
        reverse("record-export"), {"site": signed.site_id, "start": day, "end": day}
    )
    assert response.status_code == 200
    assert verify_export(response.content, use_database=True).ok
    bad = client.get(
        reverse("record-export"), {"site": signed.site_id, "start": "2026-13-01", "end": day}
    )
    assert bad.status_code == 400 and "start" in bad.json()


def test_the_auditor_page_shows_the_verdict(signed, signed_pdf, client):
    from django.core.files.uploadedfile import SimpleUploadedFile

    from tests.factories import UserFactory

    assert client.get("/verify/").url.startswith("/login/")  # sign in first
    auditor = UserFactory(organisation=signed.organisation, role="auditor")
    signed_in = client.post(
        "/login/?next=/verify/",
        {"username": auditor.username, "password": PASSWORD, "next": "/verify/"},
    )
    assert signed_in.status_code == 302 and signed_in.url == "/verify/"
    page = client.get("/verify/")
    assert page.status_code == 200 and b"does not" in page.content
    upload = SimpleUploadedFile("record.pdf", signed_pdf, content_type="application/pdf")
    page = client.post("/verify/", {"file": upload})
    assert b"VERIFIED" in page.content and signed.seal.encode() in page.content
    broken = bytearray(signed_pdf)
    broken[100] ^= 1
    page = client.post("/verify/", {"file": SimpleUploadedFile("r.pdf", bytes(broken))})
    assert b"NOT VERIFIED" in page.content


def test_the_command_vouches_only_with_a_trust_list(
    signed, simple_checklists, operator, supervisor, tmp_path, settings
):
    """Exit 0 VERIFIED with the organisation's fingerprints, 2 intact but unvouched without a
    trust list, 1 for a forged export against the genuine fingerprints."""
    settings.MEDIA_ROOT = tmp_path
    records = _three_days(signed, simple_checklists, operator, supervisor)
    data = export_of(signed, records[0].job.date, records[-1].job.date)
    genuine, forged = tmp_path / "export.zip", tmp_path / "forged.zip"
    genuine.write_bytes(data)
    outsider = create_self_signed(organisation=OrganisationFactory())
    forged.write_bytes(_forge(data, outsider, resign_first_pdf=True))
    prints = tmp_path / "trust.txt"
    fp = signed.credential.fingerprint_sha256
    prints.write_text(
        "# the contractor's signing certificate\n"
        + ":".join(fp[i : i + 2] for i in range(0, 64, 2)).upper()
        + "\n"
    )

    def run(*args):
        out = io.StringIO()
        try:
            call_command("verify-record", *args, "--offline", stdout=out)
        except SystemExit as exc:
            return exc.code, out.getvalue()
        return 0, out.getvalue()

    code, text = run(str(genuine), "--trust", str(prints))
    assert code == 0 and "VERIFIED:" in text and fp in text
    code, text = run(str(genuine))
    assert code == 2 and "INTEGRITY INTACT, SIGNER NOT VOUCHED FOR" in text
    code, text = run(str(forged), "--trust", str(prints))
    assert code == 1 and "NOT VERIFIED" in text
    bundle = tmp_path / "bundle.pem"
    bundle.write_text(signed.credential.certificate_pem)
    assert run(str(genuine), "--trust", str(bundle))[0] == 0


def test_an_export_whose_manifest_inflates_past_its_cap_is_refused_unread():
    """A ZIP of a few hundred KB can hold a manifest of hundreds of MB of zeros."""
    out = io.BytesIO()
    with zipfile.ZipFile(out, "w", zipfile.ZIP_DEFLATED) as archive:
        archive.writestr("manifest.json", b"0" * (60 * 1024 * 1024))
        archive.writestr("manifest.sig.json", b"{}")
    assert out.tell() < 200_000
    report = verify_export(out.getvalue())
    assert failed(report) == "manifest"
    assert "would inflate to 62914560 bytes" in report.verdict()


def test_the_command_prints_its_verdict_and_no_library_tracebacks(signed_pdf, tmp_path):
    """An auditor runs the command on a record signed with a self-made certificate: the
    verdict says what it can vouch for; the signature library's own warnings about the
    certificate (with their tracebacks) are not the auditor's to read."""
    import subprocess
    import sys
    from pathlib import Path

    path = tmp_path / "record.pdf"
    path.write_bytes(signed_pdf)
    root = Path(__file__).resolve().parents[2]
    run = subprocess.run(
        [sys.executable, "manage.py", "verify-record", str(path), "--offline"],
        cwd=root,
        capture_output=True,
        text=True,
        env={
            "PATH": "/usr/bin:/bin",
            "DJANGO_DEBUG": "true",
            "DATABASE_URL": f"sqlite:///{tmp_path / 'unused.sqlite3'}",
        },
        timeout=120,
    )
    assert run.returncode == 2, run.stderr[-1500:]
    assert "INTEGRITY INTACT, SIGNER NOT VOUCHED FOR" in run.stdout
    assert run.stderr == ""


def _certificate(subject_org, *, issuer=None, ca, document_signer):
    """A certificate and its key made here: `issuer` is (certificate, key) or None for a
    self-signed one; `document_signer` asks the key usages Parapet's signing certificates carry
    (content commitment, e-mail protection), `ca` the CA flag and certificate signing."""
    import datetime as dt

    from cryptography import x509
    from cryptography.hazmat.primitives import hashes
    from cryptography.hazmat.primitives.asymmetric import rsa
    from cryptography.x509.oid import ExtendedKeyUsageOID, NameOID

    key = rsa.generate_private_key(public_exponent=65537, key_size=2048)
    name = x509.Name(
        [
            x509.NameAttribute(NameOID.COMMON_NAME, f"{subject_org} daily records"),
            x509.NameAttribute(NameOID.ORGANIZATION_NAME, subject_org),
        ]
    )
    issuer_cert, issuer_key = issuer if issuer else (None, key)
    now = dt.datetime.now(dt.UTC)
    builder = (
        x509.CertificateBuilder()
        .subject_name(name)
        .issuer_name(issuer_cert.subject if issuer_cert else name)
        .public_key(key.public_key())
        .serial_number(x509.random_serial_number())
        .not_valid_before(now - dt.timedelta(days=2))
        .not_valid_after(now + dt.timedelta(days=365))
        .add_extension(x509.BasicConstraints(ca=ca, path_length=None), critical=True)
        .add_extension(
            x509.KeyUsage(
                digital_signature=document_signer,
                content_commitment=document_signer,
                key_encipherment=False,
                data_encipherment=False,
                key_agreement=False,
                key_cert_sign=ca,
                crl_sign=ca and not document_signer,
                encipher_only=False,
                decipher_only=False,
            ),
            critical=True,
        )
    )
    if document_signer:
        builder = builder.add_extension(
            x509.ExtendedKeyUsage([ExtendedKeyUsageOID.EMAIL_PROTECTION]), critical=False
        )
    return builder.sign(issuer_key, hashes.SHA256()), key


def _pem(cert):
    from cryptography.hazmat.primitives import serialization

    return cert.public_bytes(serialization.Encoding.PEM).decode()


def _signed_with(pdf, cert, key):
    """Signed as Parapet's signer does: the container holds the signing certificate alone (a
    chain is built from the trust list)."""
    from asn1crypto import keys as asn1_keys
    from asn1crypto import x509 as asn1_x509
    from cryptography.hazmat.primitives import serialization
    from pyhanko.pdf_utils.incremental_writer import IncrementalPdfFileWriter
    from pyhanko.sign import fields, signers
    from pyhanko_certvalidator.registry import SimpleCertificateStore

    def der(c):
        return asn1_x509.Certificate.load(c.public_bytes(serialization.Encoding.DER))

    signer = signers.SimpleSigner(
        signing_cert=der(cert),
        signing_key=asn1_keys.PrivateKeyInfo.load(
            key.private_bytes(
                serialization.Encoding.DER,
                serialization.PrivateFormat.PKCS8,
                serialization.NoEncryption(),
            )
        ),
        cert_registry=SimpleCertificateStore.from_certs([der(cert)]),
    )
    meta = signers.PdfSignatureMetadata(
        field_name="DailyRecordSignature",
        name="x",
        reason="x",
        location="x",
        subfilter=fields.SigSeedSubFilter.PADES,
        md_algorithm="sha256",
    )
    writer = IncrementalPdfFileWriter(io.BytesIO(pdf))
    return signers.PdfSigner(meta, signer=signer).sign_pdf(writer).getvalue()


def test_another_organisations_trusted_certificate_cannot_vouch_for_a_certificate_it_made(signed):
    """A second contractor at the building, whose own signing certificate the auditor trusts
    (as PEM, beside the record's organisation's), makes a certificate naming the record's
    organisation with its own key and signs an altered record with it. Parapet's signing
    certificates were made as CAs until December 2026, so the second contractor's certificate
    vouched for the one it made: VERIFIED offline."""
    document = json.loads(signed.canonical_json)
    document["remarks"] = "Re-written by another contractor."
    seal = hashlib.sha256(rfc8785.dumps(document)).hexdigest()
    organisation = signed.organisation.name
    second = _certificate("Second Crew Ltd", ca=True, document_signer=True)
    made, made_key = _certificate(organisation, issuer=second, ca=False, document_signer=True)
    pdf = _signed_with(render(document, seal), made, made_key)
    trusted = [signed.credential.certificate_pem, _pem(second[0])]

    report = verify_pdf(pdf, trusted_pems=trusted, use_database=False)

    assert not report.ok
    assert failed(report) == "signer_vouched"
    # The name in a certificate is anyone's to write: the check of it says no more than that.
    named = next(c for c in report.checks if c.name == "signer_is_organisation")
    assert named.detail == (
        f"The signing certificate names {organisation}, whose record it is; whether it is"
        f" {organisation}'s own is for the trust check."
    )
    assert report.verdict().startswith("NOT VERIFIED")


def test_a_certificate_authority_in_the_trust_list_still_vouches_for_what_it_issued(signed):
    """A CA bundle (a CA that signs certificates and no documents) keeps its role: a record
    signed with a certificate it issued to the record's organisation verifies offline."""
    document = json.loads(signed.canonical_json)
    authority = _certificate("Some Certification Authority", ca=True, document_signer=False)
    issued, issued_key = _certificate(
        signed.organisation.name, issuer=authority, ca=False, document_signer=True
    )
    pdf = _signed_with(render(document, signed.seal), issued, issued_key)

    report = verify_pdf(pdf, trusted_pems=[_pem(authority[0])], use_database=False)

    assert report.ok, report.verdict()


def test_parapets_signing_certificates_are_not_certificate_authorities(job):
    from cryptography import x509

    credential = create_self_signed(organisation=job.organisation)
    cert = x509.load_pem_x509_certificate(credential.certificate_pem.encode())
    assert cert.extensions.get_extension_for_class(x509.BasicConstraints).value.ca is False
    assert cert.extensions.get_extension_for_class(x509.KeyUsage).value.key_cert_sign is False

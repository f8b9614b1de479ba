"""Checks an auditor can run on a daily-record PDF or an export, with a plain-language verdict.

Each check says what was tested and why it failed. The PDF signature is validated with
pyHanko's validator against the organisation certificates Parapet knows (or those in an export's
manifest); the seal is recomputed from the attached canonical JSON; the stored record, the rows
behind it and the site's chain are compared when a database is at hand.
"""

import hashlib
import io
import itertools
import json
import zipfile
from dataclasses import asdict, dataclass, field
from typing import Any

import rfc8785
from asn1crypto import pem as asn1_pem
from asn1crypto import x509 as asn1_x509
from pyhanko.pdf_utils.reader import PdfFileReader
from pyhanko.sign.validation import validate_pdf_signature
from pyhanko.sign.validation.status import SignatureCoverageLevel
from pyhanko_certvalidator import ValidationContext

from compliance.record_pdf import printed_seal, read_attachment


@dataclass
class Check:
    name: str
    ok: bool
    detail: str


@dataclass
class Report:
    subject: str
    checks: list[Check] = field(default_factory=list)
    seal: str | None = None

    @property
    def ok(self) -> bool:
        return bool(self.checks) and all(c.ok for c in self.checks)

    @property
    def first_failure(self) -> Check | None:
        return next((c for c in self.checks if not c.ok), None)

    def add(self, name: str, ok: bool, detail: str) -> bool:
        self.checks.append(Check(name, ok, detail))
        return ok

    def verdict(self) -> str:
        if self.ok:
            return (
                f"VERIFIED: {self.subject} is exactly the record that was signed, and its place "
                "in the site's chain is intact."
            )
        failure = self.first_failure
        assert failure is not None
        return f"NOT VERIFIED: {self.subject}: {failure.detail}"

    def as_dict(self) -> dict[str, Any]:
        return {
            "ok": self.ok,
            "verdict": self.verdict(),
            "seal": self.seal,
            "checks": [asdict(c) for c in self.checks],
        }


def _certs(pems: list[str]) -> list[asn1_x509.Certificate]:
    out = []
    for text in pems:
        _, _, der = asn1_pem.unarmor(text.encode())
        out.append(asn1_x509.Certificate.load(der))
    return out


def known_certificates() -> list[str]:
    from compliance.models import SigningCredential

    return list(SigningCredential.objects.values_list("certificate_pem", flat=True))


def check_signature(report: Report, data: bytes, trusted_pems: list[str]) -> bool:
    try:
        reader = PdfFileReader(io.BytesIO(data), strict=False)
        signatures = reader.embedded_signatures
    except Exception as exc:
        return report.add(
            "pdf_readable", False, f"The file is not a readable PDF ({type(exc).__name__})."
        )
    report.add("pdf_readable", True, "The file is a readable PDF.")
    if len(signatures) != 1:
        return report.add(
            "signature_present", False, f"Expected one signature, found {len(signatures)}."
        )
    context = ValidationContext(trust_roots=_certs(trusted_pems), allow_fetching=False)
    try:
        status = validate_pdf_signature(signatures[0], context)
    except Exception as exc:
        return report.add(
            "signature_valid", False, f"The signature could not be checked ({type(exc).__name__})."
        )
    if not (status.intact and status.valid):
        return report.add(
            "signature_valid",
            False,
            "The PDF was changed after it was signed: the signature does not match the file.",
        )
    if not _signature_container_exact(data, signatures[0].sig_object["/ByteRange"]):
        return report.add(
            "signature_valid", False, "The signature's container was altered after signing."
        )
    report.add("signature_valid", True, "The signature matches the file's bytes.")
    if status.coverage != SignatureCoverageLevel.ENTIRE_FILE:
        return report.add(
            "signature_covers_file", False, "Content was added to the PDF after it was signed."
        )
    report.add("signature_covers_file", True, "The signature covers the whole file.")
    name = status.signing_cert.subject.human_friendly
    if not status.trusted:
        return report.add(
            "certificate_trusted",
            False,
            f"The signing certificate ({name}) is not one Parapet knows for this organisation.",
        )
    return report.add("certificate_trusted", True, f"Signed with the known certificate {name}.")


def _der_length(raw: bytes) -> int:
    if len(raw) < 2 or raw[0] != 0x30:
        raise ValueError("not a DER sequence")
    if raw[1] < 0x80:
        return 2 + raw[1]
    count = raw[1] & 0x7F
    return 2 + count + int.from_bytes(raw[2 : 2 + count], "big")


def _signature_container_exact(data: bytes, byte_range: Any) -> bool:
    """The bytes the signature leaves out (its own hex container) must be exactly as written.

    The byte range excludes the /Contents hex string, so a changed padding byte or hex digit
    there would not break the cryptographic check; we require the canonical form pyHanko writes:
    upper-case hex of the CMS blob followed by zero padding.
    """
    start1, length1, start2, _ = (int(x) for x in byte_range)
    gap = data[start1 + length1 : start2]
    if len(gap) < 2 or gap[:1] != b"<" or gap[-1:] != b">":
        return False
    try:
        raw = bytes.fromhex(gap[1:-1].decode("ascii"))
        used = _der_length(raw)
    except ValueError:
        return False
    if any(raw[used:]):
        return False
    return gap == b"<" + raw.hex().upper().encode("ascii") + b">"


def check_content(report: Report, data: bytes) -> dict[str, Any] | None:
    try:
        attached = read_attachment(data)
    except Exception:
        attached = None
    if attached is None:
        report.add("record_attached", False, "The canonical record is not attached to the PDF.")
        return None
    try:
        document = json.loads(attached)
    except ValueError:
        report.add("record_attached", False, "The attached record is not valid JSON.")
        return None
    report.add("record_attached", True, "The canonical record is attached.")
    if rfc8785.dumps(document) != attached:
        report.add(
            "record_canonical", False, "The attached record is not in canonical form (RFC 8785)."
        )
        return None
    seal = hashlib.sha256(attached).hexdigest()
    report.seal = seal
    printed = printed_seal(data)
    if printed != seal:
        report.add(
            "seal_matches",
            False,
            "The attached record does not hash to the seal printed on the PDF: it was edited.",
        )
        return None
    report.add(
        "seal_matches", True, f"The attached record hashes to the printed seal {seal[:16]}…."
    )
    return document


def check_database(report: Report, seal: str) -> None:
    from compliance.daily_records import verify_against_database, verify_chain
    from compliance.models import DailyRecord
    from compliance.signing import verify_seal_signature

    record = DailyRecord.objects.filter(seal=seal).select_related("credential", "job").first()
    if record is None:
        report.add(
            "record_stored",
            False,
            "No record with this seal is stored: it is not one Parapet sealed.",
        )
        return
    report.add(
        "record_stored", True, f"Stored as record {record.sequence} of site {record.site_id}."
    )
    if hashlib.sha256(record.canonical_json.encode()).hexdigest() != record.seal:
        report.add(
            "stored_record_intact",
            False,
            "The stored copy of this record was altered in the database.",
        )
        return
    if not verify_seal_signature(
        record.seal, record.seal_signature, record.credential.certificate_pem
    ):
        report.add(
            "stored_record_intact", False, "The stored signature over the seal does not verify."
        )
        return
    report.add(
        "stored_record_intact", True, "The stored copy and its signature over the seal are intact."
    )
    differences = verify_against_database(record)
    if differences:
        shown = ", ".join(differences[:3]) + (" …" if len(differences) > 3 else "")
        report.add(
            "rows_unchanged",
            False,
            f"The database rows behind this record were changed after sealing ({shown}).",
        )
        return
    report.add("rows_unchanged", True, "The rows behind the record still match what was sealed.")
    chain = verify_chain(record.site_id)
    if not chain.ok:
        report.add(
            "chain_intact", False, f"The site's chain is broken: {chain.first_break.message}"
        )  # type: ignore[union-attr]
        return
    report.add("chain_intact", True, f"The site's chain of {chain.records} records is intact.")


def verify_pdf(
    data: bytes,
    *,
    trusted_pems: list[str] | None = None,
    use_database: bool = True,
    name: str = "this PDF",
) -> Report:
    report = Report(subject=name)
    if not check_signature(
        report, data, trusted_pems if trusted_pems is not None else known_certificates()
    ):
        return report
    document = check_content(report, data)
    if document is None:
        return report
    if use_database:
        if document.get("format") == LOG_BOOK_FORMAT:
            check_log_book(report, document)
        else:
            check_database(report, report.seal)  # type: ignore[arg-type]
    return report


LOG_BOOK_FORMAT = "parapet.anchor-log-book/1"


def check_log_book(report: Report, document: dict[str, Any]) -> None:
    """Each entry in the book must be a stored entry, unchanged, and the site's log unbroken."""
    from compliance.anchor_log import verify_log_chain
    from compliance.models import AnchorLogEntry
    from compliance.signing import verify_seal_signature

    seals = [item["seal"] for item in document["entries"]]
    stored = {
        e.seal: e
        for e in AnchorLogEntry.objects.filter(seal__in=seals).select_related("credential")
    }
    for item in document["entries"]:
        entry = stored.get(item["seal"])
        number = item["entry"].get("sequence")
        if entry is None:
            report.add("entries_stored", False, f"Log entry {number} is not one Parapet stored.")
            return
        if json.loads(entry.canonical_json) != item["entry"] or (
            hashlib.sha256(entry.canonical_json.encode()).hexdigest() != entry.seal
        ):
            report.add(
                "entries_stored", False, f"Log entry {number} differs from the stored entry."
            )
            return
        if entry.credential is not None and not verify_seal_signature(
            entry.seal, entry.seal_signature, entry.credential.certificate_pem
        ):
            report.add("entries_stored", False, f"Log entry {number}'s signature does not verify.")
            return
    report.add(
        "entries_stored", True, f"All {len(seals)} log entries match the stored, signed entries."
    )
    site_id = document["site"]["id"]
    breaks = verify_log_chain(site_id)
    if breaks:
        report.add("chain_intact", False, f"The site's anchor log is broken: {breaks[0].message}")
        return
    report.add("chain_intact", True, "The site's anchor log is unbroken.")


def merkle_root(leaves: list[bytes]) -> str:
    """RFC 6962 section 2.1 Merkle tree hash: 0x00 prefix for leaves, 0x01 for inner nodes."""

    def mth(items: list[bytes]) -> bytes:
        if not items:
            return hashlib.sha256(b"").digest()
        if len(items) == 1:
            return hashlib.sha256(b"\x00" + items[0]).digest()
        k = 1
        while k * 2 < len(items):
            k *= 2
        return hashlib.sha256(b"\x01" + mth(items[:k]) + mth(items[k:])).digest()

    return mth(leaves).hex()


def verify_export(data: bytes) -> Report:
    """Verify an export offline: every PDF, the manifest's chain and its Merkle root."""
    report = Report(subject="this export")
    try:
        archive = zipfile.ZipFile(io.BytesIO(data))
        manifest = json.loads(archive.read("manifest.json"))
    except (zipfile.BadZipFile, KeyError, ValueError):
        report.add("manifest", False, "The export has no readable manifest.json.")
        return report
    entries = manifest.get("records", [])
    report.add("manifest", True, f"Manifest lists {len(entries)} records.")
    root = merkle_root([bytes.fromhex(e["seal"]) for e in entries])
    if root != manifest.get("merkle_root"):
        report.add(
            "merkle_root",
            False,
            "The manifest's list of seals does not match its Merkle root: "
            "a record was added, removed or reordered.",
        )
        return report
    report.add("merkle_root", True, "The list of seals matches the manifest's Merkle root.")
    breaks = _relative_links(entries)
    if breaks:
        report.add("chain_intact", False, f"The chain in the export is broken: {breaks}")
        return report
    report.add("chain_intact", True, "Each record follows the one before it.")
    for entry in entries:
        try:
            pdf = archive.read(entry["file"])
        except KeyError:
            report.add(f"file:{entry['file']}", False, f"{entry['file']} is listed but missing.")
            return report
        sub = verify_pdf(
            pdf,
            trusted_pems=manifest.get("certificates", []),
            use_database=False,
            name=entry["file"],
        )
        if sub.ok and sub.seal != entry["seal"]:
            report.add(
                f"file:{entry['file']}", False, f"{entry['file']} carries another record's seal."
            )
            return report
        if not sub.ok:
            report.add(f"file:{entry['file']}", False, sub.verdict())
            return report
        report.add(f"file:{entry['file']}", True, f"{entry['file']} verified.")
    return report


def _relative_links(entries: list[dict[str, Any]]) -> str:
    for before, after in itertools.pairwise(entries):
        if after["sequence"] != before["sequence"] + 1:
            return f"record {before['sequence'] + 1} is missing or out of order"
        if after["previous_seal"] != before["seal"]:
            return f"record {after['sequence']} does not follow record {before['sequence']}"
    return ""

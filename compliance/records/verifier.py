"""The verifier an auditor can run on the bytes alone: a daily-record or log-book PDF, or an
export, with a plain-language verdict. Nothing here reads the database (see verification for
the checks against the stored rows).

Each check says what was tested and why it failed. The PDF signature is validated with
pyHanko's validator; the seal is recomputed from the attached canonical JSON; the pages are
drawn again from it and compared; who signed is vouched for only by a trust anchor.
"""

import datetime as dt
import hashlib
import io
import itertools
import json
import zipfile
from collections.abc import Callable
from dataclasses import asdict, dataclass, field, replace
from typing import Any, Protocol

from asn1crypto import pem as asn1_pem
from asn1crypto import x509 as asn1_x509
from pyhanko.pdf_utils.reader import PdfFileReader
from pyhanko.sign.validation import validate_pdf_signature
from pyhanko.sign.validation.status import SignatureCoverageLevel
from pyhanko_certvalidator import ValidationContext

from compliance.anchor_log import pdf as log_book_pdf
from compliance.records import pdf as record_pdf
from compliance.records.page_check import Renderer, differing_pages
from compliance.records.pdf import printed_seal, read_attachment
from compliance.records.sealing import EXPORT_FORMAT, is_canonical, merkle_root
from compliance.records.sealing import EXPORT_MANIFEST as MANIFEST
from compliance.records.sealing import EXPORT_MANIFEST_SIGNATURE as MANIFEST_SIGNATURE
from compliance.records.signatures import verify_seal_signature


@dataclass
class Check:
    name: str
    ok: bool
    detail: str


@dataclass(frozen=True)
class Signer:
    """Who signed: the certificate's subject and SHA-256 fingerprint, and the organisation the
    record (or the manifest) names, when known."""

    subject: str
    fingerprint_sha256: str
    organisation: str = ""

    def words(self) -> str:
        org = f"{self.organisation}, " if self.organisation else ""
        return f"{org}certificate {self.subject} (SHA-256 {self.fingerprint_sha256})"


@dataclass
class Report:
    subject: str
    checks: list[Check] = field(default_factory=list)
    seal: str | None = None
    signer: Signer | None = None
    vouched: bool = False
    """True only when the signer was checked against a trust anchor and found in it."""
    trust_source: str = ""
    document: dict[str, Any] | None = field(default=None, repr=False, compare=False)
    """The sealed document attached to the PDF, once its seal checked out."""
    certificate_organisation: str | None = field(default=None, repr=False, compare=False)
    """The organisation name (O=) in the signing certificate's subject."""
    claim: str = "is exactly the record that was signed"
    """What VERIFIED says of the subject (an export says it of every record it holds); a record
    whose chain was checked (on the server) adds that its place in the chain is intact."""

    @property
    def intact(self) -> bool:
        """Every check that ran passed: the file is what was signed (whoever signed it)."""
        return bool(self.checks) and all(c.ok for c in self.checks)

    @property
    def ok(self) -> bool:
        """VERIFIED: intact, and signed by a key the trust anchor vouches for."""
        return self.intact and self.vouched

    @property
    def first_failure(self) -> Check | None:
        return next((c for c in self.checks if not c.ok), None)

    def add(self, name: str, ok: bool, detail: str) -> bool:
        self.checks.append(Check(name, ok, detail))
        return ok

    def verdict(self) -> str:
        signed_by = f" Signed by {self.signer.words()}." if self.signer else ""
        if self.ok:
            return (
                f"VERIFIED: {self.subject} {self.claim}.{signed_by} The signer is vouched for by"
                f" {self.trust_source}."
            )
        if self.intact:
            return (
                f"INTEGRITY INTACT, SIGNER NOT VOUCHED FOR: {self.subject} has not been changed"
                f" since it was signed, but no trust anchor was given to say whose key signed"
                f" it.{signed_by} Supply the organisation's certificate fingerprints or CA"
                " (--trust FILE), or check it on the Parapet server that holds them."
            )
        failure = self.first_failure
        assert failure is not None
        return f"NOT VERIFIED: {self.subject}: {failure.detail}"

    def as_dict(self) -> dict[str, Any]:
        return {
            "ok": self.ok,
            "intact": self.intact,
            "vouched": self.vouched,
            "verdict": self.verdict(),
            "seal": self.seal,
            "signer": None if self.signer is None else asdict(self.signer),
            "trust": self.trust_source,
            "checks": [asdict(c) for c in self.checks],
        }


@dataclass(frozen=True)
class TrustList:
    """A trust anchor: signer certificates known by SHA-256 fingerprint, and CA certificates a
    signer's certificate may chain to. `source` says where it came from, for the verdict."""

    fingerprints: frozenset[str] = frozenset()
    roots: tuple[str, ...] = ()
    source: str = "the trust list given"

    @property
    def empty(self) -> bool:
        return not self.fingerprints and not self.roots

    @classmethod
    def from_pems(cls, pems: list[str], source: str) -> "TrustList":
        """Certificates given as trusted: each is trusted itself, and a certificate authority's
        also vouches for the certificates it issued. A document signer's certificate (one that
        commits to content, as every organisation's signing certificate does) vouches only for
        itself, even where it is marked a CA: Parapet's own were until December 2026, and another
        contractor's, trusted beside the record's organisation's, would otherwise vouch for a
        certificate its holder made naming that organisation."""
        certs = [c for pem in pems for c in _split_pems(pem)]
        parsed = _certs(certs)
        return cls(
            fingerprints=frozenset(hashlib.sha256(c.dump()).hexdigest() for c in parsed),
            roots=tuple(pem for pem, c in zip(certs, parsed, strict=True) if _issues_for_others(c)),
            source=source,
        )

    @classmethod
    def from_text(cls, text: str, source: str) -> "TrustList":
        """A trust file: PEM certificates (a CA bundle or the signers'), or SHA-256 fingerprints
        one a line (hex, colons allowed, '#' starts a comment)."""
        if "-----BEGIN CERTIFICATE-----" in text:
            return cls.from_pems([text], source)
        prints = set()
        for line in text.splitlines():
            value = line.split("#", 1)[0].strip().replace(":", "").lower()
            if not value:
                continue
            if len(value) != 64 or any(ch not in "0123456789abcdef" for ch in value):
                raise ValueError(f"not a SHA-256 fingerprint: {line.strip()!r}")
            prints.add(value)
        return cls(fingerprints=frozenset(prints), source=source)


def _issues_for_others(cert: asn1_x509.Certificate) -> bool:
    """Whether a trusted certificate is a certificate authority's: marked a CA, allowed to sign
    certificates, and not committing to documents itself."""
    usages = cert.key_usage_value.native if cert.key_usage_value else set()
    return bool(cert.ca) and "key_cert_sign" in usages and "non_repudiation" not in usages


def _split_pems(text: str) -> list[str]:
    marker = "-----END CERTIFICATE-----"
    return [part.strip() + "\n" + marker + "\n" for part in text.split(marker) if "BEGIN" in part]


def check_trust(report: Report, trust: TrustList | None, chain_ok: bool) -> None:
    """Vouch for the signer when the trust anchor holds its certificate (or its CA)."""
    if report.signer is None or not report.intact:
        return
    if trust is None or trust.empty:
        report.trust_source = ""
        return
    known = report.signer.fingerprint_sha256 in trust.fingerprints or chain_ok
    if report.add(
        "signer_vouched",
        known,
        f"The signer's certificate is in {trust.source}."
        if known
        else f"The signer ({report.signer.words()}) is not in {trust.source}: it may be a"
        " self-made certificate or another organisation's.",
    ):
        report.vouched = True
        report.trust_source = trust.source


def _certs(pems: list[str]) -> list[asn1_x509.Certificate]:
    out = []
    for text in pems:
        _, _, der = asn1_pem.unarmor(text.encode())
        out.append(asn1_x509.Certificate.load(der))
    return out


def check_signature(report: Report, data: bytes, roots: tuple[str, ...] = ()) -> tuple[bool, bool]:
    """Whether the PDF's one signature is intact over the whole file, and whether its certificate
    chains to one of `roots`; names the signer in the report. Integrity only: who is trusted is
    decided by `check_trust`."""
    try:
        reader = PdfFileReader(io.BytesIO(data), strict=False)
        signatures = reader.embedded_signatures
    except Exception as exc:
        report.add(
            "pdf_readable",
            False,
            f"The file is not a readable PDF ({type(exc).__name__}): what can be checked is a"
            " record or log-book PDF, or an export ZIP.",
        )
        return False, False
    report.add("pdf_readable", True, "The file is a readable PDF.")
    if len(signatures) != 1:
        report.add(
            "signature_present",
            False,
            "The PDF carries no signature: it is not a signed record."
            if not signatures
            else f"The PDF carries {len(signatures)} signatures; a record carries exactly one,"
            " its signer's.",
        )
        return False, False
    context = ValidationContext(trust_roots=_certs(list(roots)), allow_fetching=False)
    try:
        status = validate_pdf_signature(signatures[0], context)
    except Exception as exc:
        report.add(
            "signature_valid", False, f"The signature could not be checked ({type(exc).__name__})."
        )
        return False, False
    if not (status.intact and status.valid):
        report.add(
            "signature_valid",
            False,
            "The PDF was changed after it was signed: the signature does not match the file.",
        )
        return False, False
    if not _signature_container_exact(
        data, signatures[0].sig_object["/ByteRange"]
    ) or not _container_as_signed(signatures[0].signed_data, status.signing_cert):
        report.add("signature_valid", False, "The signature's container was altered after signing.")
        return False, False
    report.add("signature_valid", True, "The signature matches the file's bytes.")
    if status.coverage != SignatureCoverageLevel.ENTIRE_FILE:
        report.add(
            "signature_covers_file", False, "Content was added to the PDF after it was signed."
        )
        return False, False
    report.add("signature_covers_file", True, "The signature covers the whole file.")
    cert = status.signing_cert
    report.signer = Signer(
        subject=cert.subject.human_friendly,
        fingerprint_sha256=hashlib.sha256(cert.dump()).hexdigest(),
    )
    report.certificate_organisation = certificate_organisation(cert)
    return True, bool(roots) and bool(status.trusted)


def certificate_organisation(cert: asn1_x509.Certificate) -> str | None:
    """The organisation name (O=) in a certificate's subject, if it has exactly one."""
    names = [
        attribute["value"].native
        for rdn in cert.subject.chosen
        for attribute in rdn
        if attribute["type"].native == "organization_name"
    ]
    return names[0] if len(names) == 1 and isinstance(names[0], str) else None


def check_signer_organisation(report: Report, document: dict[str, Any]) -> bool:
    """The certificate that signed the file names the organisation whose record it is.

    A trust list vouches for certificates, not for which organisation each belongs to: without
    this, one contractor holding its own key (vouched for at the same building) could sign a
    record sealed as another's. Parapet's certificates name their organisation (O=), and an
    imported one must name its own (signing.store_credential)."""
    organisation = document.get("organisation")
    sealed = organisation.get("name") if isinstance(organisation, dict) else None
    if not isinstance(sealed, str):  # a log book: its owner is checked with its entries
        return True
    named = report.certificate_organisation
    return report.add(
        "signer_is_organisation",
        named == sealed,
        f"The signing certificate names {sealed}, whose record it is; whether it is"
        f" {sealed}'s own is for the trust check."
        if named == sealed
        else f"The PDF is sealed as {sealed}'s record but signed with a certificate of"
        f" {named or 'no named organisation'}.",
    )


def _container_as_signed(signed_data: Any, signing_cert: asn1_x509.Certificate) -> bool:
    """Whether the parts of the CMS SignedData (RFC 5652) its signature does not cover hold only
    what Parapet's signer writes (signing.sign_pdf): one signer without unsigned attributes, one
    digest algorithm (the signer's), no revocation data, and no certificate but the signing one
    (the signer writes it twice). A copy of the signer's certificate with a byte changed (the
    validator finds the untouched copy), an unused algorithm or a certificate added is refused;
    a chain to the trust list's certificate is built from the trust list."""
    try:
        signers = signed_data["signer_infos"]
        if len(signers) != 1 or signers[0]["unsigned_attrs"].native is not None:
            return False
        digests = [a.dump() for a in signed_data["digest_algorithms"]]
        if digests != [signers[0]["digest_algorithm"].dump()]:
            return False
        if signed_data["crls"].native is not None:
            return False
        encap = signed_data["encap_content_info"]
        if encap["content_type"].native != "data" or encap["content"].native is not None:
            return False
        certs = signed_data["certificates"]
        return all(
            c.name == "certificate" and c.chosen.dump() == signing_cert.dump() for c in certs
        )
    except Exception:  # not a SignedData this verifier can read: not as signed
        return False


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


def check_content(
    report: Report, data: bytes, memory: "PageMemory | None" = None
) -> dict[str, Any] | None:
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
    if not is_canonical(attached):
        report.add(
            "record_canonical", False, "The attached record is not in canonical form (RFC 8785)."
        )
        return None
    seal = hashlib.sha256(attached).hexdigest()
    report.seal = seal
    # A kept page check of these very bytes against this seal proves the pages are the ones
    # drawn for it, and every drawn page prints the seal: reading the text again is not needed.
    kept = memory is not None and memory.passed_before(hashlib.sha256(data).hexdigest(), seal)
    printed = seal if kept else printed_seal(data)
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


def _renderer(document: dict[str, Any]) -> Renderer | None:
    fmt = document.get("format")
    if fmt in RECORD_FORMATS:
        # Drawn only to compare pages with: the attachment is the signed file's own.
        return lambda doc, seal, photos: record_pdf.render(doc, seal, photos, attach=False)
    if fmt in log_book_pdf.FORMATS:
        return lambda doc, seal, photos: log_book_pdf.render(doc, seal)
    return None


RECORD_FORMATS = {
    "parapet.daily-record/2",
    "parapet.daily-record/3",
    "parapet.daily-record/4",
    "parapet.daily-record/5",
    "parapet.daily-record/6",
    "parapet.daily-record/7",
    "parapet.daily-record-addendum/2",
    "parapet.daily-record-addendum/3",
}


class PageMemory(Protocol):
    """Where passed page checks are kept (on the server, compliance.records.checks)."""

    def passed_before(self, pdf_sha256: str, seal: str) -> bool:
        """Whether these very bytes passed against this seal (False if the kept row cannot be
        vouched for)."""

    def remember(self, pdf_sha256: str, seal: str) -> None:
        """Keep a pass."""


def check_pages(
    report: Report, data: bytes, document: dict[str, Any], memory: PageMemory | None = None
) -> bool:
    """The pages say what the sealed document says: the document is drawn again with the same
    deterministic layout and compared page by page with the signed file (see page_check).

    With ``memory``, a file whose exact bytes passed before against the same seal is not drawn
    again: the comparison's answer for the same bytes and seal cannot change."""
    digest = hashlib.sha256(data).hexdigest()
    seal = report.seal or ""
    # The same words whether the comparison ran now or was kept: an answer must not tell
    # whoever holds a file whether, or when, someone else checked it here.
    kept_words = (
        "Every page shows exactly what the sealed record draws to (text, figures, fonts, images"
        " and layout): the record was drawn again and compared page by page, and this server"
        " keeps that result for these exact bytes."
    )
    if memory is not None and memory.passed_before(digest, seal):
        return report.add("pages_match_record", True, kept_words)
    renderer = _renderer(document)
    if renderer is None:
        return report.add(
            "pages_match_record",
            False,
            f"The record's format ({str(document.get('format'))[:60]}) is not one this verifier"
            " can draw, so its pages cannot be checked.",
        )
    try:
        problems = differing_pages(data, document, report.seal or "", renderer)
    except Exception as exc:  # a malformed page tree or an undrawable document: not verified
        return report.add(
            "pages_match_record",
            False,
            f"The pages could not be compared with the sealed record ({type(exc).__name__}).",
        )
    if problems:
        shown = ", ".join(problems[:3]) + (" …" if len(problems) > 3 else "")
        return report.add(
            "pages_match_record",
            False,
            "The pages do not show what the sealed record says: they were drawn or edited"
            f" apart from it ({shown}).",
        )
    if memory is not None:
        memory.remember(digest, seal)
        return report.add("pages_match_record", True, kept_words)
    return report.add(
        "pages_match_record",
        True,
        "Every page shows exactly what the sealed record draws to (text, figures, fonts,"
        " images and layout).",
    )


DatabaseCheck = Callable[[Report, dict[str, Any]], tuple[TrustList, str] | None]
"""Checks against the stored rows; returns the organisation's trust anchor and name."""


def verify_pdf(
    data: bytes,
    *,
    trusted_pems: list[str] | None = None,
    trust: TrustList | None = None,
    name: str = "this PDF",
    database: DatabaseCheck | None = None,
    memory: PageMemory | None = None,
) -> Report:
    """Check a record or log-book PDF from its bytes: signature, seal, pages. VERIFIED needs a
    trust anchor: `trust` (or the PEMs in `trusted_pems`), or the one `database` finds for the
    record's own organisation. Without one the answer is integrity only."""
    if trust is None and trusted_pems is not None:
        trust = TrustList.from_pems(trusted_pems, "the certificates given")
    report = Report(subject=name)
    intact, chained = check_signature(report, data, trust.roots if trust else ())
    if not intact:
        return report
    document = check_content(report, data, memory)
    if document is None:
        return report
    report.document = document
    if not check_signer_organisation(report, document):
        return report
    if not check_pages(report, data, document, memory):
        return report
    if database is not None:
        found = database(report, document)
        if found is not None:
            stored_trust, organisation = found
            trust = trust if trust is not None else stored_trust
            if report.signer is not None:
                report.signer = replace(report.signer, organisation=organisation)
        if any(c.name == "chain_intact" for c in report.checks):
            report.claim += ", and its place in its organisation's chain is intact"
    check_trust(report, trust, chained)
    return report


MAX_MANIFEST_BYTES = 8 * 1024 * 1024
MAX_PDF_BYTES = 50 * 1024 * 1024
MAX_EXPORT_BYTES = 2 * 1024 * 1024 * 1024
"""Decompressed sizes read from an export: a 300 KB ZIP can hold a 300 MiB manifest."""


def _read_capped(archive: zipfile.ZipFile, name: str, cap: int) -> bytes:
    """A member of the archive, refused by its declared size before anything is inflated, and
    read no further than the cap whatever the header claims."""
    info = archive.getinfo(name)
    if info.file_size > cap:
        raise ValueError(f"{name} would inflate to {info.file_size} bytes, over {cap}")
    with archive.open(info) as handle:
        data = handle.read(cap + 1)
    if len(data) > cap:
        raise ValueError(f"{name} inflates past {cap} bytes")
    return data


class _Refused(Exception):
    """A check of the export failed; its name and words are in the report."""


def _need(report: Report, name: str, ok: bool, detail: str) -> None:
    if not ok:
        report.add(name, False, detail)
        raise _Refused


TrustFor = Callable[[int], TrustList]
"""The trust anchor of an organisation, by id (the server's registered certificates)."""


@dataclass(frozen=True)
class Stored:
    """What the server holds of a site-period an exporter may export."""

    records: dict[int, set[tuple[int, str]]]
    """For each organisation, the (sequence, seal) of every record dated in the period (for
    an export the server made, only those signed by the time it was made)."""
    heads: dict[int, tuple[int, str]] | None
    """For an export the server did not make, each organisation's chain head now, which the
    export's must be; None for one it made (its heads were the heads then)."""


StoredChains = Callable[[int, int, dt.date, dt.date, str], Stored]
"""The server's own records of a site-period that an exporter may export, found by the site,
the exporter, the period and the manifest's SHA-256."""

OFFLINE_EXPORT_CLAIM = (
    "holds, for each organisation's chain in it, an unbroken run of signed records up to the"
    " chain's signed head, each PDF the one its signed manifest names; on its own it cannot show"
    " that no record of the period was left out before the first one listed in a chain, nor that"
    " no organisation's chain at the site was left out altogether (the Parapet server that holds"
    " the records checks both)"
)


def verify_export(
    data: bytes,
    *,
    trust: TrustList | None = None,
    trust_for: TrustFor | None = None,
    stored: StoredChains | None = None,
) -> Report:
    """Verify an export: its signed manifest, the Merkle root of its seals, and for each
    organisation's chain in it that the records follow one another up to the chain's signed
    head, and that every PDF is the one the manifest names, intact, sealed for that organisation
    and site and signed with that organisation's certificate. VERIFIED needs a trust anchor:
    `trust`, or with the database the certificates each organisation registered; without one
    the answer is integrity only.

    With `stored` (the server's records), also that every record of the period the exporter may
    export is in it; without, the claim says that this is not shown."""
    report = Report(
        subject="this export",
        claim=(
            "holds exactly the records that were signed, each PDF the one its signed manifest"
            " names, and their chain is intact"
            if stored is not None
            else OFFLINE_EXPORT_CLAIM
        ),
    )
    try:
        archive = zipfile.ZipFile(io.BytesIO(data))
        if sum(i.file_size for i in archive.infolist()) > MAX_EXPORT_BYTES:
            raise ValueError("the export inflates past 2 GiB")
        raw = _read_capped(archive, MANIFEST, MAX_MANIFEST_BYTES)
        manifest = json.loads(raw)
        signature = json.loads(_read_capped(archive, MANIFEST_SIGNATURE, MAX_MANIFEST_BYTES))
        if manifest["format"] != EXPORT_FORMAT:
            raise ValueError("format")
        chains = list(manifest["chains"])
        exporter = manifest["exported_by"]
        if not isinstance(exporter, dict) or not isinstance(exporter.get("id"), int):
            raise ValueError("exported_by")
        site_id = manifest["site"]["id"]
        period = (
            dt.date.fromisoformat(manifest["period"]["start"]),
            dt.date.fromisoformat(manifest["period"]["end"]),
        )
        cert_pem = str(signature["certificate_pem"])
        [signer_cert] = _certs([cert_pem])
        seals = [bytes.fromhex(e["seal"]) for c in chains for e in c["records"]]
    except (zipfile.BadZipFile, KeyError, TypeError, ValueError, AttributeError) as exc:
        why = str(exc) if "inflate" in str(exc) else type(exc).__name__
        report.add("manifest", False, f"The export has no readable, signed manifest ({why}).")
        return report
    if not is_canonical(raw):
        report.add("manifest", False, "The manifest is not in canonical form: it was rewritten.")
        return report
    fingerprint = hashlib.sha256(signer_cert.dump()).hexdigest()
    if not verify_seal_signature(
        hashlib.sha256(raw).hexdigest(), str(signature.get("signature", "")), cert_pem
    ):
        report.add(
            "manifest",
            False,
            "The manifest's signature does not verify: it was changed after it was signed.",
        )
        return report
    if (
        stored is not None
        and trust_for is not None
        and fingerprint not in trust_for(exporter["id"]).fingerprints
    ):
        # Checked before anything stored is compared: a manifest anyone signed must not make
        # the server describe an organisation's records.
        report.add(
            "manifest",
            False,
            "The manifest is not signed with a certificate the organisation it names as its"
            " exporter registered here.",
        )
        return report
    report.signer = Signer(
        subject=signer_cert.subject.human_friendly,
        fingerprint_sha256=fingerprint,
        organisation=str(exporter.get("name", "")),
    )
    report.add(
        "manifest",
        True,
        f"The manifest lists {len(seals)} records in {len(chains)} chains and is signed.",
    )
    if merkle_root(seals) != manifest.get("merkle_root"):
        report.add(
            "merkle_root",
            False,
            "The manifest's list of seals does not match its Merkle root: "
            "a record was added, removed or reordered.",
        )
        return report
    report.add("merkle_root", True, "The list of seals matches the manifest's Merkle root.")
    try:
        _check_members(report, archive, chains)
        for chain in chains:
            _check_export_chain(report, archive, chain, site_id, period, trust, trust_for)
        if stored is not None:
            found = stored(site_id, exporter["id"], *period, hashlib.sha256(raw).hexdigest())
            _check_complete(report, chains, found)
    except _Refused:
        return report
    except (KeyError, TypeError, ValueError, AttributeError) as exc:
        report.add("chain_intact", False, f"A manifest entry is malformed ({type(exc).__name__}).")
        return report
    if trust is None and trust_for is not None:
        trust = trust_for(exporter["id"])
    check_trust(report, trust, False)
    return report


def _check_export_chain(
    report: Report,
    archive: zipfile.ZipFile,
    chain: dict[str, Any],
    site_id: int,
    period: tuple[dt.date, dt.date],
    trust: TrustList | None,
    trust_for: TrustFor | None,
) -> None:
    """One organisation's chain in an export: links, signed head, nothing of the period left
    out after it, and each PDF."""
    org = chain["organisation"]
    name = str(org["name"])
    certs = {
        hashlib.sha256(c.dump()).hexdigest(): pem
        for pem in chain["certificates"]
        for c in _certs([pem])
    }
    records, later = list(chain["records"]), list(chain["after_period"])
    breaks = _relative_links(records + later)
    _need(report, "chain_intact", not breaks, f"{name}'s chain in the export is broken: {breaks}")
    left_out = [
        e["sequence"] for e in later if period[0].isoformat() <= e["date"] <= period[1].isoformat()
    ]
    _need(
        report,
        "chain_intact",
        not left_out,
        f"{name}'s records {left_out} fall in the period but are not in the export.",
    )
    _need(report, "chain_intact", bool(records), f"{name}'s chain in the export lists no record.")
    chain_trust = trust
    if chain_trust is None and trust_for is not None and isinstance(org["id"], int):
        chain_trust = trust_for(org["id"])
    signers = {
        _check_export_file(report, archive, entry, org["id"], site_id, set(certs), chain_trust)
        for entry in records
    }
    head = chain["head"]
    statement = json.loads(head["statement"])
    head_print = str(head["certificate_sha256"])
    pem = certs.get(head_print)
    last = (records + later)[-1]
    # The head must be the organisation's word on where its chain ends: signed with a
    # certificate naming that organisation (O=), and one that signed its records here or that
    # the trust anchor vouches for (a key replaced since signs the heads anew). A certificate
    # the manifest merely lists beside them (another contractor's, say) is neither.
    vouched_head = head_print in signers or (
        chain_trust is not None and head_print in chain_trust.fingerprints
    )
    _need(
        report,
        "chain_head",
        pem is not None
        and vouched_head
        and certificate_organisation(_certs([pem])[0]) == name
        and verify_seal_signature(
            hashlib.sha256(str(head["statement"]).encode("utf-8")).hexdigest(),
            str(head["signature"]),
            pem,
        )
        and (statement["organisation"], statement["site"]) == (org["id"], site_id),
        f"{name}'s chain head is not signed by {name} for this site.",
    )
    _need(
        report,
        "chain_head",
        (statement["sequence"], statement["seal"]) == (last["sequence"], last["seal"]),
        f"{name}'s signed chain head names record {statement['sequence']}, but the export's"
        f" chain ends at record {last['sequence']}: records were removed from its end.",
    )
    report.add(
        "chain_intact",
        True,
        f"{name}'s {len(records)} records follow one another up to the chain's signed head.",
    )


def _check_export_file(
    report: Report,
    archive: zipfile.ZipFile,
    entry: dict[str, Any],
    organisation_id: int,
    site_id: int,
    fingerprints: set[str],
    trust: TrustList | None,
) -> str:
    """Check one listed PDF; returns the SHA-256 fingerprint of the certificate that signed it."""
    name = str(entry.get("file"))
    check = f"file:{name}"
    try:
        pdf = _read_capped(archive, name, MAX_PDF_BYTES)
    except KeyError:
        _need(report, check, False, f"{name} is listed but missing.")
    except (ValueError, zipfile.BadZipFile, OSError) as exc:
        _need(report, check, False, f"{name} cannot be read ({exc}).")
    _need(
        report,
        check,
        hashlib.sha256(pdf).hexdigest() == entry.get("file_sha256"),
        f"{name} is not the file the manifest names: it was swapped.",
    )
    sub = verify_pdf(pdf, trust=trust, name=name)
    _need(report, check, sub.intact, sub.verdict())
    _need(report, check, sub.seal == entry.get("seal"), f"{name} carries another record's seal.")
    document = sub.document or {}
    _need(
        report,
        check,
        (document.get("organisation") or {}).get("id") == organisation_id
        and (document.get("site") or {}).get("id") == site_id
        and document.get("sequence") == entry.get("sequence"),
        f"{name} was sealed for another organisation, site or place in the chain.",
    )
    _need(
        report,
        check,
        sub.signer is not None and sub.signer.fingerprint_sha256 in fingerprints,
        f"{name} was signed by a certificate its organisation's chain does not list.",
    )
    if trust is not None and not trust.empty:
        _need(report, check, sub.vouched, sub.verdict())
    report.add(check, True, f"{name} is intact and is the file the manifest names.")
    assert sub.signer is not None
    return sub.signer.fingerprint_sha256


def _safe_member_name(name: str) -> bool:
    parts = name.split("/")
    return (
        bool(name)
        and "\\" not in name
        and ":" not in name
        and all(part not in ("", ".", "..") for part in parts)
    )


def _check_members(report: Report, archive: zipfile.ZipFile, chains: list[Any]) -> None:
    """The archive holds the manifest, its signature and the files the manifest lists, each
    once, under plain relative names, and nothing else: the verdict speaks of what an unzip of
    it gives, and an unzip writes a second copy of a name over the first."""
    names = [info.filename for info in archive.infolist()]
    listed = {MANIFEST, MANIFEST_SIGNATURE}
    listed |= {str(entry.get("file")) for chain in chains for entry in chain["records"]}
    twice = sorted({n for n in names if names.count(n) > 1})
    unsafe = sorted(n for n in set(names) | listed if not _safe_member_name(n))
    extra = sorted(set(names) - listed)
    missing = sorted(listed - set(names))
    _need(
        report,
        "members",
        not (twice or unsafe or extra or missing),
        "The export does not hold exactly the files its manifest names: "
        + "; ".join(
            part
            for part in (
                f"missing: {', '.join(missing[:3])}" if missing else "",
                f"twice: {', '.join(twice[:3])}" if twice else "",
                f"outside its folder: {', '.join(unsafe[:3])}" if unsafe else "",
                f"not listed: {', '.join(extra[:3])}" if extra else "",
            )
            if part
        )
        + ".",
    )
    report.add("members", True, "The export holds the files its manifest names and no other.")


def _check_complete(report: Report, chains: list[Any], found: Stored) -> None:
    """Every record of the period this server holds for the exporter's chains is in the export,
    the export holds no chain the exporter may not export, and, for an export this server did
    not make, each chain's head is the head it holds now."""
    stored = found.records
    for chain in chains if found.heads is not None else []:
        said = json.loads(chain["head"]["statement"])
        now = found.heads.get(chain["organisation"]["id"])
        _need(
            report,
            "chain_head",
            now == (said["sequence"], said["seal"]),
            f"{chain['organisation']['name']}'s chain here ends at record"
            f" {now[0] if now else 0}, but the export's signed head names record"
            f" {said['sequence']}: this server did not make this export, and records were cut"
            " from its end.",
        )
    exported = {
        chain["organisation"]["id"]: {(e["sequence"], e["seal"]) for e in chain["records"]}
        for chain in chains
    }

    names = {chain["organisation"]["id"]: str(chain["organisation"]["name"]) for chain in chains}
    foreign = sorted(set(exported) - set(stored), key=str)
    _need(
        report,
        "chain_complete",
        not foreign,
        f"The export holds a chain ({', '.join(names[o] for o in foreign)}) that has no record"
        " of the period on this server, or that its exporter may not export.",
    )
    for organisation_id, records in sorted(stored.items()):
        missing = sorted(records - exported.get(organisation_id, set()))
        _need(
            report,
            "chain_complete",
            not missing,
            f"{names.get(organisation_id, f'Organisation {organisation_id}')}'s record"
            f" {', '.join(str(seq) for seq, _ in missing[:5])} of the period is on this server"
            " but not in the export: it was left out.",
        )
    report.add(
        "chain_complete",
        True,
        "Every record of the period this server holds for these chains is in the export.",
    )


def _relative_links(entries: list[dict[str, Any]]) -> str:
    for before, after in itertools.pairwise(entries):
        if after["sequence"] != before["sequence"] + 1:
            return f"record {before['sequence'] + 1} is missing or out of order"
        if after["previous_seal"] != before["seal"]:
            return f"record {after['sequence']} does not follow record {before['sequence']}"
    return ""

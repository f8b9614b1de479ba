"""Verification with the database at hand: the checks an auditor's file gets on the server
against the stored record, its rows, its organisation's chain and registered certificates, on
top of the bytes-only checks of the verifier."""

import datetime as dt
import hashlib
import json
from typing import Any

from django.db import IntegrityError, transaction
from django.utils.crypto import constant_time_compare, salted_hmac

from compliance.anchor_log import pdf as log_book_pdf
from compliance.anchor_log.services import verify_log_chain
from compliance.models import (
    AnchorLogEntry,
    DailyRecord,
    Organisation,
    PageCheck,
    RecordChainHead,
    SigningCredential,
    Site,
)
from compliance.records.exports import made_at
from compliance.records.services import (
    sealed_column_problems,
    verify_against_database,
    verify_chain,
)
from compliance.records.signatures import verify_seal_signature
from compliance.records.verifier import Report, Stored, TrustList
from compliance.records.verifier import verify_export as verify_export_bytes
from compliance.records.verifier import verify_pdf as verify_pdf_bytes

__all__ = ["Report", "TrustList", "organisation_trust", "verify_export", "verify_pdf"]


PAGE_CHECK_METHOD = "redraw-compare/1"
"""Names the page comparison of compliance/records/page_check.py; change it when the comparison
changes, and every kept pass is checked again."""


class StoredPageChecks:
    """Passed page checks kept in the database (PageCheck), each row under an HMAC; one
    verification asks twice (for the printed seal, then for the pages) and reads once."""

    def __init__(self) -> None:
        self._answers: dict[tuple[str, str], bool] = {}

    @staticmethod
    def _mac(pdf_sha256: str, seal: str) -> str:
        return salted_hmac(
            "parapet.page-check",
            f"{PAGE_CHECK_METHOD}:{pdf_sha256}:{seal}",
            algorithm="sha256",
        ).hexdigest()

    def passed_before(self, pdf_sha256: str, seal: str) -> bool:
        if (pdf_sha256, seal) not in self._answers:
            self._answers[(pdf_sha256, seal)] = self._read(pdf_sha256, seal)
        return self._answers[(pdf_sha256, seal)]

    def _read(self, pdf_sha256: str, seal: str) -> bool:
        mac = (
            PageCheck.objects.filter(pdf_sha256=pdf_sha256, seal=seal, method=PAGE_CHECK_METHOD)
            .values_list("mac", flat=True)
            .first()
        )
        return mac is not None and constant_time_compare(mac, self._mac(pdf_sha256, seal))

    def remember(self, pdf_sha256: str, seal: str) -> None:
        """Keep a pass (a cache of the comparison, not a record: rewriting a row whose HMAC
        fails is allowed)."""
        key = {"pdf_sha256": pdf_sha256, "seal": seal, "method": PAGE_CHECK_METHOD}
        mac = self._mac(pdf_sha256, seal)
        try:
            with transaction.atomic():
                PageCheck.objects.create(**key, mac=mac)
        except IntegrityError:  # kept by another verification, or a row whose HMAC failed
            PageCheck.objects.filter(**key).update(mac=mac)


def organisation_trust(organisation_id: int) -> TrustList:
    """The server's trust anchor for one organisation: its registered signing certificates."""
    pems = list(
        SigningCredential.objects.filter(organisation_id=organisation_id).values_list(
            "certificate_pem", flat=True
        )
    )
    name = Organisation.objects.filter(pk=organisation_id).values_list("name", flat=True).first()
    return TrustList.from_pems(pems, f"the certificates {name or 'the organisation'} registered")


def check_database(report: Report, seal: str) -> Any:
    """The stored record behind `seal` (None when there is none), checked against the file."""
    record = DailyRecord.objects.filter(seal=seal).select_related("credential", "job").first()
    if record is None:
        report.add(
            "record_stored",
            False,
            "No record with this seal is stored: it is not one Parapet sealed.",
        )
        return None
    report.add(
        "record_stored",
        True,
        f"Stored as record {record.sequence} of its organisation's chain at site {record.site_id}.",
    )
    if hashlib.sha256(record.canonical_json.encode()).hexdigest() != record.seal:
        report.add(
            "stored_record_intact",
            False,
            "The stored copy of this record was altered in the database.",
        )
        return record
    if not verify_seal_signature(
        record.seal, record.seal_signature, record.credential.certificate_pem
    ):
        report.add(
            "stored_record_intact", False, "The stored signature over the seal does not verify."
        )
        return record
    report.add(
        "stored_record_intact", True, "The stored copy and its signature over the seal are intact."
    )
    credential = record.credential
    if credential.organisation_id != record.organisation_id:
        report.add(
            "signer_is_the_records_organisation",
            False,
            "The record was signed with a certificate registered to another organisation.",
        )
        return record
    if report.signer is not None and report.signer.fingerprint_sha256 != (
        credential.fingerprint_sha256
    ):
        report.add(
            "signer_is_the_records_organisation",
            False,
            "The PDF was signed with a different certificate from the one that sealed the record.",
        )
        return record
    report.add(
        "signer_is_the_records_organisation",
        True,
        "The PDF and the seal were signed with the record's own organisation's certificate.",
    )
    if credential.retired_at is not None and record.signed_at > credential.retired_at:
        report.add(
            "key_in_use_when_signed",
            False,
            "The record claims a signing time after its key was replaced: it was signed later"
            " with an old key.",
        )
        return record
    document = json.loads(record.canonical_json)  # read once for the checks below
    columns = sealed_column_problems(record, document)
    if columns:
        report.add(
            "stored_columns_sealed",
            False,
            "The stored record's columns differ from what its seal covers"
            f" ({', '.join(columns)}): they were edited, or the record was moved.",
        )
        return record
    report.add(
        "stored_columns_sealed",
        True,
        "Organisation, site, job, signer, meaning, time and place in the chain are as sealed.",
    )
    differences = verify_against_database(record, document)
    if differences:
        shown = ", ".join(differences[:3]) + (" …" if len(differences) > 3 else "")
        report.add(
            "rows_unchanged",
            False,
            f"The database rows behind this record were changed after sealing ({shown}).",
        )
        return record
    report.add("rows_unchanged", True, "The rows behind the record still match what was sealed.")
    chain = verify_chain(record.organisation_id, record.site_id)
    if not chain.ok:
        report.add(
            "chain_intact",
            False,
            f"The organisation's chain at this site is broken: {chain.first_break.message}",  # type: ignore[union-attr]
        )
        return record
    report.add(
        "chain_intact",
        True,
        f"The organisation's chain of {chain.records} records at this site is intact and ends"
        " where its signed head says.",
    )
    return record


def _organisation_name(organisation_id: int) -> str:
    return (
        Organisation.objects.filter(pk=organisation_id).values_list("name", flat=True).first() or ""
    )


def _registered_organisation(report: Report) -> int | None:
    """The organisation that registered the signing certificate (a log book may be printed by
    the owner or by a contractor working under a grant)."""
    if report.signer is None:
        return None
    return (
        SigningCredential.objects.filter(fingerprint_sha256=report.signer.fingerprint_sha256)
        .values_list("organisation_id", flat=True)
        .first()
    )


def check_log_book(report: Report, document: dict[str, Any]) -> None:
    """Each entry in the book must be a stored entry, unchanged, and the site's log unbroken."""
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


def _database_checks(report: Report, document: dict[str, Any]) -> tuple[TrustList, str] | None:
    if document.get("format") in log_book_pdf.FORMATS:
        check_log_book(report, document)
        organisation_id = _registered_organisation(report)
    else:
        record = check_database(report, report.seal)  # type: ignore[arg-type]
        organisation_id = None if record is None else record.organisation_id
    if organisation_id is None:
        return None
    return organisation_trust(organisation_id), _organisation_name(organisation_id)


def verify_pdf(
    data: bytes,
    *,
    trusted_pems: list[str] | None = None,
    trust: TrustList | None = None,
    use_database: bool = True,
    name: str = "this PDF",
) -> Report:
    """Check a record or log-book PDF; with the database, also against the stored record and
    with the certificates the record's own organisation registered as the trust anchor."""
    return verify_pdf_bytes(
        data,
        trusted_pems=trusted_pems,
        trust=trust,
        name=name,
        database=_database_checks if use_database else None,
        memory=StoredPageChecks() if use_database else None,
    )


def stored_chains(
    site_id: int, exporter_id: int, start: dt.date, end: dt.date, manifest_sha256: str
) -> Stored:
    """The records of a site-period an exporter may export, as this server holds them: every
    organisation's at the owner's building, its own for a contractor. For an export this server
    made (its kept row's HMAC holds), only those signed by the time it was made: a day signed
    later was not left out. Any other export is held to every record stored now."""
    rows = DailyRecord.objects.filter(site_id=site_id, job__date__gte=start, job__date__lte=end)
    made = made_at(manifest_sha256)
    if made is not None:
        rows = rows.filter(signed_at__lte=made)
    if not Site.objects.filter(pk=site_id, organisation_id=exporter_id).exists():
        rows = rows.filter(organisation_id=exporter_id)
    chains: dict[int, set[tuple[int, str]]] = {}
    for organisation_id, sequence, seal in rows.values_list("organisation_id", "sequence", "seal"):
        chains.setdefault(organisation_id, set()).add((sequence, seal))
    heads = None
    if made is None:
        heads = {
            organisation_id: (sequence, seal)
            for organisation_id, sequence, seal in RecordChainHead.objects.filter(
                site_id=site_id
            ).values_list("organisation_id", "sequence", "seal")
        }
    return Stored(records=chains, heads=heads)


def verify_export(
    data: bytes, *, trust: TrustList | None = None, use_database: bool = False
) -> Report:
    """Check an export; with the database, each organisation's registered certificates are the
    trust anchor when none is given, and every record of the period this server holds for the
    exported chains must be in it."""
    return verify_export_bytes(
        data,
        trust=trust,
        trust_for=organisation_trust if use_database else None,
        stored=stored_chains if use_database else None,
    )

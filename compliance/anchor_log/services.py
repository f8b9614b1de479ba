"""The building's anchor log book: signed, append-only entries chained per site.

Inspections, load tests, repairs, modifications, installation, removal from and return to
service are signed by the person who made them (password re-entered, as for daily records).
Only the building's own organisation signs entries into its log book; a contractor's pre-use
check flows in from its anchor sheet, sealed and signed with the contractor's key when it has
one. Removing an anchor from service holds every open job that plans to use it, whichever
contractor's; returning it to service clears those holds.

Appends to one site's chain are serialised by a lock on the site's row (see ``_lock_chain``).
Lock order is jobs (by id) before the site, as a sheet's transaction takes them.
"""

import datetime as dt
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

from django.db import transaction
from django.utils import timezone

from checklists.models import CheckSheet, ItemEntry
from compliance.errors import InvalidTransition, NotPermitted
from compliance.jobs.holds import (
    clear_for_returned_anchor,
    hold_for_removed_anchor,
    jobs_using,
    reread_readiness,
)
from compliance.models import (
    Anchor,
    AnchorLogEntry,
    SigningCredential,
    Site,
    User,
)
from compliance.records.sealing import canonical_bytes, check_links, seal_of, utc
from compliance.records.signing import active_credential, sign_seal
from compliance.registers.selectors import INSPECTION_KINDS, anchor_status
from compliance.registers.visibility import can_work_at, owns_site

FORMAT = "parapet.anchor-log-entry/1"
MEANING = "I made or witnessed the work recorded here and its result is as stated."
PRE_USE_MEANING = "Pre-use check recorded from the contractor's pre-start check sheet."
SIGNED_KINDS = [k for k in AnchorLogEntry.Kind if k != AnchorLogEntry.Kind.PRE_USE]


@dataclass
class HeldChains:
    """What one transaction that appends many pre-use entries (a sync batch's run) already
    knows: each organisation's signing credential, and for each site whose chain it has
    locked, where the next entry goes (sequence, previous seal). While the transaction holds
    a site's lock no one else appends to that chain, so its next entry follows the last one
    written here without locking or reading the chain again.

    Valid only while every savepoint that appended stands: a savepoint rolled back takes its
    entries and its row lock with it, so whoever rolls one back calls ``forget()``.
    """

    next_positions: dict[int, tuple[int, str]] = field(default_factory=dict)
    credentials: dict[int | None, SigningCredential | None] = field(default_factory=dict)

    def forget(self) -> None:
        self.next_positions.clear()


def _lock_chain(site_id: int) -> None:
    """Hold the site's row until this transaction ends, so one writer at a time appends.

    The chain has no head row of its own to lock, and locking its newest entry does not
    serialise: the first entry has none, and a second writer that waited re-reads the same
    newest entry and takes the same sequence. FOR NO KEY UPDATE queues the site's log writers
    without blocking rows that only refer to the site (a new job or anchor takes KEY SHARE).
    A no-op on SQLite, whose writers are serialised by the database itself.
    """
    list(
        Site.objects.select_for_update(no_key=True).filter(pk=site_id).values_list("pk", flat=True)
    )


def _next_position(site_id: int) -> tuple[int, str]:
    last = (
        AnchorLogEntry.objects.filter(site_id=site_id)
        .order_by("-sequence")
        .values_list("sequence", "seal")
        .first()
    )
    return (1, "") if last is None else (last[0] + 1, last[1])


def _create(
    *,
    anchor: Anchor,
    by: User,
    kind: str,
    result: str,
    performed_on: dt.date,
    performed_by: str,
    performed_by_company: str,
    details: str,
    credential: SigningCredential | None,
    meaning: str,
    method: str,
    sheet: "CheckSheet | None" = None,
    held: HeldChains | None = None,
) -> AnchorLogEntry:
    """Append one sealed entry; the caller's transaction holds the chain until it commits."""
    if held is not None and anchor.site_id in held.next_positions:
        sequence, previous = held.next_positions[anchor.site_id]
    else:
        _lock_chain(anchor.site_id)
        sequence, previous = _next_position(anchor.site_id)
    signed_at = timezone.now()
    document = {
        "format": FORMAT,
        "sequence": sequence,
        "previous_seal": previous or None,
        "site": {"id": anchor.site_id, "name": anchor.site.name},
        "anchor": {"id": anchor.pk, "label": anchor.label},
        "kind": kind,
        "result": result,
        "performed_on": performed_on.isoformat(),
        "performed_by": performed_by,
        "performed_by_company": performed_by_company,
        "details": details,
        "sheet": None if sheet is None else {"id": sheet.pk, "client_uuid": str(sheet.client_uuid)},
        "signature": {
            "name": by.display_name,
            "username": by.username,
            "role": by.get_role_display(),
            "organisation": by.organisation.name if by.organisation else None,
            "meaning": meaning,
            "signed_at": utc(signed_at),
            "method": method,
            "certificate_sha256": credential.fingerprint_sha256 if credential else None,
        },
    }
    seal = seal_of(document)
    entry = AnchorLogEntry.objects.create(
        site_id=anchor.site_id,
        anchor=anchor,
        kind=kind,
        result=result,
        performed_on=performed_on,
        performed_by=performed_by,
        performed_by_company=performed_by_company,
        details=details,
        sheet=sheet,
        organisation_id=by.organisation_id,
        recorded_by=by,
        sequence=sequence,
        previous_seal=previous,
        canonical_json=canonical_bytes(document).decode("utf-8"),
        seal=seal,
        seal_signature=sign_seal(seal, credential) if credential else "",
        credential=credential,
        meaning=meaning,
        signed_at=signed_at,
    )
    if held is not None:
        held.next_positions[anchor.site_id] = (sequence + 1, seal)
    return entry


def _check_return(anchor: Anchor, performed_on: dt.date) -> None:
    """A return ends a removal (or a failed test): it needs the anchor out of service, and a
    date on or after the day it went out (a return dated before let a check made while the
    anchor was out count)."""
    interval = int(anchor.site.profile.threshold("certification_interval_days"))
    anchor = Anchor.objects.prefetch_related("certifications", "log").get(pk=anchor.pk)
    status = anchor_status(anchor, interval)
    if status.in_service:
        raise InvalidTransition(
            f"Anchor {anchor.label} is in service: there is no removal for a return to end."
        )
    if status.removed_on is not None and performed_on < status.removed_on:
        raise InvalidTransition(
            f"Anchor {anchor.label} went out of service on {status.removed_on:%Y-%m-%d}: its"
            " return is dated on or after that day."
        )


def record_entry(
    *,
    anchor: Anchor,
    by: User,
    password: str,
    kind: str,
    details: str,
    performed_on: dt.date,
    performed_by: str = "",
    performed_by_company: str = "",
    result: str = AnchorLogEntry.Result.NONE,
) -> AnchorLogEntry:
    """Sign an entry into the site's log book; the signer re-enters their password.

    Only the building's own organisation signs here: a contractor working under a grant may
    see the log book, but its entries are the pre-use checks that flow in from its sheets.
    """
    if not by.can_keep_anchor_log:
        raise NotPermitted("Only a supervisor, an admin or a property manager signs log entries.")
    if not password or not by.check_password(password):
        raise NotPermitted("Re-enter your password to sign; the one given is not right.")
    if kind not in SIGNED_KINDS:
        raise InvalidTransition(f"Kind is one of: {', '.join(SIGNED_KINDS)}.")
    if not can_work_at(by.organisation_id, anchor.site, timezone.localdate()):
        raise NotPermitted("Unknown anchor.")
    if not owns_site(by.organisation_id, anchor.site):
        raise NotPermitted(
            "Only the building's owner signs its anchor log book; "
            "your pre-use checks reach it from your sheets."
        )
    if not details.strip():
        raise InvalidTransition("Say what was done and found.")
    if performed_on > timezone.localdate():
        raise InvalidTransition("Work cannot be recorded for a future date.")
    credential = active_credential(by.organisation_id)
    with transaction.atomic():
        if kind == AnchorLogEntry.Kind.RETURNED:
            _check_return(anchor, performed_on)
        stops = kind == AnchorLogEntry.Kind.REMOVED or (
            kind in INSPECTION_KINDS and result == AnchorLogEntry.Result.FAIL
        )
        # A passing inspection or load test moves the anchor's next inspection: a job held or
        # kept back as overdue may go on.
        passed = kind in INSPECTION_KINDS and result == AnchorLogEntry.Result.PASS
        moves_jobs = stops or passed or kind == AnchorLogEntry.Kind.RETURNED
        jobs = jobs_using(anchor) if moves_jobs else []  # locked before the chain: lock order
        entry = _create(
            anchor=anchor,
            by=by,
            kind=kind,
            result=result,
            performed_on=performed_on,
            performed_by=performed_by or by.display_name,
            performed_by_company=performed_by_company,
            details=details,
            credential=credential,
            meaning=MEANING,
            method="user id and password re-entered at the moment of signing",
        )
        if stops:
            hold_for_removed_anchor(jobs=jobs, anchor=anchor, entry=entry, by=by)
        elif kind == AnchorLogEntry.Kind.RETURNED:
            clear_for_returned_anchor(jobs=jobs, anchor=anchor, entry=entry, by=by)
        elif passed:
            reread_readiness(jobs=jobs, by=by)
    return entry


def log_pre_use_check(
    sheet: CheckSheet,
    entries: Sequence[ItemEntry] | None = None,
    held: HeldChains | None = None,
) -> AnchorLogEntry:
    """Copy a contractor's anchor pre-use sheet into the building's log book (``entries``:
    the sheet's entries, or at least its failed ones, when the caller has just written them;
    ``held``, what the caller's transaction already knows of the chains it appends to)."""
    assert sheet.anchor is not None
    written = sheet.entries.all() if entries is None else entries
    failed = [e for e in written if e.verdict == "fail"]
    labels = {item["key"]: item.get("label") or item["key"] for item in sheet.version.items}

    def said(entry: ItemEntry) -> str:
        label = labels.get(entry.item_key, entry.item_key)
        if not entry.message or entry.message.startswith("Marked failed"):
            return label
        return f"{label}: {entry.message.removesuffix('.')}"

    details = "All items passed." if not failed else f"Failed: {'; '.join(map(said, failed))}."
    org = sheet.filled_by.organisation_id
    if held is not None and org in held.credentials:
        credential = held.credentials[org]
    else:
        credential = SigningCredential.objects.filter(organisation_id=org, active=True).first()
        if held is not None:
            held.credentials[org] = credential
    return _create(
        anchor=sheet.anchor,
        by=sheet.filled_by,
        kind=AnchorLogEntry.Kind.PRE_USE,
        result=AnchorLogEntry.Result.FAIL
        if sheet.verdict == "fail"
        else AnchorLogEntry.Result.PASS,
        # The job's day, but never a later day than the one it is recorded on: a check sent
        # for a job planned ahead was done now, and the book takes no future dates.
        performed_on=min(sheet.job.date, timezone.localdate()),
        performed_by=sheet.filled_by.display_name,
        performed_by_company=sheet.filled_by.organisation.name
        if sheet.filled_by.organisation
        else "",
        details=details,
        credential=credential,
        meaning=PRE_USE_MEANING,
        method=f"recorded from pre-start check sheet {sheet.pk} signed in by its operator",
        sheet=sheet,
        held=held,
    )


def verify_log_chain(site_id: int) -> list[Any]:
    rows = list(
        AnchorLogEntry.objects.filter(site_id=site_id)
        .order_by("sequence")
        .values("sequence", "seal", "previous_seal", "canonical_json")
    )
    return check_links(rows)

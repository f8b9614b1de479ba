"""The phone's offline queue lands here: a batch of client records, each applied exactly once.

The records that follow one another for one job are applied in one transaction that locks the
job's row first, their receipts written together at the end, the job's readiness settled once
before it commits. The run is first applied without a savepoint per record (two statements a
record saved); should any of its records be refused or clash, the whole run rolls back and is
applied again with each record in its own savepoint, so a record refused rolls back alone. A
batch cut off half-way leaves whole records behind (those of the jobs it finished), and a retry
answers from the receipts. A record of no job (a drop log, one that names no usable job) is
applied in its own transaction with its receipt.
"""

import datetime as dt
import hashlib
import json
import math
import uuid
from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Any

from django.core.exceptions import ValidationError
from django.db import IntegrityError, transaction
from django.utils import timezone
from django.utils.dateparse import parse_datetime

from checklists.models import ChecklistVersion, CheckSheet
from checklists.selectors import fillable_versions
from checklists.services import record_sheet
from compliance.anchor_log.services import HeldChains
from compliance.errors import DomainError, rejection_for
from compliance.jobs import services
from compliance.jobs.selectors import drops_of
from compliance.models import Anchor, Drop, Equipment, Hold, Job, SyncReceipt, User
from compliance.records.sealing import canonical_bytes
from compliance.registers.visibility import anchors_checkable_by

RECORD_KINDS = ("sheet", "drop_log", "job_action")
MAX_BATCH = 200
ENVELOPE_KEYS = {"type", "client_uuid", "data"}
DATA_KEYS = {
    "sheet": {"job", "version", "anchor", "equipment", "entries", "device_time", "remarks"},
    "drop_log": {"drop", "device_time", "note"},
    "job_action": {"job", "action", "reason"},
}


@dataclass
class Batch:
    """One request's worth of records from one phone."""

    user: User
    phone_clock_offset_s: int | None = None
    pending_readiness: set[int] = field(default_factory=set)
    known: dict[tuple[str, int], Any] = field(default_factory=dict)
    drops: dict[int, list[Drop]] = field(default_factory=dict)
    receipts: dict[uuid.UUID, SyncReceipt] = field(default_factory=dict)
    receipts_loaded: bool = False
    run: "JobRun | None" = None

    def drops_of(self, job: Job) -> list[Drop]:
        """A job's drops with their anchors and equipment, read once per batch: a batch
        records sheets and actions but never adds a drop."""
        if job.pk not in self.drops:
            self.drops[job.pk] = drops_of(job)
        return self.drops[job.pk]

    def lookup(self, model: Any, queryset: Callable[[], Any], pk: Any, name: str) -> Any:
        """_get, remembered for the batch: versions, anchors and equipment do not change in it.
        ``queryset`` makes the visible rows' queryset, built only when the batch has not read
        the row yet (building one per record was a tenth of a batch's time)."""
        if pk is None:  # not named: no queryset to build (one of anchors was 1.5 ms)
            return None
        if isinstance(pk, int) and not isinstance(pk, bool) and (name, pk) in self.known:
            return self.known[(name, pk)]
        obj = _get(model, queryset(), pk, name)
        if obj is not None:
            self.known[(name, pk)] = obj
        return obj

    def preload(self, records: list[Any]) -> None:
        """Read every version, anchor and equipment the batch names in one query each (the
        ones not found are looked up, and refused, record by record)."""
        org = self.user.organisation_id
        wanted: dict[str, set[int]] = {"version": set(), "anchor": set(), "equipment": set()}
        for record in records:
            data = record.get("data") if isinstance(record, dict) else None
            if not isinstance(data, dict) or record.get("type") != "sheet":
                continue
            for name, ids in wanted.items():
                if _is_id(data.get(name)):
                    ids.add(data[name])
        sources = {
            "version": fillable_versions(org),
            "anchor": anchors_checkable_by(org),
            "equipment": Equipment.objects.filter(organisation_id=org),
        }
        for name, ids in wanted.items():
            if ids:
                for pk, obj in sources[name].in_bulk(sorted(ids)).items():
                    self.known[(name, pk)] = obj

    def settle(self, job_id: int | None = None) -> None:
        """Bring the jobs whose sheets passed up to date (one job, or all of them)."""
        ids = [job_id] if job_id is not None else sorted(self.pending_readiness)
        for pk in ids:
            if pk not in self.pending_readiness:
                continue
            self.pending_readiness.discard(pk)
            if self.run is not None and self.run.job is not None and self.run.job.pk == pk:
                services.refresh_readiness(job=self.run.job, by=self.user, drops=self.drops.get(pk))
                continue
            with transaction.atomic():
                job = Job.objects.select_for_update().select_related("site__profile").get(pk=pk)
                services.refresh_readiness(job=job, by=self.user)


@dataclass
class JobRun:
    """Consecutive records of one job, applied in one transaction with the job's row locked."""

    job_id: int
    job: Job | None
    unused_uuids: set[uuid.UUID]
    open_hold_requirements: set[str]
    receipts: list[SyncReceipt] = field(default_factory=list)
    chains: HeldChains = field(default_factory=HeldChains)
    optimistic: bool = False
    """No savepoint per record: any refusal or clash raises RunRefused instead of being
    answered, and the run is applied again with a savepoint per record."""


class RunRefused(Exception):
    """A record of an optimistic run was refused or clashed; the run rolls back whole."""


class RecordRejected(Exception):
    def __init__(self, errors: dict[str, Any]) -> None:
        super().__init__(str(errors))
        self.errors = errors


MAX_ID = 2**63 - 1


def _is_id(value: Any) -> bool:
    """A whole number a primary key column can hold."""
    return isinstance(value, int) and not isinstance(value, bool) and 0 < value <= MAX_ID


def _get(model: Any, queryset: Any, pk: Any, field: str) -> Any:
    if pk is None:
        return None
    if isinstance(pk, bool) or not isinstance(pk, int):
        raise RecordRejected({field: ["Must be an id (a whole number)."]})
    obj = queryset.filter(pk=pk).first()
    if obj is None:
        raise RecordRejected({field: [f"Unknown {model._meta.verbose_name}."]})
    return obj


def _device_time(data: dict[str, Any]) -> dt.datetime | None:
    raw = data.get("device_time")
    if raw in (None, ""):
        return None
    try:
        parsed = parse_datetime(raw) if isinstance(raw, str) else None
    except ValueError:  # a well-formed but impossible date, such as 2026-02-30
        parsed = None
    if parsed is None:
        raise RecordRejected({"device_time": ["An ISO 8601 date and time that exists."]})
    if timezone.is_naive(parsed):
        raise RecordRejected({"device_time": ["Give the time zone offset."]})
    try:
        parsed.astimezone(dt.UTC)
    except OverflowError:  # year 1 or 9999 pushed past the calendar by its offset
        raise RecordRejected(
            {"device_time": ["A date and time the calendar holds once taken to UTC."]}
        ) from None
    # A phone whose clock reset (1900, 2300) keeps its sheet; the record states the offset.
    return parsed


UNSTORABLE_TEXT = "Text may not hold a NUL or an unpaired surrogate."
UNSTORABLE_NUMBER = "A number a float holds (at most about 1.8e308)."


def _unstorable(text: str) -> bool:
    return "\x00" in text or any("\ud800" <= ch <= "\udfff" for ch in text)


def printable(text: str) -> str:
    """The text with each unpaired surrogate shown as U+FFFD: a name sent back in an error must
    be writable as UTF-8, or the answer itself fails (a NUL is written as \\u0000)."""
    if not any("\ud800" <= ch <= "\udfff" for ch in text):
        return text
    return "".join("\ufffd" if "\ud800" <= ch <= "\udfff" else ch for ch in text)


def _plainly_storable(value: Any, numbers: bool) -> bool:
    """True when C's JSON encoder shows at once that nothing in ``value`` is unstorable: it
    refuses a non-finite number (with ``numbers``), writes a NUL as \\u0000 and leaves an
    unpaired surrogate for UTF-8 to refuse. False sends the value to the walk, which names
    the part (a false alarm, such as a backslash followed by u0000 typed as text, is cleared
    there): the walk in Python was a tenth of a morning sync's batch."""
    try:
        text = json.dumps(value, ensure_ascii=False, allow_nan=not numbers, check_circular=False)
        text.encode()
    except (ValueError, TypeError, RecursionError):  # UnicodeEncodeError is a ValueError
        return False
    return "\\u0000" not in text


def unstorable(value: Any, path: str = "", numbers: bool = True) -> tuple[str, str] | None:
    """(path, why) of the first part of a parsed JSON value nothing downstream can hold, else
    None: text with a NUL or an unpaired surrogate (PostgreSQL refuses NUL in text and jsonb,
    UTF-8 has no surrogates) or, with ``numbers``, a number past binary64 (JSON's 1e400 reads
    as infinity, which no id, column or calculation takes). A bad key is named with
    printable(). Walked without recursion, so no nesting the JSON parser accepts can exhaust
    the stack here."""
    if _plainly_storable(value, numbers):
        return None
    stack: list[tuple[Any, str]] = [(value, path)]
    while stack:
        item, at = stack.pop()
        if isinstance(item, str):
            if _unstorable(item):
                return at, UNSTORABLE_TEXT
        elif isinstance(item, float):
            if numbers and not math.isfinite(item):
                return at, UNSTORABLE_NUMBER
        elif isinstance(item, dict):
            children = []
            for key, sub in item.items():
                name = f"{at}.{printable(str(key))}" if at else printable(str(key))
                if isinstance(key, str) and _unstorable(key):
                    return name, UNSTORABLE_TEXT
                children.append((sub, name))
            stack.extend(reversed(children))
        elif isinstance(item, list):
            stack.extend(reversed([(sub, f"{at}[{i}]") for i, sub in enumerate(item)]))
    return None


def _apply_sheet(batch: Batch, data: dict[str, Any], client_uuid: uuid.UUID) -> dict[str, Any]:
    user = batch.user
    org = user.organisation_id
    run = batch.run
    in_run = run is not None and data.get("job") == run.job_id
    if run is not None and in_run:
        if run.job is None:
            raise RecordRejected({"job": ["Unknown job."]})
        job = run.job
    else:
        job = _get(
            Job,
            Job.objects.filter(organisation_id=org).select_related("site__profile"),
            data.get("job"),
            "job",
        )
    if job is None:
        raise RecordRejected({"job": ["Required."]})
    version = batch.lookup(
        ChecklistVersion, lambda: fillable_versions(org), data.get("version"), "version"
    )
    if version is None:
        raise RecordRejected({"version": ["Required."]})
    anchor = batch.lookup(Anchor, lambda: anchors_checkable_by(org), data.get("anchor"), "anchor")
    equipment = batch.lookup(
        Equipment,
        lambda: Equipment.objects.filter(organisation_id=org),
        data.get("equipment"),
        "equipment",
    )
    remarks = data.get("remarks", "")
    if not isinstance(remarks, str) or len(remarks) > 4000:
        raise RecordRejected({"remarks": ["A text of at most 4000 characters."]})
    drops = batch.drops_of(job)
    if anchor is not None:
        # The same anchor as the job's drops read it, certifications and log prefetched.
        anchor = next(
            (a for d in drops for a in (d.anchor, d.safety_anchor) if a.pk == anchor.pk), anchor
        )
    sheet, _ = record_sheet(
        job=job,
        version=version,
        by=user,
        entries=data.get("entries"),
        client_uuid=client_uuid,
        anchor=anchor,
        equipment=equipment,
        device_time=_device_time(data),
        remarks=remarks,
        drops=drops,
        phone_clock_offset_s=batch.phone_clock_offset_s,
        defer_readiness=True,
        job_locked=in_run,
        uuid_unused=in_run and run is not None and client_uuid in run.unused_uuids,
        open_hold_requirements=run.open_hold_requirements if in_run and run else None,
        held_chains=run.chains if in_run and run else None,
    )
    batch.pending_readiness.add(job.pk)
    return _sheet_answer(sheet)


def _sheet_answer(sheet: CheckSheet) -> dict[str, Any]:
    """What a receipt keeps of an applied sheet, and the sync answers with."""
    return {
        "sheet": sheet.pk,
        "verdict": sheet.verdict,
        "job": sheet.job_id,
        "blocking_failures": sheet.blocking_failures,
    }


def _apply_drop_log(batch: Batch, data: dict[str, Any], client_uuid: uuid.UUID) -> dict[str, Any]:
    user = batch.user
    drop = _get(
        Drop,
        Drop.objects.filter(job__organisation_id=user.organisation_id).select_related("job"),
        data.get("drop"),
        "drop",
    )
    if drop is None:
        raise RecordRejected({"drop": ["Required."]})
    batch.settle(drop.job_id)
    drop.job.refresh_from_db()
    refusal = services.drop_refusal(
        drop.job, _device_time(data), batch.phone_clock_offset_s, drop=drop
    )
    if refusal:
        raise RecordRejected({"drop": [refusal]})
    note = data.get("note", "")
    if not isinstance(note, str) or len(note) > services.DROP_NOTE_MAX:
        raise RecordRejected({"note": [f"A text of at most {services.DROP_NOTE_MAX} characters."]})
    log = services.log_drop(
        drop=drop,
        by=user,
        note=note,
        device_time=_device_time(data),
        client_uuid=client_uuid,
        phone_clock_offset_s=batch.phone_clock_offset_s,
    )
    return {"drop_log": log.pk, "job": drop.job_id}


REASON_MAX = 2000
ACTIONS = {"start": services.start_job, "pause": services.pause_job, "close": services.close_job}


def _apply_job_action(batch: Batch, data: dict[str, Any], client_uuid: uuid.UUID) -> dict[str, Any]:
    user = batch.user
    run = batch.run
    if run is not None and data.get("job") == run.job_id:
        if run.job is None:
            raise RecordRejected({"job": ["Unknown job."]})
        batch.settle(run.job_id)
        job = run.job
    else:
        job = _get(
            Job, Job.objects.filter(organisation_id=user.organisation_id), data.get("job"), "job"
        )
        if job is None:
            raise RecordRejected({"job": ["Required."]})
        batch.settle(job.pk)
        job.refresh_from_db()
    action = data.get("action")
    if not isinstance(action, str) or action not in ACTIONS:
        raise RecordRejected({"action": [f"One of {', '.join(ACTIONS)}."]})
    reason = data.get("reason", "")
    if not isinstance(reason, str):
        # An object was stored as its Python repr ("{'why': ...}") in the job's log.
        raise RecordRejected({"reason": ["A reason is a text."]})
    if len(reason) > REASON_MAX:
        raise RecordRejected({"reason": [f"At most {REASON_MAX} characters."]})
    extra = {} if action == "start" else {"reason": reason}
    job = ACTIONS[action](job=job, by=user, **extra)
    if run is not None and run.job is not None and job.pk == run.job_id:
        run.job = job  # the action's locked row, with the state it moved the job to
    return {"job": job.pk, "state": job.state}


def _uuids(records: list[Any]) -> list[uuid.UUID]:
    """The well-formed client uuids of a batch (the others are refused record by record)."""
    found = []
    for record in records:
        raw = record.get("client_uuid") if isinstance(record, dict) else None
        if isinstance(raw, str | int) and not isinstance(raw, bool):
            try:
                found.append(uuid.UUID(str(raw)))
            except ValueError:
                continue
    return found


APPLY = {"sheet": _apply_sheet, "drop_log": _apply_drop_log, "job_action": _apply_job_action}


def apply_batch(
    user: User, records: list[Any], sent_at: dt.datetime | None = None
) -> list[dict[str, Any]]:
    """Apply a phone's batch in order; readiness is settled once per job at the end.

    ``sent_at`` is the phone's clock when it sent the batch; its difference from the server's
    clock is kept with every record, so a phone whose clock is wrong can be told from a phone
    that was offline.
    """
    batch = Batch(user=user, phone_clock_offset_s=clock_offset(sent_at))
    # The receipts of records sent before, all in one read; a record that another request
    # applies meanwhile still meets the receipt's unique client uuid (see apply_record). The
    # records of a job's run are looked up again under the job's lock, so this read covers
    # only the others (none, in a morning's batch of sheets).
    alone = [r for r in records if _job_named(r) is None]
    wanted = _uuids(alone)
    if wanted:
        batch.receipts = {
            r.client_uuid: r for r in SyncReceipt.objects.filter(client_uuid__in=wanted)
        }
    batch.receipts_loaded = True
    batch.preload(records)
    results: list[dict[str, Any]] = []
    start = 0
    while start < len(records):
        job_id = _job_named(records[start])
        end = start + 1
        if job_id is None:
            results.append(apply_record(batch, records[start]))
        else:
            while end < len(records) and _job_named(records[end]) == job_id:
                end += 1
            results.extend(_apply_job_run(batch, job_id, records[start:end]))
        start = end
    batch.settle()
    return results


def _job_named(record: Any) -> int | None:
    """The job a sheet or a job action names, if it is an id; else None (a drop log names a
    drop, and a malformed record is refused on its own)."""
    if not isinstance(record, dict) or record.get("type") not in ("sheet", "job_action"):
        return None
    data = record.get("data")
    if not isinstance(data, dict):
        return None
    job_id = data.get("job")
    return job_id if _is_id(job_id) else None


def _apply_job_run(
    batch: Batch, job_id: int, records: list[Any], optimistic: bool = True
) -> list[dict[str, Any]]:
    """Apply consecutive records of one job in one transaction (see the module's docstring).

    The job's row is locked first, so a second request with the same records waits here and
    then finds their receipts. Should one be written meanwhile all the same (a receipt's
    client uuid is unique), the whole run rolls back and each record is applied on its own,
    answering from the receipt the other request wrote. ``optimistic``: no savepoint per
    record; a refused record rolls the run back and it is applied again with them.
    """
    uuids = [u for u in _uuids(records) if u not in batch.receipts]
    known_before = dict(batch.receipts)
    try:
        with transaction.atomic():
            job = (
                Job.objects.select_for_update(of=("self",))
                .select_related("site__profile")
                .filter(organisation_id=batch.user.organisation_id, pk=job_id)
                .first()
            )
            unused: set[uuid.UUID] = set()
            open_holds: set[str] = set()
            if uuids:
                # Receipts of records sent before, or written while this request waited for
                # the lock.
                for receipt in SyncReceipt.objects.filter(client_uuid__in=uuids):
                    batch.receipts[receipt.client_uuid] = receipt
            if job is not None and uuids:
                # A uuid with no receipt is taken as unused: a sheet made with it some other
                # way (POST /sheets/) clashes on insert, and the run is applied record by
                # record instead (below).
                unused = {u for u in uuids if u not in batch.receipts}
                open_holds = set(
                    Hold.objects.filter(
                        job=job, clearance__isnull=True, sheet__isnull=False
                    ).values_list("requirement", flat=True)
                )
            batch.run = JobRun(
                job_id=job_id,
                job=job,
                unused_uuids=unused,
                open_hold_requirements=open_holds,
                optimistic=optimistic,
            )
            lines = [apply_record(batch, record) for record in records]
            if batch.run.receipts:
                SyncReceipt.objects.bulk_create(batch.run.receipts)
            batch.settle(job_id)
            return lines
    except RunRefused:
        batch.run = None
        batch.receipts = known_before
        batch.pending_readiness.discard(job_id)
        return _apply_job_run(batch, job_id, records, optimistic=False)
    except IntegrityError:
        batch.run = None
        batch.receipts = known_before
        batch.pending_readiness.discard(job_id)
        return [apply_record(batch, record) for record in records]
    finally:
        batch.run = None  # whatever ended the run, later records are not applied as its own


REUSED_ID = (
    "This record id was used before for a different record, which stands as it was first"
    " sent; this one is not stored. Make it again to send it as a new record."
)
"""A client uuid sent again with other content (see content_digest)."""


def content_digest(record: dict[str, Any]) -> str | None:
    """SHA-256 of what a record says: its type and data as RFC 8785 canonical JSON (keys in one
    order, 7 and 7.0 one number). The same record sent again in a later batch has the same,
    whatever the batch says (its sent_at); None for content with no canonical form (never
    applied: the checks of apply_record refuse it)."""
    try:
        raw = canonical_bytes({"type": record.get("type"), "data": record.get("data")})
    except (ValueError, TypeError, RecursionError):  # rfc8785's refusals are ValueErrors
        return None
    return hashlib.sha256(raw).hexdigest()


def reuses_id(receipt: SyncReceipt, record: dict[str, Any]) -> bool:
    """Whether ``record``, sent under the client uuid of ``receipt``, is another record than
    the one the receipt was kept for: another kind, or other content. A receipt kept before
    its content was hashed is taken as the same record of its kind."""
    if receipt.kind != record.get("type"):
        return True
    return bool(receipt.content_sha256) and receipt.content_sha256 != content_digest(record)


def clock_offset(sent_at: dt.datetime | None) -> int | None:
    """How far the sender's clock was off when it sent (its `sent_at` less the server's time),
    in whole seconds; None when it did not say."""
    return None if sent_at is None else round((sent_at - timezone.now()).total_seconds())


def record_posted_sheet(
    *, by: User, content: dict[str, Any], client_uuid: uuid.UUID | None = None, **fields: Any
) -> tuple[CheckSheet, bool]:
    """A sheet posted to the sheets endpoint, recorded once per client uuid as a batch's sheet
    is: with a receipt keeping its content's digest (``content`` is the body as sent, less its
    client_uuid; the same fields as a batch record's data), in the sheet's transaction. The
    same record sent again, this way or in a batch, is answered as its duplicate; another
    record under its id is refused (REUSED_ID under client_uuid) and nothing is stored. A
    sheet posted before its receipt was kept is answered as the same record. ``fields`` are
    record_sheet's; returns (sheet, created)."""
    record = {"type": "sheet", "data": content}
    client_uuid = client_uuid or uuid.uuid4()
    try:
        return _record_posted_sheet(by=by, record=record, client_uuid=client_uuid, **fields)
    except IntegrityError:
        # Another request's receipt under this id landed between the read and the insert
        # (PostgreSQL; SQLite's writers take turns): read again, it is answered from there.
        return _record_posted_sheet(by=by, record=record, client_uuid=client_uuid, **fields)


def _record_posted_sheet(
    *, by: User, record: dict[str, Any], client_uuid: uuid.UUID, **fields: Any
) -> tuple[CheckSheet, bool]:
    with transaction.atomic():
        receipt = SyncReceipt.objects.filter(client_uuid=client_uuid).first()
        if receipt is not None and reuses_id(receipt, record):
            raise ValidationError({"client_uuid": REUSED_ID})
        sheet, created = record_sheet(by=by, client_uuid=client_uuid, **fields)
        if not created:
            if receipt is None:
                # Stored meanwhile by another request of the same id: its receipt is there.
                receipt = SyncReceipt.objects.filter(client_uuid=client_uuid).first()
                if receipt is not None and reuses_id(receipt, record):
                    raise ValidationError({"client_uuid": REUSED_ID})
            return sheet, False
        SyncReceipt.objects.create(
            client_uuid=client_uuid,
            kind="sheet",
            user=by,
            status="applied",
            result=_sheet_answer(sheet),
            device_time=sheet.device_time,
            content_sha256=content_digest(record) or "",
        )
    return sheet, True


def _answer_again(
    line: dict[str, Any], receipt: SyncReceipt, user: User, record: dict[str, Any]
) -> dict[str, Any]:
    """The answer to a record whose client uuid has a receipt: the stored answer for the same
    record sent again; a refusal of this record alone for another person's uuid, or for other
    content under the uuid (a failure sent under a pass's id was answered 'pass' and lost). A
    receipt kept before its content was hashed answers as the same record."""
    if receipt.user_id != user.pk:
        return {**line, "status": "rejected", "errors": {"client_uuid": ["Already used."]}}
    if reuses_id(receipt, record):
        return {**line, "status": "rejected", "errors": {"client_uuid": [REUSED_ID]}}
    return {**line, "status": receipt.status, "duplicate": True, **receipt.result}


def apply_record(batch: Batch, record: Any) -> dict[str, Any]:
    """Apply one client record exactly once and return its result line (see apply_batch)."""
    user = batch.user
    if not isinstance(record, dict):
        return {
            "client_uuid": None,
            "status": "rejected",
            "errors": {"record": ["Must be an object."]},
        }
    raw_uuid = record.get("client_uuid")
    try:
        client_uuid = (
            uuid.UUID(str(raw_uuid))
            if isinstance(raw_uuid, str | int) and not isinstance(raw_uuid, bool)
            else None
        )
    except ValueError:
        client_uuid = None
    if client_uuid is None:
        return {
            "client_uuid": printable(raw_uuid[:100]) if isinstance(raw_uuid, str) else None,
            "status": "rejected",
            "errors": {"client_uuid": ["A UUID made on the phone is required."]},
        }
    line: dict[str, Any] = {"client_uuid": str(client_uuid)}
    receipt = (
        batch.receipts.get(client_uuid)
        if batch.receipts_loaded
        else SyncReceipt.objects.filter(client_uuid=client_uuid).first()
    )
    if receipt is not None:
        return _answer_again(line, receipt, user, record)
    unknown = sorted(printable(str(k)[:80]) for k in record if k not in ENVELOPE_KEYS)
    if unknown:
        return {**line, "status": "rejected", "errors": {k: ["Unknown field."] for k in unknown}}
    kind = record.get("type")
    data = record.get("data")
    if not isinstance(kind, str) or kind not in APPLY:  # an object or a list is unhashable
        return {
            **line,
            "status": "rejected",
            "errors": {"type": [f"One of {', '.join(RECORD_KINDS)}."]},
        }
    if not isinstance(data, dict):
        return {**line, "status": "rejected", "errors": {"data": ["Must be an object."]}}
    unknown = sorted(printable(str(k)[:80]) for k in data if k not in DATA_KEYS[kind])
    if unknown:
        return {**line, "status": "rejected", "errors": {k: ["Unknown field."] for k in unknown}}
    found = unstorable(data)
    if found is not None:
        where, why = found
        return {**line, "status": "rejected", "errors": {where or "data": [why]}}
    optimistic = batch.run is not None and batch.run.optimistic
    try:
        with transaction.atomic(savepoint=not optimistic):
            try:
                result = APPLY[kind](batch, data, client_uuid)
                status = "applied"
            except (RecordRejected, ValidationError, DomainError) as exc:
                if optimistic:  # no savepoint to roll this record back to alone
                    raise RunRefused from exc
                if isinstance(exc, RecordRejected):
                    result, status = {"errors": exc.errors}, "rejected"
                else:
                    # The API's mapping of domain errors, as one refused record's errors.
                    result, status = (
                        rejection_for(exc) or {"errors": {"record": [str(exc)]}},
                        "rejected",
                    )
            if status == "applied":
                receipt = SyncReceipt(
                    client_uuid=client_uuid,
                    kind=kind,
                    user=user,
                    status=status,
                    result=result,
                    device_time=_device_time(data),
                    phone_clock_offset_s=batch.phone_clock_offset_s,
                    content_sha256=content_digest(record) or "",
                )
                if batch.run is not None:
                    batch.run.receipts.append(receipt)  # written with the run's last record
                else:
                    receipt.save()
                batch.receipts[client_uuid] = receipt
        if status != "applied" and batch.run is not None:
            # A refused record's savepoint may have been rolled back (an inner block that
            # failed marks it so), with whatever it appended: see below.
            batch.run.chains.forget()
    except BaseException as exc:
        if batch.run is not None:
            # This record's savepoint rolled back, with any log entries it appended and the
            # chain locks it took: the run's next entry locks and reads its chain again.
            batch.run.chains.forget()
        if optimistic and isinstance(exc, IntegrityError):
            raise RunRefused from exc  # the transaction is broken: no read is possible
        if not isinstance(exc, IntegrityError):
            raise
        receipt = SyncReceipt.objects.filter(client_uuid=client_uuid).first()
        if receipt is None:
            raise
        return _answer_again(line, receipt, user, record)
    return {**line, "status": status, **result}

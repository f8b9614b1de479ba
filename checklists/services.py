"""Publishing checklist versions and recording check sheets."""

import datetime as dt
import difflib
import json
import math
import uuid
from collections.abc import Iterable, Sequence
from dataclasses import replace
from operator import attrgetter
from typing import Any

from django.core.exceptions import ValidationError
from django.db import IntegrityError, connection, models, transaction
from django.utils import timezone

from checklists.models import Checklist, ChecklistVersion, CheckSheet, ItemEntry
from checklists.schema import content_hash, validate_items
from checklists.selectors import (
    UNKNOWN_VERSION,
    context_reads,
    drop_context,
    drop_key,
    read_values,
)
from checklists.verdicts import EntryError, ItemResult, SheetOutcome, evaluate
from compliance import clock
from compliance.anchor_log.services import HeldChains, log_pre_use_check
from compliance.engineering import CALCULATIONS
from compliance.errors import InvalidTransition, NotPermitted, require_writer
from compliance.jobs.holds import locked, reread_for_new_version
from compliance.jobs.selectors import closed_at, day_signed, drop_serves, drops_of
from compliance.jobs.services import apply_sheet_outcome
from compliance.models import (
    Anchor,
    Drop,
    Equipment,
    Job,
    JobState,
    Organisation,
    User,
)
from compliance.registers.services import (
    audit_register_change,
    require_register_keeper,
    save_new_register_row,
)
from compliance.timeline import WEATHER_CHECKLIST, WEATHER_RECHECK


def _check_calc_names(items: list[dict[str, Any]]) -> None:
    errors = {
        f"items[{i}].calc": f"Unknown calculation {item['calc']!r}."
        for i, item in enumerate(items)
        if item.get("kind") == "calc" and item.get("calc") not in CALCULATIONS
    }
    if errors:
        raise ValidationError(errors)


def _check_default_floor(version: ChecklistVersion) -> None:
    """An organisation's own checklist of a default's key replaces the default for every job
    of the organisation (selectors.current_versions), so it keeps each blocking item of the
    default's current version: same key, same kind, still blocking, and a calculation with the
    same calculation and inputs. It may add items, change the words and set its own limits
    (the competent person's to set); it may not drop a stop-work check."""
    checklist = version.checklist
    if checklist.organisation_id is None:
        return
    default = (
        ChecklistVersion.objects.filter(
            checklist__key=checklist.key,
            checklist__organisation__isnull=True,
            status=ChecklistVersion.Status.PUBLISHED,
        )
        .order_by("-number")
        .first()
    )
    if default is None:
        return
    own = {item["key"]: item for item in version.items}
    lost = [
        item["key"]
        for item in default.items
        if item.get("blocking")
        and not ((kept := own.get(item["key"])) is not None and _rule(kept) == _rule(item))
    ]
    if lost:
        raise ValidationError(
            {
                "items": (
                    f"This checklist replaces Parapet's default {checklist.key!r}, so it keeps"
                    " each of the default's blocking items as it is, but for its words and"
                    " limits (still blocking, of the same kind and unit, never skippable, a"
                    " calculation with the same inputs). Missing or changed:"
                    f" {', '.join(lost)}."
                )
            }
        )


REWORDABLE = ("label", "reason", "limits", "caution_below")
"""What an own checklist may change in a default's blocking item: its words and its limits."""


def _rule(item: dict[str, Any]) -> dict[str, Any]:
    """An item without its words and limits: its kind, that it blocks, whether it may be
    answered 'not applicable' or left out, its unit, schedule, calculation and inputs."""
    return {key: value for key, value in item.items() if key not in REWORDABLE}


def _finite(value: Any) -> bool:
    """A number that is a finite float (an integer of any length is allowed in JSON)."""
    try:
        return math.isfinite(value)
    except OverflowError:
        return False


def _check_literal_numbers(items: list[dict[str, Any]]) -> None:
    """A limit is a number; a literal number anywhere is finite. Refused here, named, so no
    sheet filled against the version fails later on a limit it cannot use."""
    errors: dict[str, str] = {}
    for i, item in enumerate(items):
        if not isinstance(item, dict):
            continue
        for group in ("limits", "inputs", "schedule"):
            sources = item.get(group)
            if not isinstance(sources, dict):
                continue
            for name, source in sources.items():
                if not isinstance(source, dict) or "value" not in source:
                    continue
                value = source["value"]
                number = isinstance(value, int | float) and not isinstance(value, bool)
                if group == "limits" and not number:
                    errors[f"items[{i}].{group}.{name}"] = "A literal limit is a number."
                elif number and not _finite(value):
                    errors[f"items[{i}].{group}.{name}"] = "A literal value is a finite number."
    if errors:
        raise ValidationError(errors)


def _check_storable(outcome: SheetOutcome) -> None:
    """Refuse, naming the entry, an outcome holding a number that is not finite (a margin
    that overflowed against a limit): it could neither be stored as JSON nor shown."""

    def finite(value: Any) -> bool:
        if isinstance(value, float):
            return math.isfinite(value)
        if isinstance(value, dict):
            return all(finite(v) for v in value.values())
        if isinstance(value, list | tuple):
            return all(finite(v) for v in value)
        return True

    try:  # C's encoder refuses a non-finite number anywhere: one pass for the usual sheet
        json.dumps([[i.value, i.margin, i.working] for i in outcome.items], allow_nan=False)
        return
    except (ValueError, TypeError, RecursionError):
        pass  # find the entry to name (or, for what JSON cannot write, leave it to the walk)
    for item in outcome.items:
        if not finite([item.value, item.margin, item.working]):
            raise ValidationError(
                {
                    f"entries.{item.key}.value": (
                        "Out of range: against this item's limits the reading gives a number"
                        " beyond what can be recorded; check the value, its unit and the limits."
                    )
                }
            )


DEFAULTS_FIXED = "Default checklists change only by a new release of Parapet."


def _own_checklist(checklist: Checklist, by: User | None, words: str) -> None:
    """A person changes only the organisation's own checklists; the defaults (no organisation)
    change with a release, through the loader, which acts as nobody (`by` None)."""
    if by is not None and checklist.organisation_id != by.organisation_id:
        raise NotPermitted(words)


def create_checklist(
    *, by: User, key: str, title: str, applies_to: str, description: str = ""
) -> Checklist:
    """A checklist of the organisation's own, with no version yet (drafts follow)."""
    require_register_keeper(by)
    default = Checklist.objects.filter(key=key, organisation__isnull=True).first()
    if default is not None and default.applies_to != applies_to:
        raise ValidationError(
            {
                "applies_to": (
                    f"Parapet's default checklist {key!r} is for {default.applies_to}; an own"
                    " checklist of that key replaces it and must be for the same subject."
                )
            }
        )
    checklist = Checklist(
        organisation_id=by.organisation_id,
        key=key,
        title=title,
        applies_to=applies_to,
        description=description,
    )
    with transaction.atomic():
        save_new_register_row(
            checklist, unique={"key": "Your organisation already has a checklist of this key."}
        )
        audit_register_change(subject="checklist", row=checklist, action="created", by=by)
    return checklist


def create_draft(
    *, checklist: Checklist, items: list[dict[str, Any]], by: User | None, notes: str = ""
) -> ChecklistVersion:
    """Start a new draft version numbered after the newest existing one."""
    _own_checklist(checklist, by, DEFAULTS_FIXED)
    validate_items(items)
    _check_literal_numbers(items)
    with transaction.atomic():
        last = checklist.versions.order_by("-number").values_list("number", flat=True).first()
        version = ChecklistVersion(
            checklist=checklist, number=(last or 0) + 1, items=items, notes=notes, created_by=by
        )
        version.full_clean(exclude=["content_hash"])
        version.save()
    return version


def update_draft(
    *, version: ChecklistVersion, items: list[dict[str, Any]], by: User | None = None
) -> ChecklistVersion:
    """Change a draft's items; a published version never changes."""
    if version.status == ChecklistVersion.Status.PUBLISHED or (
        by is not None and version.checklist.organisation_id != by.organisation_id
    ):
        raise InvalidTransition("A published version never changes; start a new draft.")
    validate_items(items)
    _check_literal_numbers(items)
    version.items = items
    version.save()  # refuses a published version
    return version


def publish_version(*, version: ChecklistVersion, by: User | None) -> ChecklistVersion:
    """Seal a draft: validate, hash and freeze it. Publishing twice is refused."""
    _own_checklist(version.checklist, by, "Default checklists are published with Parapet.")
    if by is not None and not by.can_supervise:
        raise NotPermitted("Only a supervisor or an admin can publish a checklist.")
    with transaction.atomic():
        version = (
            ChecklistVersion.objects.select_for_update()
            .select_related("checklist")
            .get(pk=version.pk)
        )
        if version.status == ChecklistVersion.Status.PUBLISHED:
            raise InvalidTransition(f"{version} is already published.")
        validate_items(version.items)
        _check_literal_numbers(version.items)
        _check_calc_names(version.items)
        _check_default_floor(version)
        version.content_hash = content_hash(version.hashed_content())
        version.status = ChecklistVersion.Status.PUBLISHED
        version.published_at = timezone.now()
        version.published_by = by
        version.save()
        reread_for_new_version(organisation_id=version.checklist.organisation_id, by=by)
    return version


def ensure_published(
    *,
    key: str,
    title: str,
    applies_to: str,
    description: str,
    items: list[dict[str, Any]],
    organisation: Organisation | None = None,
) -> ChecklistVersion:
    """Load a checklist definition: publish a new version only when its content changed."""
    checklist, _ = Checklist.objects.get_or_create(
        key=key,
        organisation=organisation,
        defaults={"title": title, "applies_to": applies_to, "description": description},
    )
    latest = checklist.versions.filter(status="published").order_by("-number").first()
    if latest is not None and latest.items == items:
        return latest
    return publish_version(version=create_draft(checklist=checklist, items=items, by=None), by=None)


def diff_versions(a: ChecklistVersion, b: ChecklistVersion) -> dict[str, Any]:
    """A readable diff: items added, removed and changed by key, plus a unified text diff.
    Only two versions of one checklist compare."""
    if a.checklist_id != b.checklist_id:
        raise ValidationError({"against": ["A version of the same checklist."]})
    items_a = {i["key"]: i for i in a.items}
    items_b = {i["key"]: i for i in b.items}
    changed = []
    for key in items_a.keys() & items_b.keys():
        if items_a[key] != items_b[key]:
            fields = sorted(
                k
                for k in items_a[key].keys() | items_b[key].keys()
                if items_a[key].get(k) != items_b[key].get(k)
            )
            changed.append(
                {
                    "key": key,
                    "fields": fields,
                    "before": {f: items_a[key].get(f) for f in fields},
                    "after": {f: items_b[key].get(f) for f in fields},
                }
            )
    text_a = json.dumps(a.items, indent=2, sort_keys=True).splitlines()
    text_b = json.dumps(b.items, indent=2, sort_keys=True).splitlines()
    return {
        "from": {"id": a.pk, "number": a.number, "content_hash": a.content_hash},
        "to": {"id": b.pk, "number": b.number, "content_hash": b.content_hash},
        "added": [items_b[k] for k in items_b if k not in items_a],
        "removed": [items_a[k] for k in items_a if k not in items_b],
        "changed": sorted(changed, key=lambda c: c["key"]),
        "unified": "\n".join(
            difflib.unified_diff(text_a, text_b, f"v{a.number}", f"v{b.number}", lineterm="")
        ),
    }


def served_drops(drops: list[Any], anchor: Anchor | None, equipment: Equipment | None) -> list[Any]:
    """The drops a sheet's subject is part of: an anchor's or a piece of kit's, or every drop
    for a site check. record_sheet refuses an anchor or kit on none of them."""
    return [d for d in drops if drop_serves(d, anchor, equipment)]


def sheet_context(
    job: Job,
    subject_kind: str,
    anchor: Anchor | None,
    equipment: Equipment | None,
    drops: list[Any] | None = None,
    drop: Any = None,
) -> dict[str, dict[str, Any]]:
    """The numbers a sheet's limits and calculations may draw on, for one drop (`drop`, else
    the first its subject serves)."""
    if drop is None:
        drops = drops_of(job) if drops is None else drops
        drop = next(iter(served_drops(drops, anchor, equipment)), None)
    return drop_context(job, anchor, equipment, drop)


def judged_on(
    items: list[dict[str, Any]],
    job: Job,
    anchor: Anchor | None,
    equipment: Equipment | None,
    drops: list[Any],
    also: Iterable[str] = (),
) -> dict[str, dict[str, Any]]:
    """What the sheet's items read from the register, the profile and the plan, for each drop
    its subject serves: kept with the sheet, so that a rating changed since (a safety line
    re-rated from 30 kN to 10 kN) is seen to leave the sheet's verdict behind. `also` names
    figures the sheet is judged on that no item reads (how long a weather check counts)."""
    reads = sorted({*context_reads(items), *also})
    served = served_drops(drops, anchor, equipment) or [None]
    return {
        drop_key(d): read_values(reads, drop_context(job, anchor, equipment, d)) for d in served
    }


def evaluate_for_drops(
    items: list[dict[str, Any]],
    entries: dict[str, Any],
    job: Job,
    subject_kind: str,
    anchor: Anchor | None,
    equipment: Equipment | None,
    drops: list[Any],
) -> SheetOutcome:
    """The sheet's verdicts against every drop its subject serves, the worse governing each
    item: a safety line worked on a 10 m drop and a 114 m one is checked at both. An item whose
    result depends on the drop names the drop that governed."""
    served = served_drops(drops, anchor, equipment)
    if len(served) < 2:
        return evaluate(items, entries, sheet_context(job, subject_kind, anchor, equipment, drops))
    outcomes = [
        (
            d.label,
            evaluate(items, entries, sheet_context(job, subject_kind, anchor, equipment, drops, d)),
        )
        for d in served
    ]
    governing: list[ItemResult] = []
    for index in range(len(outcomes[0][1].items)):
        results = [(label, outcome.items[index]) for label, outcome in outcomes]
        label, worst = min(results, key=lambda pair: _severity(pair[1]))
        if all(r == worst for _, r in results):
            governing.append(worst)
            continue
        working = {**worst.working, "drop": label}
        if isinstance(working.get("steps"), list):
            working["steps"] = [
                f"drop {label} governs, the worse of the {len(served)} drops this serves",
                *working["steps"],
            ]
        message = f"Drop {label}: {worst.message}" if worst.message else worst.message
        governing.append(replace(worst, working=working, message=message))
    return SheetOutcome(items=tuple(governing))


def _severity(result: ItemResult) -> tuple[int, float]:
    """Orders results worst first: a failure before a pass, then the smaller margin."""
    failed = 0 if result.verdict == "fail" else 1
    margin = result.margin if result.margin is not None else math.inf
    return failed, margin


def _subject_for(
    job: Job, version: ChecklistVersion, anchor: Anchor | None, equipment: Equipment | None
) -> str:
    kind = version.checklist.applies_to
    if kind == "site":
        if anchor or equipment:
            raise ValidationError({"subject": "A site check has no anchor or equipment."})
    elif kind == "anchor":
        if anchor is None or equipment is not None:
            raise ValidationError({"anchor": "This checklist is for an anchor; name one."})
        if anchor.site_id != job.site_id:
            raise ValidationError({"anchor": "This anchor is not on the job's site."})
    else:
        if equipment is None or anchor is not None:
            raise ValidationError({"equipment": f"This checklist is for a {kind}; name one."})
        if equipment.organisation_id != job.organisation_id:
            raise ValidationError({"equipment": "Unknown equipment."})
        if equipment.kind != kind:
            raise ValidationError(
                {"equipment": f"This checklist is for a {kind}, not a {equipment.kind}."}
            )
    return kind


def _entry(sheet: CheckSheet, result: ItemResult) -> ItemEntry:
    return ItemEntry(
        sheet=sheet,
        item_key=result.key,
        kind=result.kind,
        value=result.value,
        unit=result.unit,
        verdict=result.verdict,
        blocking=result.blocking,
        margin=result.margin,
        message=result.message,
        working=result.working,
    )


def _insert_entries(sheet: CheckSheet, results: Sequence[ItemResult]) -> None:
    """A sheet's entries, written in one statement.

    On PostgreSQL one COPY writes the rows the ORM's bulk insert of ``_entry`` would (every
    column of the model but its key; a JSON value of None as SQL NULL, as a nullable JSONField
    stores it, any other as the text ``json.dumps`` gives, which is what psycopg's Jsonb
    sends), straight from the results: without a model instance per entry or preparing every
    field of every row in Python, which were a fifth of a morning sync's batch. Elsewhere,
    bulk_create.
    """
    if connection.vendor != "postgresql":
        ItemEntry.objects.bulk_create([_entry(sheet, r) for r in results])
        return
    fields = [f for f in ItemEntry._meta.concrete_fields if not f.primary_key]
    # The columns in this order: the sheet's key, then each result's item key or the field's
    # namesake; JSON ones (never the sheet's) as text.
    fields.sort(key=lambda f: f.attname != "sheet_id")
    read = attrgetter(*("key" if f.attname == "item_key" else f.attname for f in fields[1:]))
    as_json = [i for i, f in enumerate(fields) if isinstance(f, models.JSONField)]
    columns = ", ".join(f.column for f in fields)
    dumps = json.dumps
    with (
        connection.cursor() as cursor,
        cursor.copy(f"COPY {ItemEntry._meta.db_table} ({columns}) FROM STDIN") as copy,
    ):
        for result in results:
            row = [sheet.pk, *read(result)]
            for i in as_json:
                if row[i] is not None:
                    row[i] = dumps(row[i])
            copy.write_row(row)


CLOSED_JOB = "This job is closed; its sheets can no longer change."
CLOSED_BEFORE_MADE = (
    "This job closed before this check was made, so the check is not part of its day: its"
    " sheets can no longer change. Record the failure on the next job it concerns, which it"
    " will hold."
)
SIGNED_DAY = (
    "This day's record is already signed, so this failed check cannot be added to it. Tell the"
    " supervisor: a correction to a signed day is a signed addendum to its record."
)


def _admit_to_closed_day(*, job: Job, failed: bool, made_at: dt.datetime) -> None:
    """A closed job takes one kind of sheet: a failure made before it closed (found on the
    roof by a phone that was offline and sent after the close), while its day's record is not
    signed. It holds the closed day, so the day is not signed "safe" without it. Anything else
    is refused, the signed day in words that lead to an addendum. The job's row is locked."""
    if not failed:
        raise InvalidTransition(CLOSED_JOB)
    if day_signed(job):
        raise InvalidTransition(SIGNED_DAY)
    closed = closed_at(job)
    if closed is None or made_at >= closed:
        raise InvalidTransition(CLOSED_BEFORE_MADE)


def record_sheet(
    *,
    job: Job,
    version: ChecklistVersion,
    by: User,
    entries: dict[str, Any],
    client_uuid: uuid.UUID | None = None,
    anchor: Anchor | None = None,
    equipment: Equipment | None = None,
    device_time: dt.datetime | None = None,
    remarks: str = "",
    phone_clock_offset_s: int | None = None,
    defer_readiness: bool = False,
    drops: list[Drop] | None = None,
    job_locked: bool = False,
    uuid_unused: bool = False,
    open_hold_requirements: set[str] | None = None,
    held_chains: HeldChains | None = None,
) -> tuple[CheckSheet, bool]:
    """Record a filled sheet exactly once per client uuid; return (sheet, created).

    Invalid input raises ValidationError keyed by field and stores nothing.
    ``phone_clock_offset_s`` is the phone's clock minus the server's when its batch was sent.
    A sync batch applying many sheets for one job in one transaction passes what it has
    already read: ``drops`` (the job's drops with their anchors and equipment),
    ``job_locked`` (``job`` is its row, locked until the batch's transaction ends),
    ``uuid_unused`` (no receipt holds ``client_uuid``, read under that lock; a sheet made
    with it some other way then clashes on insert and the IntegrityError is the caller's) and
    ``open_hold_requirements`` (the requirements with holds a sheet opened, kept up to date
    here as holds open and clear) and ``held_chains`` (the log chains its transaction has
    appended to; see HeldChains).
    """
    require_writer(by)
    client_uuid = client_uuid or uuid.uuid4()
    existing = None if uuid_unused else CheckSheet.objects.filter(client_uuid=client_uuid).first()
    if existing is not None:
        if existing.job_id != job.pk or existing.filled_by.organisation_id != by.organisation_id:
            raise ValidationError({"client_uuid": "This id belongs to another record."})
        return existing, False
    if job.organisation_id != by.organisation_id:
        raise ValidationError({"job": "Unknown job."})
    # The tenant first: another organisation's version is unknown, whatever its status.
    if version.checklist.organisation_id not in (None, job.organisation_id):
        raise ValidationError({"version": UNKNOWN_VERSION})
    if version.status != ChecklistVersion.Status.PUBLISHED:
        raise ValidationError({"version": "Sheets can only be filled against a published version."})
    subject_kind = _subject_for(job, version, anchor, equipment)
    drops = drops_of(job) if drops is None else drops
    if subject_kind != "site" and not any(drop_serves(d, anchor, equipment) for d in drops):
        # A check of an anchor or kit the job does not use says nothing of its rig, and would
        # be judged against a drop it is not part of (and could hold the job). An anchor's
        # pre-use entry also goes into the owner's append-only log book.
        if anchor is not None:
            raise ValidationError({"anchor": "This anchor is not on any of the job's drops."})
        raise ValidationError({"equipment": "This equipment is not on any of the job's drops."})
    if not isinstance(entries, dict):
        raise ValidationError({"entries": "Entries are an object keyed by item key."})
    try:
        outcome = evaluate_for_drops(
            version.items, entries, job, subject_kind, anchor, equipment, drops
        )
    except EntryError as exc:
        raise ValidationError({exc.field: exc.message}) from None
    _check_storable(outcome)
    failed = bool(outcome.blocking_failures)
    if job.state == JobState.CLOSED and not failed:
        raise InvalidTransition(CLOSED_JOB)
    made_on = clock.day_made(job.date, device_time, phone_clock_offset_s)
    if made_on != job.date and not failed:
        # A check says nothing of the rig on another day: not a later day's (made today), nor
        # a past day's (made days after the work it was to clear).
        raise ValidationError(
            {
                "job": f"This job is for {job.date.isoformat()}: its pre-start checks are made on"
                f" its day, and this one was made on {made_on.isoformat()}."
            }
        )
    made_at_receipt = made_on != job.date and device_time is not None
    if made_at_receipt:
        # Stop work first: a failure is never refused for its clock (a phone whose clock reset
        # to 2000 after a battery pull). Its time is kept as sent but not believed: without
        # the batch's offset it counts as made when received, for holds and the record alike.
        phone_clock_offset_s = None
    # A weather check counts for the time in force when it was made (its record says so,
    # and a profile reloaded since leaves it behind like any figure it was judged on).
    also = (WEATHER_RECHECK,) if version.checklist.key == WEATHER_CHECKLIST else ()
    judged = judged_on(version.items, job, anchor, equipment, drops, also)
    # A sync batch's run gives each record a savepoint of its own and has looked for the uuid
    # under the job's lock: a second savepoint here would only cost two statements.
    savepoint = not (job_locked and uuid_unused)
    try:
        with transaction.atomic(savepoint=savepoint):
            # Locked before the sheet is written: signing locks the row too, so a sheet lands
            # in a day before its record is sealed, or is refused.
            job = job if job_locked else locked(job)
            if job.state == JobState.CLOSED:
                _admit_to_closed_day(
                    job=job,
                    failed=failed,
                    made_at=clock.time_made(device_time, phone_clock_offset_s, timezone.now()),
                )
            sheet = CheckSheet.objects.create(
                client_uuid=client_uuid,
                job=job,
                version=version,
                version_hash=version.content_hash,
                subject_kind=subject_kind,
                anchor=anchor,
                equipment=equipment,
                filled_by=by,
                device_time=device_time,
                phone_clock_offset_s=phone_clock_offset_s,
                made_at_receipt=made_at_receipt,
                verdict=outcome.verdict,
                blocking_failures=len(outcome.blocking_failures),
                remarks=remarks,
                judged_on=judged,
            )
            _insert_entries(sheet, outcome.items)
            apply_sheet_outcome(
                sheet=sheet,
                outcome=outcome,
                by=by,
                drops=drops,
                defer_readiness=defer_readiness,
                job_locked=True,
                open_hold_requirements=open_hold_requirements,
            )
            if subject_kind == "anchor":
                # The log book names the failed items: instances of those only.
                failed = [_entry(sheet, r) for r in outcome.items if r.verdict == "fail"]
                log_pre_use_check(sheet, entries=failed, held=held_chains)
    except IntegrityError:
        if not savepoint:  # the caller's savepoint rolls back, and it answers the retry
            raise
        # A concurrent retry of the same batch won the race: return its copy.
        existing = CheckSheet.objects.filter(client_uuid=client_uuid).first()
        if existing is None:
            raise
        return existing, False
    return sheet, True

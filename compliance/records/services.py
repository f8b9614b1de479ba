"""The daily record: a canonical JSON document of a job-day, sealed, signed and chained.

The seal is the SHA-256 of the RFC 8785 (JCS) serialisation of the document. The document holds
the organisation, the site, the signature manifestation (signer's id, printed name, role,
meaning, time, certificate) and the previous record's seal, so the seal binds all of them to
this record and to its place in the chain. Each organisation keeps its own chain at each site
(two contractors at one building never share one), and the chain's head is signed at every
append so a verifier notices records removed from its end.

The record also keeps a snapshot of the registers as they stood (site, equipment ratings and
inspection dates, people's names, the profile), so routine register work never makes an old
record look altered; the safety rows behind it (check sheets, entries, holds, transitions, drop
logs, photos, the certifications in force) are append-only and compared with it in full.
"""

import datetime as dt
import json
from dataclasses import dataclass, field
from typing import Any

from django.conf import settings
from django.core.exceptions import ValidationError
from django.db import transaction
from django.utils import timezone

from checklists.models import CheckSheet, ItemEntry, Photo
from compliance.celery import app as celery_app
from compliance.errors import InvalidTransition, NotPermitted, Reason
from compliance.jobs.holds import SIGNED_HELD
from compliance.jobs.selectors import (
    READY_STATES,
    drops_of,
    job_requirements,
    lapsed_checks,
    ready_when_closed,
)
from compliance.jobs.services import close_job
from compliance.models import (
    AnchorCertification,
    DailyRecord,
    DropLog,
    Hold,
    Job,
    JobState,
    JobTransition,
    JurisdictionProfile,
    Organisation,
    ProfileRevision,
    RecordChainHead,
    Site,
    User,
)
from compliance.records.sealing import ChainBreak, canonical_bytes, check_links, utc
from compliance.records.signatures import verify_seal_signature
from compliance.records.signing import (
    KeyMaterial,
    active_credential,
    sha256_hex,
    sign_chain_head,
    sign_seal,
)
from compliance.text import has_words
from compliance.timeline import interval_words, weather_gaps

FORMAT = "parapet.daily-record/7"
"""/3 added each entry's label (the checklist's words) and the time zone the pages print times
in; /4 holds the same document and is drawn with plain table cells and plots drawn on the
canvas (quicker to draw, and so to check); /5 holds the same document and also prints the job's
notes, which every format sealed and none printed; /6 holds the same document and prints, beside
a hold opened well after its check was made (a phone offline on the roof), when the check was
made; /7 also seals each check's `judged_on` (the register, profile and plan figures it was
judged on, drop by drop) and prints them, with every one the register read otherwise at signing
(a line re-rated after its check printed only its new rating). Records sealed in an older
format keep their format, their pages and their checks."""
WITHOUT_JUDGED_ON = (
    "parapet.daily-record/2",
    "parapet.daily-record/3",
    "parapet.daily-record/4",
    "parapet.daily-record/5",
    "parapet.daily-record/6",
)
"""The formats sealed before each check's figures were: rebuilt without them to compare."""
RECORD_FORMATS = (*WITHOUT_JUDGED_ON, FORMAT)
ADDENDUM_MEANING = (
    "Addendum: corrects or adds to the referenced record; the original stands unchanged."
)
ADDENDUM_FORMAT = "parapet.daily-record-addendum/3"
"""/3 holds the same document as /2 and prints a character the fonts cannot draw as its code
point (compliance/records/pdf.py, UNSPELLED_ADDENDA)."""
ADDENDUM_FORMATS = ("parapet.daily-record-addendum/2", ADDENDUM_FORMAT)
MEANINGS = {
    "reviewed_safe": "Reviewed: the pre-start checks were complete and work was safe to proceed.",
    "reviewed_stopped": "Reviewed: work was stopped; the open holds are shown in this record.",
    "reviewed_exceptions": "Reviewed with exceptions: see the remarks in this record.",
}


ENTRY_COLUMNS = (
    "sheet_id",
    "item_key",
    "kind",
    "blocking",
    "value",
    "unit",
    "verdict",
    "margin",
    "message",
    "working",
)


def _entry(entry: dict[str, Any], labels: dict[str, str] | None) -> dict[str, Any]:
    """An entry as sealed, from its row's ENTRY_COLUMNS (plain values: a 30-sheet day has
    1,200 entries, and building a model instance for each was the largest cost of a day)."""
    key = entry["item_key"]
    labelled = {} if labels is None else {"label": labels.get(key, key)}
    return {
        **labelled,
        "item": key,
        "kind": entry["kind"],
        "blocking": entry["blocking"],
        "value": entry["value"],
        "unit": entry["unit"],
        "verdict": entry["verdict"],
        "margin": entry["margin"],
        "message": entry["message"],
        "working": entry["working"],
    }


def _item_labels(items: list[dict[str, Any]]) -> dict[str, str]:
    return {i["key"]: str(i.get("label", i["key"])) for i in items}


def _person(user: User | None) -> dict[str, Any] | None:
    if user is None:
        return None
    return {"id": user.pk, "username": user.username, "name": user.display_name, "role": user.role}


def _certification(cert: AnchorCertification | None, day: dt.date) -> dict[str, Any] | None:
    if cert is None:
        return None
    return {
        "id": cert.pk,
        "certifier": cert.certifier,
        "company": cert.certifier_company,
        "rated_capacity_kn": cert.rated_capacity_kn,
        "certified_on": cert.certified_on.isoformat(),
        "valid_until": cert.valid_until.isoformat(),
        "valid_on_day": cert.is_valid_on(day),
    }


def day_content(
    job: Job, *, certifications: dict[int, int | None] | None = None, fmt: str = FORMAT
) -> dict[str, Any]:
    """Everything recorded for the job-day, from the database rows (no signature yet).

    `certifications` (anchor id to certification id) names the certification each anchor had
    when the record was sealed; without it, the one in force now is taken. `fmt` is the record
    format to build: a /2 record is rebuilt as /2 to be compared with its seal.
    """
    labelled = fmt != "parapet.daily-record/2"
    judged = fmt not in WITHOUT_JUDGED_ON
    site, profile = job.site, job.site.profile
    drops = drops_of(job)
    sheets = list(
        CheckSheet.objects.filter(job=job)
        .select_related("version__checklist", "filled_by", "anchor", "equipment")
        .order_by("id")
    )
    entries: dict[int, list[dict[str, Any]]] = {s.pk: [] for s in sheets}
    for row in ItemEntry.objects.filter(sheet__job=job).order_by("id").values(*ENTRY_COLUMNS):
        entries[row["sheet_id"]].append(row)
    holds = list(Hold.objects.filter(job=job).select_related("clearance").order_by("id"))
    transitions = list(JobTransition.objects.filter(job=job).select_related("by").order_by("id"))
    logs = list(DropLog.objects.filter(drop__job=job).select_related("drop", "by").order_by("id"))
    photos = list(Photo.objects.filter(job=job).order_by("id"))
    people: dict[int, User] = {job.supervisor_id: job.supervisor}
    for user in (
        list(job.crew.all()) + [s.filled_by for s in sheets] + [t.by for t in transitions if t.by]
    ):
        people[user.pk] = user
    anchors: dict[int, Any] = {}
    equipment: dict[int, Any] = {}
    # The certifications a sealed record names, all in one read (one per anchor was 20 queries
    # for a day of 10 drops); each must still belong to its anchor.
    named = (
        {}
        if certifications is None
        else AnchorCertification.objects.in_bulk(
            sorted({c for c in certifications.values() if isinstance(c, int)})
        )
    )
    for drop in drops:
        for anchor in (drop.anchor, drop.safety_anchor):
            if certifications is None:
                cert: AnchorCertification | None = anchor.current_certification()
            else:
                found = named.get(certifications.get(anchor.pk))  # type: ignore[arg-type]
                cert = found if found is not None and found.anchor_id == anchor.pk else None
            anchors[anchor.pk] = {
                "id": anchor.pk,
                "label": anchor.label,
                "x_m": anchor.x_m,
                "y_m": anchor.y_m,
                "certification": _certification(cert, job.date),
            }
        for item in (drop.robot, drop.tether, drop.safety_line, drop.hose):
            equipment[item.pk] = {
                "id": item.pk,
                "kind": item.kind,
                "label": item.label,
                "serial": item.serial,
                "ratings": item.ratings,
                "in_service": item.in_service,
                "next_inspection_due": item.next_inspection_due.isoformat()
                if item.next_inspection_due
                else None,
            }
    weather = [
        {
            "sheet": s.pk,
            "item": e["item_key"],
            "value": e["value"],
            "unit": e["unit"],
            "verdict": e["verdict"],
        }
        for s in sheets
        if s.version.checklist.key == "weather"
        for e in entries[s.pk]
        if e["kind"] in ("reading", "calc")
    ]
    return {
        "site": {
            "id": site.pk,
            "name": site.name,
            "address": site.address,
            "height_m": site.height_m,
            "terrain": site.terrain,
        },
        "job": {
            "id": job.pk,
            "date": job.date.isoformat(),
            "state": job.state,
            "notes": job.notes,
            "supervisor": _person(job.supervisor),
        },
        "profile": {
            "key": profile.key,
            "name": profile.name,
            "content_hash": profile.content_hash,
            "thresholds": profile.thresholds,
            "cautions": profile.cautions,
        },
        "people": [_person(u) for u in sorted(people.values(), key=lambda u: u.pk)],
        "drops": [
            {
                "id": d.pk,
                "label": d.label,
                "length_m": d.length_m,
                "robot": d.robot_id,
                "anchor": d.anchor_id,
                "safety_anchor": d.safety_anchor_id,
                "tether": d.tether_id,
                "safety_line": d.safety_line_id,
                "hose": d.hose_id,
            }
            for d in drops
        ],
        "anchors": [anchors[k] for k in sorted(anchors)],
        "equipment": [equipment[k] for k in sorted(equipment)],
        "sheets": [
            {
                "id": s.pk,
                "client_uuid": str(s.client_uuid),
                "checklist": s.version.checklist.key,
                "title": s.version.checklist.title,
                "version": s.version.number,
                "version_hash": s.version_hash,
                "subject_kind": s.subject_kind,
                "anchor": s.anchor_id,
                "equipment": s.equipment_id,
                "filled_by": s.filled_by.display_name,
                "filled_by_id": s.filled_by_id,
                "device_time": utc(s.device_time),
                "received_at": utc(s.received_at),
                "clock_offset_s": clock_offset_s(s.device_time, s.received_at),
                "phone_clock_offset_s": s.phone_clock_offset_s,
                "verdict": s.verdict,
                "blocking_failures": s.blocking_failures,
                "remarks": s.remarks,
                **({"judged_on": s.judged_on} if judged else {}),
                "entries": [
                    _entry(e, labels)
                    for labels in [_item_labels(s.version.items) if labelled else None]
                    for e in entries[s.pk]
                ],
            }
            for s in sheets
        ],
        "holds": [
            {
                "id": h.pk,
                "requirement": h.requirement,
                "item": h.item_key,
                "reason": h.reason,
                "sheet": h.sheet_id,
                "opened_at": utc(h.opened_at),
                "cleared_at": utc(h.clearance.at) if hasattr(h, "clearance") else None,
                "cleared_by_sheet": h.clearance.sheet_id if hasattr(h, "clearance") else None,
            }
            for h in holds
        ],
        "transitions": [
            {
                "from": t.from_state,
                "to": t.to_state,
                "by": t.by.display_name if t.by else None,
                "by_id": t.by_id,
                "at": utc(t.at),
                "reason": t.reason,
            }
            for t in transitions
        ],
        "drops_done": [
            {
                "drop": log.drop.label,
                "by": log.by.display_name,
                "by_id": log.by_id,
                "device_time": utc(log.device_time),
                "received_at": utc(log.received_at),
                "note": log.note,
            }
            for log in logs
        ],
        "photos": [
            {
                "client_uuid": str(p.client_uuid),
                "sheet_uuid": str(p.sheet_uuid) if p.sheet_uuid else None,
                "item": p.item_key,
                "sha256": p.sha256,
                "width": p.width,
                "height": p.height,
            }
            for p in photos
        ],
        "weather": weather,
        "clock_notes": clock_notes(sheets, logs),
        "units": "SI: lengths m, forces kN or N, pressures kPa, speeds m/s, masses kg, times UTC",
        **({"time_zone": settings.TIME_ZONE} if labelled else {}),
    }


CLOCK_TOLERANCE_S = 300


def clock_offset_s(device: dt.datetime | None, received: dt.datetime) -> int | None:
    """Phone clock minus server clock at receipt, in whole seconds (None when not given)."""
    return None if device is None else round((device - received).total_seconds())


def clock_notes(sheets: list[CheckSheet], logs: list[DropLog]) -> list[str]:
    """Plain words for every record whose phone clock was off by more than five minutes, and
    for every failure whose phone's time was not believed (made_at_receipt).

    An offline record reaches the server late, so only a phone time *after* its receipt, or
    one far earlier than the day, shows a wrong clock; both times stay in the record.
    """
    notes = []
    for sheet in sheets:
        offset = sheet.phone_clock_offset_s
        if offset is not None and abs(offset) > CLOCK_TOLERANCE_S:
            hours, minutes = divmod(round(abs(offset) / 60), 60)
            notes.append(
                f"sheet {sheet.pk}: when its batch was sent, the phone's clock was {hours} h "
                f"{minutes} min {'ahead of' if offset > 0 else 'behind'} the server's; "
                "the server's time is the one of record."
            )
    measured = {s.pk for s in sheets if s.phone_clock_offset_s is not None}
    doubted = [s for s in sheets if s.made_at_receipt]
    for sheet in doubted:
        notes.append(
            f"sheet {sheet.pk}: the phone gave {utc(sheet.device_time)} as the time this failed"
            " check was made, which is not on the job's day; a failure is kept whatever its"
            " clock says, and counts as made when the server received it, at"
            f" {utc(sheet.received_at)}; the server's time is the one of record."
        )
    measured |= {s.pk for s in doubted}
    rows = [(f"sheet {s.pk}", s.device_time, s.received_at) for s in sheets if s.pk not in measured]
    rows += [(f"drop log {log.pk}", log.device_time, log.received_at) for log in logs]
    for name, device, received in rows:
        offset = clock_offset_s(device, received)
        if offset is None:
            continue
        late_day = device is not None and device.date() < received.date() - dt.timedelta(days=1)
        if offset > CLOCK_TOLERANCE_S or late_day:
            hours, minutes = divmod(round(abs(offset) / 60), 60)  # to the nearest minute
            notes.append(
                f"{name}: the phone's clock read {utc(device)}, {hours} h {minutes} min "
                f"{'ahead of' if offset > 0 else 'behind'} the server's receipt at "
                f"{utc(received)}; the server's time is the one of record."
            )
    return notes


def open_holds_of(content: dict[str, Any]) -> list[dict[str, Any]]:
    return [h for h in content["holds"] if h["cleared_at"] is None]


def _locked_head(organisation_id: int, site_id: int) -> RecordChainHead:
    """The chain's head row, created on the first append and locked until the transaction ends,
    so two signers appending to one chain take their places one after the other."""
    head, _ = RecordChainHead.objects.select_for_update().get_or_create(
        organisation_id=organisation_id, site_id=site_id
    )
    return head


def _parties(organisation: Organisation, site: Site) -> dict[str, Any]:
    """Who keeps the chain and where: sealed, so a record cannot be moved to another tenant."""
    return {
        "organisation": {"id": organisation.pk, "name": organisation.name},
        "site": {"id": site.pk, "name": site.name},
    }


SIGNING_METHOD = "user id and password re-entered at the moment of signing"


def signature_block(
    by: User, meaning: str, code: str, signed_at: dt.datetime, certificate_sha256: str
) -> dict[str, Any]:
    """The signature manifestation sealed into a document: printed name, role, meaning, time."""
    return {
        "user_id": by.pk,
        "name": by.display_name,
        "username": by.username,
        "role": by.get_role_display(),
        "role_code": by.role,
        "meaning": meaning,
        "meaning_code": code,
        "signed_at": utc(signed_at),
        "method": SIGNING_METHOD,
        "certificate_sha256": certificate_sha256,
    }


def _authenticate(by: User, password: str) -> None:
    if not by.can_supervise:
        raise NotPermitted("Only a supervisor (the competent person) or an admin signs records.")
    if not password or not by.check_password(password):
        raise NotPermitted("Re-enter your password to sign; the one given is not right.")


# Named as the sign page shows the choices: each refusal quotes them in full.
NEVER_READY_NOT_SAFE = (
    "The pre-start checks of this job were never complete (it was never ready to start), so it"
    f" cannot be signed as “{MEANINGS['reviewed_safe']}” Choose"
    f" “{MEANINGS['reviewed_exceptions']}” and say why in the remarks."
)
NOT_READY_AT_CLOSE_NOT_SAFE = (
    "The pre-start checks of this job were no longer complete when it closed (it had gone back"
    f" from ready to start), so it cannot be signed as “{MEANINGS['reviewed_safe']}” Choose"
    f" “{MEANINGS['reviewed_exceptions']}” and say why in the remarks."
)
OPEN_HOLDS_NOT_SAFE = (
    f"This day has open holds, so it cannot be signed as “{MEANINGS['reviewed_safe']}” Choose"
    f" “{MEANINGS['reviewed_stopped']}”, or “{MEANINGS['reviewed_exceptions']}” and say why in"
    " the remarks."
)
NO_HOLD_NOT_STOPPED = (
    f"No hold is open on this day, so it cannot be signed as “{MEANINGS['reviewed_stopped']}”"
    f" Choose “{MEANINGS['reviewed_safe']}”, or “{MEANINGS['reviewed_exceptions']}” and say in"
    " the remarks what happened."
)
NO_HOLD_NEVER_READY = (
    f"No hold is open on this day, so it cannot be signed as “{MEANINGS['reviewed_stopped']}”"
    " and its pre-start checks were never complete (it was never ready to start): choose"
    f" “{MEANINGS['reviewed_exceptions']}” and say why in the remarks."
)
NO_HOLD_NOT_READY_AT_CLOSE = (
    f"No hold is open on this day, so it cannot be signed as “{MEANINGS['reviewed_stopped']}”"
    " and its pre-start checks were no longer complete when it closed (it had gone back from"
    f" ready to start): choose “{MEANINGS['reviewed_exceptions']}” and say why in the remarks."
)

WEATHER_GAP_NOT_SAFE = (
    "Work went on while the wind had not been read again within the {minutes} a reading"
    " counted for ({gaps}),"
    f" so it cannot be signed as “{MEANINGS['reviewed_safe']}” Choose"
    f" “{MEANINGS['reviewed_exceptions']}” and say why in the remarks."
)


def _weather_gap_words(content: dict[str, Any]) -> str | None:
    """Why a day cannot be "safe" for its weather readings (None when it can)."""
    gaps = weather_gaps(content)
    if not gaps:
        return None
    minutes = interval_words(content) or "time"
    spans = ", ".join(
        f"{timezone.localtime(a):%H:%M} to {timezone.localtime(b):%H:%M}" for a, b in gaps
    )
    return WEATHER_GAP_NOT_SAFE.format(minutes=minutes, gaps=spans)


def _lapsed_words(lapsed: list[Reason]) -> str:
    """The checks that no longer count, as the job's blockers name them."""
    checks = (
        "a pre-start check of this day no longer counts, and no hold stands for it"
        if len(lapsed) == 1
        else "pre-start checks of this day no longer count, and no hold stands for them"
    )
    return f"{checks}: {' '.join(reason.message for reason in lapsed)}"


def lapsed_not_safe(lapsed: list[Reason]) -> str:
    words = _lapsed_words(lapsed)
    return (
        f"{words[0].upper()}{words[1:]} So it cannot be signed as “{MEANINGS['reviewed_safe']}”"
        f" Choose “{MEANINGS['reviewed_exceptions']}” and say why in the remarks."
    )


def no_hold_lapsed(lapsed: list[Reason]) -> str:
    return (
        f"No hold is open on this day, so it cannot be signed as “{MEANINGS['reviewed_stopped']}”"
        f" and {_lapsed_words(lapsed)} Choose “{MEANINGS['reviewed_exceptions']}” and say why in"
        " the remarks."
    )


def sign_daily_record(
    *, job: Job, by: User, password: str, meaning: str, remarks: str = ""
) -> DailyRecord:
    """Seal and sign the day's record; the signer re-authenticates at this moment."""
    _authenticate(by, password)
    if meaning not in MEANINGS:
        raise InvalidTransition(f"The meaning of the signature is one of: {', '.join(MEANINGS)}.")
    if meaning == "reviewed_exceptions" and not has_words(remarks):
        raise ValidationError({"remarks": "Say what the exceptions were."})
    credential = active_credential(job.organisation_id)
    with transaction.atomic():
        job = (
            Job.objects.select_for_update()
            .select_related("site__profile", "supervisor", "organisation")
            .get(pk=job.pk)
        )
        if DailyRecord.objects.filter(job=job, kind="record").exists():
            raise InvalidTransition("This day's record is already signed; add an addendum instead.")
        if job.date > timezone.localdate():
            raise InvalidTransition(
                f"This job is for {job.date.isoformat()}, a day that has not come yet: a day's"
                " record is signed on or after its day."
            )
        if job.state in (JobState.PLANNED, JobState.CLEARED, JobState.WORKING):
            raise InvalidTransition(
                "Close the job (or leave it held) before signing the day's record."
            )
        if job.state == JobState.HELD:
            close_job(job=job, by=by, reason=SIGNED_HELD)
            job.refresh_from_db()
        _keep_profile_revision(job.site.profile)
        content = day_content(job, fmt=FORMAT)
        if open_holds_of(content) and meaning == "reviewed_safe":
            raise InvalidTransition(OPEN_HOLDS_NOT_SAFE)
        moves = [(t["to"], dt.datetime.fromisoformat(t["at"])) for t in content["transitions"]]
        states = [state for state, _ in moves]
        was_ready = any(state in READY_STATES for state in states)
        ready_at_close = ready_when_closed(states)
        # Ready by its states, and no hold open: a check may still no longer count (a figure it
        # read changed with no hold opened). Read only for the two meanings that need it.
        lapsed = (
            lapsed_checks(job, job_requirements(job), moves)
            if ready_at_close
            and not open_holds_of(content)
            and meaning in ("reviewed_safe", "reviewed_stopped")
            else []
        )
        if meaning == "reviewed_stopped" and not open_holds_of(content):
            # Where "safe" is refused too, the refusal does not send the signer there.
            raise InvalidTransition(
                no_hold_lapsed(lapsed)
                if lapsed
                else NO_HOLD_NOT_STOPPED
                if ready_at_close
                else NO_HOLD_NOT_READY_AT_CLOSE
                if was_ready
                else NO_HOLD_NEVER_READY
            )
        if meaning == "reviewed_safe" and not ready_at_close:
            raise InvalidTransition(
                NOT_READY_AT_CLOSE_NOT_SAFE if was_ready else NEVER_READY_NOT_SAFE
            )
        if meaning == "reviewed_safe" and lapsed:
            raise InvalidTransition(lapsed_not_safe(lapsed))
        unread = _weather_gap_words(content) if meaning == "reviewed_safe" else None
        if unread:
            raise InvalidTransition(unread)
        head = _locked_head(job.organisation_id, job.site_id)
        sequence, previous = head.sequence + 1, head.seal
        signed_at = timezone.now()
        document = {
            "format": FORMAT,
            **_parties(job.organisation, job.site),
            "sequence": sequence,
            "previous_seal": previous or None,
            "record": content,
            "remarks": remarks,
            "open_holds": len(open_holds_of(content)),
            "signature": signature_block(
                by, MEANINGS[meaning], meaning, signed_at, credential.fingerprint_sha256
            ),
        }
        record = _store(
            document,
            kind=DailyRecord.Kind.RECORD,
            job=job,
            head=head,
            credential=credential,
            by=by,
            signed_at=signed_at,
        )
    return record


def _keep_profile_revision(profile: JurisdictionProfile) -> None:
    """The profile content a record is sealed against is kept as a revision (append-only), so a
    later change of the profile never leaves the record without the thresholds it names."""
    if profile.revisions.filter(content_hash=profile.content_hash).exists():
        return
    last = profile.revisions.order_by("-number").values_list("number", flat=True).first()
    ProfileRevision.objects.create(
        profile=profile,
        number=(last or 0) + 1,
        name=profile.name,
        thresholds=profile.thresholds,
        cautions=profile.cautions,
        content_hash=profile.content_hash,
    )


def _store(
    document: dict[str, Any],
    *,
    kind: str,
    job: Job,
    head: RecordChainHead,
    credential: Any,
    by: User,
    signed_at: dt.datetime,
    amends: DailyRecord | None = None,
    client_uuid: Any = None,
) -> DailyRecord:
    """Seal, sign and store a document at the head of its chain, then sign the new head.

    The document is canonicalised once (the seal is the hash of the very bytes stored) and the
    organisation's key is decrypted once for both signatures: those two were most of the cost
    of a sign-off besides the password check."""
    raw = canonical_bytes(document)
    seal = sha256_hex(raw)
    material = KeyMaterial.of(credential)
    record = DailyRecord.objects.create(
        kind=kind,
        organisation_id=head.organisation_id,
        site_id=head.site_id,
        job=job,
        amends=amends,
        sequence=document["sequence"],
        previous_seal=document["previous_seal"] or "",
        canonical_json=raw.decode("utf-8"),
        seal=seal,
        seal_signature=sign_seal(seal, credential, material=material),
        credential=credential,
        signer=by,
        signer_name=by.display_name,
        signer_role=by.role,
        meaning=document["signature"]["meaning"],
        signed_at=signed_at,
        client_uuid=client_uuid,
    )
    sign_chain_head(head, credential, sequence=record.sequence, seal=seal, material=material)
    transaction.on_commit(lambda: _queue_render(record.pk), robust=True)
    return record


RENDER_TASK = "compliance.tasks.render_daily_record"


def _queue_render(record_id: int) -> None:
    """Queue the PDF's render once the record is committed. The task is found by name in the
    project's Celery app (never `celery.current_app`, which is per thread and a bare default
    app on a server's other threads), so this service does not import the task layer above it;
    a failure to queue is logged by on_commit(robust=True) and the sweep of records without a
    PDF picks the record up."""
    celery_app.tasks[RENDER_TASK].delay(record_id)


def add_addendum(
    *, record: DailyRecord, by: User, password: str, text: str, client_uuid: Any = None
) -> DailyRecord:
    """A correction after signing: a new signed document that references the original.

    A request resent with the same `client_uuid` (a retry after a lost answer) returns the
    addendum the first one made instead of adding a second.
    """
    _authenticate(by, password)
    if not has_words(text):
        raise InvalidTransition("An addendum needs its text.")
    if by.organisation_id != record.organisation_id:
        raise NotPermitted("Unknown record.")
    credential = active_credential(record.organisation_id)
    with transaction.atomic():
        head = _locked_head(record.organisation_id, record.site_id)
        if client_uuid is not None:
            earlier = DailyRecord.objects.filter(
                organisation_id=record.organisation_id, client_uuid=client_uuid
            ).first()
            if earlier is not None:
                if (
                    earlier.amends_id != record.pk
                    or json.loads(earlier.canonical_json).get("text") != text
                ):
                    raise InvalidTransition(
                        "This request id was already used for another addendum."
                    )
                return earlier
        job = Job.objects.select_related("organisation", "site").get(pk=record.job_id)
        signed_at = timezone.now()
        document = {
            "format": ADDENDUM_FORMAT,
            **_parties(job.organisation, job.site),
            "sequence": head.sequence + 1,
            "previous_seal": head.seal or None,
            "amends": {
                "seal": record.seal,
                "sequence": record.sequence,
                "job": record.job_id,
                "date": job.date.isoformat(),
            },
            "text": text,
            "signature": signature_block(
                by, ADDENDUM_MEANING, "addendum", signed_at, credential.fingerprint_sha256
            ),
        }
        addendum = _store(
            document,
            kind=DailyRecord.Kind.ADDENDUM,
            job=job,
            head=head,
            credential=credential,
            by=by,
            signed_at=signed_at,
            amends=record,
            client_uuid=client_uuid,
        )
    return addendum


@dataclass
class ChainReport:
    organisation_id: int
    site_id: int
    records: int
    breaks: list[ChainBreak] = field(default_factory=list)

    @property
    def ok(self) -> bool:
        return not self.breaks

    @property
    def first_break(self) -> ChainBreak | None:
        return self.breaks[0] if self.breaks else None


def verify_chain(organisation_id: int, site_id: int) -> ChainReport:
    """Check one organisation's chain at one site, link by link, and against its signed head."""
    rows = list(
        DailyRecord.objects.filter(organisation_id=organisation_id, site_id=site_id)
        .order_by("sequence", "id")
        .values("sequence", "seal", "previous_seal", "canonical_json")
    )
    report = ChainReport(organisation_id=organisation_id, site_id=site_id, records=len(rows))
    report.breaks = check_links(rows)
    if report.breaks:
        return report
    head = (
        RecordChainHead.objects.filter(organisation_id=organisation_id, site_id=site_id)
        .select_related("credential")
        .first()
    )
    last = rows[-1] if rows else None
    if head is None or head.credential is None:
        if last is not None:
            report.breaks.append(
                ChainBreak(last["sequence"], "head_missing", "The chain's signed head is missing.")
            )
        return report
    try:
        statement = json.loads(head.statement)
        said = (statement["organisation"], statement["site"])
        said += (statement["sequence"], statement["seal"])
    except (ValueError, KeyError, TypeError):
        said = None
    if (
        said != (organisation_id, site_id, head.sequence, head.seal)
        or head.credential.organisation_id != organisation_id
        or not verify_seal_signature(
            sha256_hex(head.statement.encode("utf-8")),
            head.signature,
            head.credential.certificate_pem,
        )
    ):
        report.breaks.append(
            ChainBreak(
                head.sequence,
                "head_forged",
                "The chain's head is not signed by the organisation for what it says.",
            )
        )
        return report
    if not head.credential.active:
        report.breaks.append(
            ChainBreak(
                head.sequence,
                "head_old_key",
                "The chain's head is signed with a key the organisation has since replaced: it"
                " was rolled back or re-signed with an old key.",
            )
        )
        return report
    ends = (0, "") if last is None else (last["sequence"], last["seal"])
    if ends != (head.sequence, head.seal):
        what = (
            f"records {ends[0] + 1} to {head.sequence} were removed from its end"
            if head.sequence > ends[0]
            else f"it ends at record {ends[0]}, not at the record its head names"
        )
        report.breaks.append(
            ChainBreak(
                head.sequence,
                "truncated" if head.sequence > ends[0] else "head_mismatch",
                f"The chain's signed head names record {head.sequence}, but {what}.",
            )
        )
    return report


def sealed_column_problems(
    record: DailyRecord, document: dict[str, Any] | None = None
) -> list[str]:
    """The stored columns that disagree with what the record's seal covers (who signed, when,
    with what meaning and key, for which organisation, site and job, and where in the chain).
    ``document`` is the record's canonical JSON already parsed, if the caller has it."""
    doc = json.loads(record.canonical_json) if document is None else document
    signature = doc.get("signature") or {}
    job_id = (
        (doc.get("record") or {}).get("job", {}).get("id")
        if record.kind == DailyRecord.Kind.RECORD
        else (doc.get("amends") or {}).get("job")
    )
    sealed_format = doc.get("format")
    formats = RECORD_FORMATS if record.kind == DailyRecord.Kind.RECORD else ADDENDUM_FORMATS
    pairs = {
        "kind": (sealed_format in formats, True),
        "organisation": ((doc.get("organisation") or {}).get("id"), record.organisation_id),
        "site": ((doc.get("site") or {}).get("id"), record.site_id),
        "job": (job_id, record.job_id),
        "sequence": (doc.get("sequence"), record.sequence),
        "previous_seal": (doc.get("previous_seal") or "", record.previous_seal or ""),
        "signer": (signature.get("user_id"), record.signer_id),
        "signer_name": (signature.get("name"), record.signer_name),
        "signer_role": (signature.get("role_code"), record.signer_role),
        "meaning": (signature.get("meaning"), record.meaning),
        "signed_at": (signature.get("signed_at"), utc(record.signed_at)),
        "credential": (signature.get("certificate_sha256"), record.credential.fingerprint_sha256),
    }
    if record.kind == DailyRecord.Kind.ADDENDUM:
        amended = DailyRecord.objects.filter(pk=record.amends_id).values_list("seal", flat=True)
        pairs["amends"] = ((doc.get("amends") or {}).get("seal"), amended.first())
    return [name for name, (sealed, stored) in pairs.items() if sealed != stored]


REGISTER_SNAPSHOT = ("site", "profile", "people", "equipment", "time_zone")
"""Parts of a record that copy mutable registers (and the zone its pages print times in) as
they stood; later edits are routine."""


def _safety_view(content: dict[str, Any]) -> dict[str, Any]:
    """The parts of a day's content that come from append-only safety rows (and the job), with
    the register snapshot and people's printed names left out (ids stay)."""
    view = {k: v for k, v in content.items() if k not in REGISTER_SNAPSHOT}
    job = dict(content.get("job") or {})
    job["supervisor"] = (job.get("supervisor") or {}).get("id")
    view["job"] = job
    view["anchors"] = [
        {"id": a.get("id"), "certification": a.get("certification")}
        for a in content.get("anchors") or []
    ]
    view["equipment"] = [e.get("id") for e in content.get("equipment") or []]
    view["sheets"] = [
        {k: v for k, v in s.items() if k != "filled_by"} for s in content.get("sheets") or []
    ]
    for name in ("transitions", "drops_done"):
        view[name] = [{k: v for k, v in t.items() if k != "by"} for t in content.get(name) or []]
    return view


def verify_against_database(
    record: DailyRecord, document: dict[str, Any] | None = None
) -> list[str]:
    """Compare a sealed record with the safety rows behind it today; return the differing paths.

    Certifications are taken as the record names them (they are append-only: a renewal adds a
    row and leaves the old one); register fields are the record's own snapshot, except the
    profile, which must be a stored revision with exactly the sealed thresholds.
    """
    if record.kind != DailyRecord.Kind.RECORD:
        return []
    if document is None:
        document = json.loads(record.canonical_json)
    sealed = document["record"]
    certifications = {
        a["id"]: (a.get("certification") or {}).get("id") for a in sealed.get("anchors") or []
    }
    # Through JSON and back, so the rows compare as the sealed document reads (lists, not
    # tuples); a number compares by value (the seal's 5 equals the row's 5.0).
    live = json.loads(
        json.dumps(
            day_content(record.job, certifications=certifications, fmt=document.get("format"))
        )
    )
    sealed_view, live_view = _safety_view(sealed), _safety_view(live)
    # Equal as a whole (compared in C) in the usual case; walked for the paths only if not.
    problems = [] if sealed_view == live_view else _differences(sealed_view, live_view, "record")
    profile = sealed.get("profile") or {}
    if not _profile_stored(profile):
        problems.append("record.profile")
    return problems


def _profile_stored(profile: dict[str, Any]) -> bool:
    revision = (
        ProfileRevision.objects.filter(
            profile__key=profile.get("key"), content_hash=profile.get("content_hash")
        )
        .values("thresholds", "cautions")
        .first()
    )
    return revision is not None and (
        json.loads(canonical_bytes(revision["thresholds"])) == profile.get("thresholds")
        and revision["cautions"] == profile.get("cautions")
    )


def _differences(a: Any, b: Any, path: str) -> list[str]:
    if isinstance(a, dict) and isinstance(b, dict):
        out: list[str] = []
        for key in sorted(set(a) | set(b)):
            out += _differences(a.get(key), b.get(key), f"{path}.{key}")
        return out
    if isinstance(a, list) and isinstance(b, list):
        if len(a) != len(b):
            return [f"{path} (had {len(a)} entries, now {len(b)})"]
        out = []
        for i, (x, y) in enumerate(zip(a, b, strict=True)):
            out += _differences(x, y, f"{path}[{i}]")
        return out
    return [] if a == b else [path]

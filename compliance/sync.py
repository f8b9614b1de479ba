"""The phone's offline queue lands here: a batch of client records, each applied exactly once.

Each record is applied in its own transaction together with its receipt, so a batch cut off
half-way leaves whole records behind and a retry answers from the receipts.
"""

import datetime as dt
import uuid
from typing import Any

from django.core.exceptions import ValidationError
from django.db import IntegrityError, transaction
from django.utils import timezone
from django.utils.dateparse import parse_datetime

from checklists.models import ChecklistVersion
from checklists.services import record_sheet
from compliance import services
from compliance.access import anchors_visible_to
from compliance.errors import DomainError, InvalidTransition, JobBlocked, NotPermitted
from compliance.models import Anchor, Drop, DropLog, Equipment, Job, SyncReceipt, User

RECORD_KINDS = ("sheet", "drop_log", "job_action")
MAX_BATCH = 200


class RecordRejected(Exception):
    def __init__(self, errors: dict[str, Any]) -> None:
        super().__init__(str(errors))
        self.errors = errors


def _get(model: Any, queryset: Any, pk: Any, field: str) -> Any:
    if pk is None:
        return None
    if isinstance(pk, bool) or not isinstance(pk, int):
        raise RecordRejected({field: ["Must be an id (a whole number)."]})
    obj = queryset.filter(pk=pk).first()
    if obj is None:
        raise RecordRejected({field: [f"Unknown {model.__name__.lower()}."]})
    return obj


def _device_time(data: dict[str, Any]) -> dt.datetime | None:
    raw = data.get("device_time")
    if raw in (None, ""):
        return None
    parsed = parse_datetime(raw) if isinstance(raw, str) else None
    if parsed is None:
        raise RecordRejected({"device_time": ["An ISO 8601 date and time."]})
    if timezone.is_naive(parsed):
        raise RecordRejected({"device_time": ["Give the time zone offset."]})
    return parsed


def _apply_sheet(user: User, data: dict[str, Any], client_uuid: uuid.UUID) -> dict[str, Any]:
    org = user.organisation_id
    job = _get(
        Job,
        Job.objects.filter(organisation_id=org).select_related("site__profile"),
        data.get("job"),
        "job",
    )
    if job is None:
        raise RecordRejected({"job": ["Required."]})
    version = _get(
        ChecklistVersion,
        ChecklistVersion.objects.select_related("checklist"),
        data.get("version"),
        "version",
    )
    if version is None:
        raise RecordRejected({"version": ["Required."]})
    anchor = _get(Anchor, anchors_visible_to(org), data.get("anchor"), "anchor")
    equipment = _get(
        Equipment, Equipment.objects.filter(organisation_id=org), data.get("equipment"), "equipment"
    )
    remarks = data.get("remarks", "")
    if not isinstance(remarks, str) or len(remarks) > 4000:
        raise RecordRejected({"remarks": ["A text of at most 4000 characters."]})
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
    )
    return {
        "sheet": sheet.pk,
        "verdict": sheet.verdict,
        "job": job.pk,
        "blocking_failures": sheet.blocking_failures,
    }


def _apply_drop_log(user: User, data: dict[str, Any], client_uuid: uuid.UUID) -> dict[str, Any]:
    drop = _get(
        Drop,
        Drop.objects.filter(job__organisation_id=user.organisation_id).select_related("job"),
        data.get("drop"),
        "drop",
    )
    if drop is None:
        raise RecordRejected({"drop": ["Required."]})
    if drop.job.state != "working":
        raise RecordRejected(
            {"drop": [f"Drops are logged while the job is working; it is {drop.job.state}."]}
        )
    note = data.get("note", "")
    if not isinstance(note, str) or len(note) > 500:
        raise RecordRejected({"note": ["A text of at most 500 characters."]})
    log = DropLog.objects.create(
        client_uuid=client_uuid, drop=drop, by=user, device_time=_device_time(data), note=note
    )
    return {"drop_log": log.pk, "job": drop.job_id}


ACTIONS = {"start": services.start_job, "pause": services.pause_job, "close": services.close_job}


def _apply_job_action(user: User, data: dict[str, Any], client_uuid: uuid.UUID) -> dict[str, Any]:
    job = _get(
        Job, Job.objects.filter(organisation_id=user.organisation_id), data.get("job"), "job"
    )
    if job is None:
        raise RecordRejected({"job": ["Required."]})
    action = data.get("action")
    if action not in ACTIONS:
        raise RecordRejected({"action": [f"One of {', '.join(ACTIONS)}."]})
    extra = {} if action == "start" else {"reason": str(data.get("reason", ""))[:2000]}
    job = ACTIONS[action](job=job, by=user, **extra)
    return {"job": job.pk, "state": job.state}


APPLY = {"sheet": _apply_sheet, "drop_log": _apply_drop_log, "job_action": _apply_job_action}


def apply_record(user: User, record: Any) -> dict[str, Any]:
    """Apply one client record exactly once and return its result line."""
    if not isinstance(record, dict):
        return {
            "client_uuid": None,
            "status": "rejected",
            "errors": {"record": ["Must be an object."]},
        }
    raw_uuid = record.get("client_uuid")
    try:
        client_uuid = uuid.UUID(str(raw_uuid)) if raw_uuid is not None else None
    except ValueError:
        client_uuid = None
    if client_uuid is None:
        return {
            "client_uuid": raw_uuid,
            "status": "rejected",
            "errors": {"client_uuid": ["A UUID made on the phone is required."]},
        }
    line: dict[str, Any] = {"client_uuid": str(client_uuid)}
    receipt = SyncReceipt.objects.filter(client_uuid=client_uuid).first()
    if receipt is not None:
        if receipt.user_id != user.pk:
            return {**line, "status": "rejected", "errors": {"client_uuid": ["Already used."]}}
        return {**line, "status": receipt.status, "duplicate": True, **receipt.result}
    kind = record.get("type")
    data = record.get("data")
    if kind not in APPLY:
        return {
            **line,
            "status": "rejected",
            "errors": {"type": [f"One of {', '.join(RECORD_KINDS)}."]},
        }
    if not isinstance(data, dict):
        return {**line, "status": "rejected", "errors": {"data": ["Must be an object."]}}
    try:
        with transaction.atomic():
            try:
                result = APPLY[kind](user, data, client_uuid)
                status = "applied"
            except RecordRejected as exc:
                result, status = {"errors": exc.errors}, "rejected"
            except ValidationError as exc:
                from compliance.api.errors import django_errors

                result, status = {"errors": django_errors(exc)}, "rejected"
            except JobBlocked as exc:
                result = {
                    "errors": {"job": [r.message for r in exc.reasons]},
                    "reasons": [r.as_dict() for r in exc.reasons],
                }
                status = "rejected"
            except (InvalidTransition, NotPermitted) as exc:
                result, status = {"errors": {"record": [exc.message]}}, "rejected"
            except DomainError as exc:
                result, status = {"errors": {"record": [str(exc)]}}, "rejected"
            if status == "applied":
                SyncReceipt.objects.create(
                    client_uuid=client_uuid, kind=kind, user=user, status=status, result=result
                )
    except IntegrityError:
        receipt = SyncReceipt.objects.filter(client_uuid=client_uuid).first()
        if receipt is None:
            raise
        return {**line, "status": receipt.status, "duplicate": True, **receipt.result}
    return {**line, "status": status, **result}

"""Every action that changes the state of a job or a register, with its audit entry."""

import datetime as dt
from typing import Any

from django.core.exceptions import ValidationError
from django.db import IntegrityError, models, transaction

from checklists.models import CheckSheet
from checklists.verdicts import SheetOutcome
from compliance.access import can_work_at, grantable_contractors, owns_site
from compliance.errors import InvalidTransition, JobBlocked, NotPermitted, Reason
from compliance.holds import (
    clear_by_passing_sheet,
    hold_for_failed_items,
    locked,
    refresh_readiness,
    transition,
)
from compliance.models import (
    Anchor,
    AnchorCertification,
    Drop,
    DropLog,
    Equipment,
    Job,
    JobState,
    JobTransition,
    Organisation,
    RegisterChange,
    Site,
    SiteAccess,
    SiteAccessEnd,
    User,
)
from compliance.selectors import job_blockers, plan_conflicts


def _require_writer(user: User) -> None:
    if not user.can_write:
        raise NotPermitted("Auditors have read-only access.")


def create_job(*, site: Site, date: dt.date, supervisor: User, by: User, notes: str = "") -> Job:
    _require_writer(by)
    if not can_work_at(by.organisation_id, site, date):
        raise ValidationError(
            {"site": "Your organisation has no access to this site on that date."}
        )
    with transaction.atomic():
        job = Job(
            organisation_id=by.organisation_id,
            site=site,
            date=date,
            supervisor=supervisor,
            notes=notes,
        )
        job.full_clean()
        job.save()
        JobTransition.objects.create(
            job=job,
            from_state=JobState.PLANNED,
            to_state=JobState.PLANNED,
            by=by,
            reason="Job planned.",
        )
    return job


def add_drop(
    *,
    job: Job,
    by: User,
    label: str,
    robot: Equipment,
    anchor: Anchor,
    safety_anchor: Anchor,
    tether: Equipment,
    safety_line: Equipment,
    hose: Equipment,
    length_m: float,
) -> Drop:
    _require_writer(by)
    if job.state not in (JobState.PLANNED, JobState.CLEARED):
        raise InvalidTransition("Drops can be planned only before work starts.")
    chosen = {
        "robot": robot,
        "anchor": anchor,
        "safety_anchor": safety_anchor,
        "tether": tether,
        "safety_line": safety_line,
        "hose": hose,
    }
    with transaction.atomic():
        # Two supervisors planning one robot or anchor for the same day: the second waits for
        # the first's drop, then sees it as booked.
        kit = [robot.pk, tether.pk, safety_line.pk, hose.pk]
        list(Equipment.objects.select_for_update().filter(pk__in=kit).order_by("pk"))
        pair = [anchor.pk, safety_anchor.pk]
        list(Anchor.objects.select_for_update().filter(pk__in=pair).order_by("pk"))
        refusals: dict[str, list[str]] = {}
        for conflict in plan_conflicts(job=job, chosen=chosen):
            if conflict.refuses:
                refusals.setdefault(conflict.field, []).append(conflict.message)
        if refusals:
            raise ValidationError(refusals)
        drop = Drop(
            job=job,
            label=label,
            robot=robot,
            anchor=anchor,
            safety_anchor=safety_anchor,
            tether=tether,
            safety_line=safety_line,
            hose=hose,
            length_m=length_m,
        )
        drop.full_clean()
        drop.save()
        job = locked(job)
        if job.state == JobState.CLEARED:
            transition(job, JobState.PLANNED, by, f"Drop {label} added; its checks are needed.")
    return drop


def start_job(*, job: Job, by: User) -> Job:
    """Move a job to working, or raise JobBlocked with every reason it cannot start."""
    _require_writer(by)
    with transaction.atomic():
        job = locked(job)
        if job.state == JobState.WORKING:
            return job
        if job.state == JobState.CLOSED:
            raise InvalidTransition("This job is closed.")
        reasons = job_blockers(job)
        if reasons:
            raise JobBlocked(reasons)
        return transition(job, JobState.WORKING, by, "Pre-start checks passed; work started.")


def pause_job(*, job: Job, by: User, reason: str = "") -> Job:
    _require_writer(by)
    with transaction.atomic():
        job = locked(job)
        if job.state != JobState.WORKING:
            raise InvalidTransition(f"Only a working job can be paused; this one is {job.state}.")
        return transition(job, JobState.CLEARED, by, reason or "Work paused.")


def close_job(*, job: Job, by: User, reason: str = "") -> Job:
    _require_writer(by)
    with transaction.atomic():
        job = locked(job)
        if job.state == JobState.CLOSED:
            raise InvalidTransition("This job is already closed.")
        if job.state == JobState.HELD and not reason.strip():
            raise InvalidTransition("Closing a held job needs a reason.")
        return transition(job, JobState.CLOSED, by, reason or "Work finished for the day.")


def apply_sheet_outcome(
    *,
    sheet: CheckSheet,
    outcome: SheetOutcome,
    by: User,
    drops: list[Drop] | None = None,
    defer_readiness: bool = False,
) -> Job:
    """Open holds for failed blocking items, or clear this requirement's holds on a pass (the
    rules are in compliance.holds).

    Holds open at once. With ``defer_readiness`` the move back to cleared or planned waits for
    the caller's ``refresh_readiness`` (a sync batch does it once per job, not once per sheet).
    """
    job = locked(sheet.job)
    if outcome.blocking_failures:
        return hold_for_failed_items(
            job=job, sheet=sheet, failures=outcome.blocking_failures, by=by
        )
    clear_by_passing_sheet(job=job, sheet=sheet, by=by)
    if defer_readiness:
        return job
    return refresh_readiness(job=job, by=by, drops=drops)


def record_certification(*, anchor: Anchor, by: User, **fields: Any) -> AnchorCertification:
    """Add a certification; only the building's own organisation certifies its anchors."""
    _require_writer(by)
    if not by.can_keep_anchor_log:
        raise NotPermitted(
            "Only a supervisor, an admin or a property manager records anchor certifications."
        )
    if not owns_site(by.organisation_id, anchor.site):
        raise NotPermitted(
            "Only the building's owner certifies its anchors; "
            "record your own pre-use checks on a sheet."
        )
    with transaction.atomic():
        cert = AnchorCertification(anchor=anchor, recorded_by=by, **fields)
        cert.full_clean()
        cert.save()
    return cert


UNKNOWN_CONTRACTOR = "Unknown contractor organisation."


def grant_site_access(
    *, site: Site, contractor: Organisation, starts_on: dt.date, ends_on: dt.date, by: User
) -> SiteAccess:
    """Let a contractor organisation work at the owner's site for a period.

    The grant row is its own audit entry (who granted it and when) and is never edited. Any
    organisation that is not a contractor, the owner itself included, is refused in the same
    words as an id that does not exist, so the answer names no other organisation.
    """
    _require_writer(by)
    if not owns_site(by.organisation_id, site):
        raise NotPermitted("Only the site's owner manages access.")
    if not by.can_keep_anchor_log:
        raise NotPermitted("Only a property manager, supervisor or admin grants access.")
    if not grantable_contractors(site).filter(pk=contractor.pk).exists():
        raise ValidationError({"contractor": UNKNOWN_CONTRACTOR})
    with transaction.atomic():
        grant = SiteAccess(
            site=site, contractor=contractor, starts_on=starts_on, ends_on=ends_on, granted_by=by
        )
        grant.full_clean()
        grant.save()
    return grant


def end_grant(*, grant: SiteAccess, by: User, reason: str = "") -> SiteAccessEnd:
    """End a grant now: the contractor loses the site, its anchors and its log book at once.

    Its jobs there no longer start (``no_site_access``); the grant keeps its dates, and the
    end row records who ended it, when and why.
    """
    _require_writer(by)
    if not owns_site(by.organisation_id, grant.site):
        raise NotPermitted("Only the site's owner manages access.")
    if not by.can_keep_anchor_log:
        raise NotPermitted("Only a property manager, supervisor or admin ends access.")
    with transaction.atomic():
        grant = SiteAccess.objects.select_for_update().get(pk=grant.pk)
        if SiteAccessEnd.objects.filter(grant=grant).exists():
            raise InvalidTransition("This grant has already been ended.")
        end = SiteAccessEnd(grant=grant, ended_by=by, reason=reason)
        end.full_clean()
        end.save()
    return end


def require_register_keeper(user: User) -> None:
    _require_writer(user)
    if not user.can_keep_anchor_log:
        raise NotPermitted(
            "Only a supervisor, an admin or a property manager can change this register."
        )


def _plain(value: Any) -> Any:
    """A field's value as the audit entry stores it (JSON)."""
    if isinstance(value, dt.date):
        return value.isoformat()
    if isinstance(value, models.Model):
        return value.pk
    return value


def audit_register_change(
    *, subject: str, row: Any, action: str, by: User, changes: dict[str, Any] | None = None
) -> RegisterChange:
    organisation_id = getattr(row, "organisation_id", None) or by.organisation_id
    return RegisterChange.objects.create(
        organisation_id=organisation_id,
        subject=subject,
        object_id=row.pk,
        action=action,
        changes=changes or {},
        by=by,
    )


def save_new_register_row(row: models.Model, *, unique: dict[str, str]) -> None:
    """Validate and insert; a uniqueness the model states is the caller's error, named by
    field, whether full_clean sees it first or the database does (two at once)."""
    try:
        row.full_clean()
    except ValidationError as exc:
        # full_clean names a composite unique constraint under __all__; name the field.
        errors = exc.message_dict
        if "__all__" in errors and unique:
            ((field, words),) = unique.items()
            errors.pop("__all__")
            errors[field] = [words]
        raise ValidationError(errors) from None
    try:
        with transaction.atomic():
            row.save()
    except IntegrityError:
        ((field, words),) = unique.items()
        raise ValidationError({field: [words]}) from None


DUPLICATE_SITE = "Your organisation already has a site of this name."
DUPLICATE_ANCHOR = "This site already has an anchor of this label."
DUPLICATE_EQUIPMENT = "Your organisation already has equipment of this label."


def create_site(
    *,
    by: User,
    name: str,
    height_m: float,
    profile: Any,
    address: str = "",
    storeys: int | None = None,
    terrain: str = "",
    roof_outline: list[list[float]] | None = None,
) -> Site:
    """A building in the organisation's register: an owner's own, or a contractor's where no
    owner keeps it in Parapet."""
    require_register_keeper(by)
    fields: dict[str, Any] = {"storeys": storeys, "roof_outline": roof_outline or []}
    if terrain:
        fields["terrain"] = terrain
    with transaction.atomic():
        site = Site(
            organisation_id=by.organisation_id,
            name=name,
            address=address,
            height_m=height_m,
            profile=profile,
            **fields,
        )
        save_new_register_row(
            site, unique={"name": "Your organisation already has a site of this name."}
        )
        audit_register_change(subject="site", row=site, action="created", by=by)
    return site


def add_anchor(
    *,
    site: Site,
    by: User,
    label: str,
    x_m: float = 0.0,
    y_m: float = 0.0,
    description: str = "",
) -> Anchor:
    """An anchor on the roof plan. Only the site's own organisation adds anchors to it."""
    require_register_keeper(by)
    if site.organisation_id != by.organisation_id:
        raise NotPermitted("Only the building's owner adds anchors to its roof.")
    with transaction.atomic():
        anchor = Anchor(site=site, label=label, x_m=x_m, y_m=y_m, description=description)
        save_new_register_row(
            anchor, unique={"label": "This site already has an anchor of this label."}
        )
        audit_register_change(subject="anchor", row=anchor, action="created", by=by)
    return anchor


def create_equipment(*, by: User, **fields: Any) -> Equipment:
    """A robot, tether, safety line or hose in the organisation's register."""
    require_register_keeper(by)
    with transaction.atomic():
        item = Equipment(organisation_id=by.organisation_id, **fields)
        save_new_register_row(
            item, unique={"label": "Your organisation already has equipment of this label."}
        )
        audit_register_change(subject="equipment", row=item, action="created", by=by)
    return item


EQUIPMENT_CHANGEABLE = ("label", "serial", "ratings", "made_on", "next_inspection_due")


def update_equipment(*, item: Equipment, by: User, reason: str = "", **fields: Any) -> Equipment:
    """Change a register entry: its label, serial, ratings, dates, or whether it is in service.

    The kind never changes (its ratings would mean something else); the audit entry keeps
    each changed field before and after. Taking equipment out of service needs a reason.
    """
    require_register_keeper(by)
    if item.organisation_id != by.organisation_id:
        raise NotPermitted("Only the organisation that keeps this equipment changes it.")
    unknown = set(fields) - {*EQUIPMENT_CHANGEABLE, "in_service"}
    if unknown:
        raise ValidationError({name: ["This field cannot be changed."] for name in sorted(unknown)})
    with transaction.atomic():
        item = Equipment.objects.select_for_update().get(pk=item.pk)
        changes = {
            name: [_plain(getattr(item, name)), _plain(value)]
            for name, value in fields.items()
            if getattr(item, name) != value
        }
        if not changes:
            return item
        if fields.get("in_service") is False and item.in_service and not reason.strip():
            raise ValidationError({"reason": ["Say why the equipment is taken out of service."]})
        for name, value in fields.items():
            setattr(item, name, value)
        item.full_clean(validate_unique=False)
        try:
            with transaction.atomic():
                item.save(update_fields=sorted(changes))
        except IntegrityError:
            raise ValidationError({"label": [DUPLICATE_EQUIPMENT]}) from None
        if "in_service" in changes:
            action = "returned to service" if item.in_service else "taken out of service"
        else:
            action = "updated"
        if reason.strip():
            changes["reason"] = reason.strip()
        audit_register_change(subject="equipment", row=item, action=action, by=by, changes=changes)
    return item


DROP_NOTE_MAX = 500


def log_drop(
    *, drop: Drop, by: User, note: str = "", device_time: Any = None, client_uuid: Any = None
) -> DropLog:
    """A drop done while its job is working (the log row is its own audit entry)."""
    _require_writer(by)
    if len(note) > DROP_NOTE_MAX:
        raise ValidationError({"note": [f"A text of at most {DROP_NOTE_MAX} characters."]})
    with transaction.atomic():
        job = locked(drop.job)
        if job.state != JobState.WORKING:
            raise InvalidTransition(
                f"Drops are logged while the job is working; it is {job.state}."
            )
        extra = {"client_uuid": client_uuid} if client_uuid is not None else {}
        return DropLog.objects.create(drop=drop, by=by, device_time=device_time, note=note, **extra)


__all__ = [
    "Reason",
    "add_anchor",
    "add_drop",
    "apply_sheet_outcome",
    "audit_register_change",
    "close_job",
    "create_equipment",
    "create_job",
    "create_site",
    "end_grant",
    "grant_site_access",
    "log_drop",
    "pause_job",
    "record_certification",
    "refresh_readiness",
    "require_register_keeper",
    "save_new_register_row",
    "start_job",
    "update_equipment",
]

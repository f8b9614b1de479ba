"""Every action that changes the state of a job or a register, with its audit entry."""

import datetime as dt
from typing import Any

from django.core.exceptions import ValidationError
from django.db import transaction

from checklists.models import CheckSheet
from checklists.verdicts import SheetOutcome
from compliance.access import can_work_at, grantable_contractors, owns_site
from compliance.errors import InvalidTransition, JobBlocked, NotPermitted, Reason
from compliance.models import (
    Anchor,
    AnchorCertification,
    Drop,
    Equipment,
    Hold,
    HoldClearance,
    Job,
    JobState,
    JobTransition,
    Organisation,
    Site,
    SiteAccess,
    SiteAccessEnd,
    User,
)
from compliance.selectors import job_blockers


def _require_writer(user: User) -> None:
    if not user.can_write:
        raise NotPermitted("Auditors have read-only access.")


def _transition(job: Job, to_state: str, by: User | None, reason: str) -> Job:
    JobTransition.objects.create(
        job=job, from_state=job.state, to_state=to_state, by=by, reason=reason
    )
    job.state = to_state
    job.save(update_fields=["state"])
    return job


def _locked(job: Job) -> Job:
    """The job's row, locked until the transaction ends; its site and profile are read along
    but not locked (every crew under one profile would otherwise wait on the others)."""
    return (
        Job.objects.select_for_update(of=("self",)).select_related("site__profile").get(pk=job.pk)
    )


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
    with transaction.atomic():
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
        job = _locked(job)
        if job.state == JobState.CLEARED:
            _transition(job, JobState.PLANNED, by, f"Drop {label} added; its checks are needed.")
    return drop


def start_job(*, job: Job, by: User) -> Job:
    """Move a job to working, or raise JobBlocked with every reason it cannot start."""
    _require_writer(by)
    with transaction.atomic():
        job = _locked(job)
        if job.state == JobState.WORKING:
            return job
        if job.state == JobState.CLOSED:
            raise InvalidTransition("This job is closed.")
        reasons = job_blockers(job)
        if reasons:
            raise JobBlocked(reasons)
        return _transition(job, JobState.WORKING, by, "Pre-start checks passed; work started.")


def pause_job(*, job: Job, by: User, reason: str = "") -> Job:
    _require_writer(by)
    with transaction.atomic():
        job = _locked(job)
        if job.state != JobState.WORKING:
            raise InvalidTransition(f"Only a working job can be paused; this one is {job.state}.")
        return _transition(job, JobState.CLEARED, by, reason or "Work paused.")


def close_job(*, job: Job, by: User, reason: str = "") -> Job:
    _require_writer(by)
    with transaction.atomic():
        job = _locked(job)
        if job.state == JobState.CLOSED:
            raise InvalidTransition("This job is already closed.")
        if job.state == JobState.HELD and not reason.strip():
            raise InvalidTransition("Closing a held job needs a reason.")
        return _transition(job, JobState.CLOSED, by, reason or "Work finished for the day.")


def apply_sheet_outcome(
    *,
    sheet: CheckSheet,
    outcome: SheetOutcome,
    by: User,
    drops: list[Drop] | None = None,
    defer_readiness: bool = False,
) -> Job:
    """Open holds for failed blocking items, or clear this requirement's holds on a pass.

    Holds open at once. With ``defer_readiness`` the move back to cleared or planned waits for
    the caller's ``refresh_readiness`` (a sync batch does it once per job, not once per sheet).
    """
    job = _locked(sheet.job)
    requirement = sheet.requirement
    failures = outcome.blocking_failures
    if failures:
        if job.state == JobState.CLOSED:
            return job
        for item in failures:
            Hold.objects.create(
                job=job,
                requirement=requirement,
                item_key=item.key,
                sheet=sheet,
                reason=f"{item.label}: {item.message or 'failed'}",
            )
        if job.state != JobState.HELD:
            names = ", ".join(i.label for i in failures)
            _transition(job, JobState.HELD, by, f"Stop work: blocking item failed ({names}).")
        return job
    # A sheet clears only what a sheet opened: the owner's stop work (an anchor removed from
    # service) waits for the owner's return to service, whatever the crew's checklist is called.
    for hold in Hold.objects.filter(
        job=job, requirement=requirement, clearance__isnull=True, sheet__isnull=False
    ):
        HoldClearance.objects.create(hold=hold, sheet=sheet, by=by)
    if defer_readiness:
        return job
    return refresh_readiness(job=job, by=by, drops=drops)


def refresh_readiness(*, job: Job, by: User | None, drops: list[Drop] | None = None) -> Job:
    """Move a held or planned job to cleared (or back to planned) from what it now has."""
    if job.state not in (JobState.PLANNED, JobState.HELD, JobState.CLEARED):
        return job
    if Hold.objects.filter(job=job, clearance__isnull=True).exists():
        return job
    ready = not job_blockers(job, drops)
    if job.state == JobState.HELD:
        target = JobState.CLEARED if ready else JobState.PLANNED
        return _transition(job, target, by, "Every hold cleared by a passing re-check.")
    if job.state == JobState.PLANNED and ready:
        return _transition(job, JobState.CLEARED, by, "Every required pre-start check passed.")
    if job.state == JobState.CLEARED and not ready:
        return _transition(job, JobState.PLANNED, by, "A required check is no longer satisfied.")
    return job


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


def create_equipment(*, by: User, **fields: Any) -> Equipment:
    _require_writer(by)
    with transaction.atomic():
        item = Equipment(organisation_id=by.organisation_id, **fields)
        item.full_clean()
        item.save()
    return item


__all__ = [
    "Reason",
    "add_drop",
    "apply_sheet_outcome",
    "close_job",
    "create_equipment",
    "create_job",
    "end_grant",
    "grant_site_access",
    "pause_job",
    "record_certification",
    "refresh_readiness",
    "start_job",
]

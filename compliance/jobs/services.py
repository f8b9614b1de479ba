"""Every action that changes the state of a job (plan, drops, start, pause, close, sheet outcomes,
drop logs), each in one transaction with its transition."""

import datetime as dt
from typing import Any

from django.core.exceptions import ValidationError
from django.db import transaction
from django.utils import timezone

from checklists.models import CheckSheet
from checklists.verdicts import SheetOutcome
from compliance import clock
from compliance.errors import (
    InvalidTransition,
    JobBlocked,
    NotPermitted,
    Reason,
    require_writer,
)
from compliance.jobs.holds import (
    clear_by_passing_sheet,
    hold_for_failed_items,
    hold_for_stale_weather,
    locked,
    refresh_readiness,
    transition,
)
from compliance.jobs.selectors import (
    ever_reached,
    job_blockers,
    plan_conflicts,
    was_working_at,
    weather_recheck,
)
from compliance.models import (
    Anchor,
    DailyRecord,
    Drop,
    DropLog,
    Equipment,
    Job,
    JobState,
    JobTransition,
    Site,
    User,
)
from compliance.registers.visibility import can_work_at
from compliance.text import has_words
from compliance.timeline import OFFSET_ROUNDING

PLANNERS_ONLY = "Only a supervisor or an admin plans jobs and their drops."


def _require_planner(by: User, words: str = PLANNERS_ONLY) -> None:
    require_writer(by)
    if not by.can_supervise:
        raise NotPermitted(words)


def create_job(*, site: Site, date: dt.date, supervisor: User, by: User, notes: str = "") -> Job:
    _require_planner(by)
    if date < clock.today():
        raise ValidationError(
            {"date": f"{date.isoformat()} has passed: a job is planned for today or a later day."}
        )
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
    _require_planner(by)
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
        for conflict in plan_conflicts(job=job, chosen=chosen, length_m=length_m):
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
    require_writer(by)
    with transaction.atomic():
        job = locked(job)
        if job.state == JobState.WORKING:
            return job
        if job.state == JobState.CLOSED:
            raise InvalidTransition("This job is closed.")
        if job.date != clock.today():
            raise InvalidTransition(
                f"This job is for {job.date.isoformat()}: work starts on its day, not before"
                " or after."
            )
        reasons = job_blockers(job)
        if reasons:
            raise JobBlocked(reasons)
        return transition(job, JobState.WORKING, by, "Pre-start checks passed; work started.")


def pause_job(*, job: Job, by: User, reason: str = "") -> Job:
    require_writer(by)
    with transaction.atomic():
        job = locked(job)
        if job.state != JobState.WORKING:
            raise InvalidTransition(f"Only a working job can be paused; this one is {job.state}.")
        return transition(job, JobState.CLEARED, by, reason or "Work paused.")


def close_job(*, job: Job, by: User, reason: str = "") -> Job:
    """End the day's work. A job that never started is closed only by a supervisor or an admin,
    with the reason it ends before any work, and its log says so."""
    require_writer(by)
    with transaction.atomic():
        job = locked(job)
        if job.state == JobState.CLOSED:
            raise InvalidTransition("This job is already closed.")
        if not ever_reached(job, JobState.WORKING):
            _require_planner(by, "Only a supervisor or an admin closes a job before any work.")
            if not has_words(reason):
                raise ValidationError({"reason": "Say why the job ends before any work."})
            return transition(job, JobState.CLOSED, by, f"Closed before work started: {reason}")
        if job.state == JobState.HELD and not has_words(reason):
            raise InvalidTransition("Closing a held job needs a reason.")
        return transition(job, JobState.CLOSED, by, reason or "Work finished for the day.")


def apply_sheet_outcome(
    *,
    sheet: CheckSheet,
    outcome: SheetOutcome,
    by: User,
    drops: list[Drop] | None = None,
    defer_readiness: bool = False,
    job_locked: bool = False,
    open_hold_requirements: set[str] | None = None,
) -> Job:
    """Open holds for failed blocking items, or clear this requirement's holds on a pass (the
    rules are in compliance.jobs.holds).

    Holds open at once. With ``defer_readiness`` the move back to cleared or planned waits for
    the caller's ``refresh_readiness`` (a sync batch does it once per job, not once per sheet).
    With ``job_locked`` the sheet's job is already the locked row (a sync batch locks it once);
    ``open_hold_requirements``, when given, is the set of requirements with open holds that
    sheets opened: a pass for a requirement outside it has nothing to clear and reads nothing.
    """
    job = sheet.job if job_locked else locked(sheet.job)
    if outcome.blocking_failures:
        if open_hold_requirements is not None:
            open_hold_requirements.add(sheet.requirement)
        return hold_for_failed_items(
            job=job, sheet=sheet, failures=outcome.blocking_failures, by=by
        )
    if open_hold_requirements is None or sheet.requirement in open_hold_requirements:
        still_held = clear_by_passing_sheet(job=job, sheet=sheet, by=by)
        if open_hold_requirements is not None and not still_held:
            open_hold_requirements.discard(sheet.requirement)
    if defer_readiness:
        return job
    return refresh_readiness(job=job, by=by, drops=drops)


def stop_work_on_stale_weather() -> int:
    """Hold every job at work whose weather check has run out under its profile
    (`weather_recheck_min`); run each minute by the beat. Returns how many it held. Each job
    is locked and read again in its own transaction, so a check arriving meanwhile wins."""
    held = 0
    working = Job.objects.filter(state=JobState.WORKING).select_related("site__profile")
    for candidate in working.order_by("pk"):
        if weather_recheck(candidate) is None:
            continue
        with transaction.atomic():
            job = locked(candidate)
            if job.state == JobState.WORKING:
                held += hold_for_stale_weather(job=job).state == JobState.HELD
    return held


DROP_NOTE_MAX = 500


def drop_refusal(
    job: Job, device_time: Any, phone_clock_offset_s: int | None, *, drop: Drop | None = None
) -> str:
    """Why a drop done cannot be logged on the job now ("" when it can). A drop is done while
    its job is at work, after it was planned: the phone's time set right by its batch's clock
    (a crew offline on the facade finds signal after a hold), or without the batch's clock when
    it is received. One done at work and received after the job stopped is kept until the day's
    record is signed."""
    if device_time is None or phone_clock_offset_s is None:
        # Taken as done when received: at work now, or not at all.
        if job.state == JobState.WORKING:
            return ""
        return f"Drops are logged while the job is working; it is {job.state}."
    made = clock.time_made(device_time, phone_clock_offset_s, timezone.now())
    # The phone gives whole seconds and the batch's offset is kept in whole seconds: a drop
    # logged within a second of the start may read as made just before it.
    leeway = OFFSET_ROUNDING
    if not (was_working_at(job, made) or was_working_at(job, made + leeway)):
        if job.state == JobState.WORKING:
            return (
                f"The job was not at work at {timezone.localtime(made):%Y-%m-%d %H:%M}, when"
                " the phone says this drop was done."
            )
        return f"Drops are logged while the job is working; it is {job.state}."
    if drop is not None and drop.added_at is not None and made + leeway < drop.added_at:
        return (
            f"This drop was planned at {timezone.localtime(drop.added_at):%H:%M}, after the"
            " time the phone gives for it."
        )
    if job.state != JobState.WORKING and (
        DailyRecord.objects.filter(job=job, kind=DailyRecord.Kind.RECORD).exists()
    ):
        return "This day's record is signed: a drop can no longer be added to it."
    return ""


def log_drop(
    *,
    drop: Drop,
    by: User,
    note: str = "",
    device_time: Any = None,
    client_uuid: Any = None,
    phone_clock_offset_s: int | None = None,
) -> DropLog:
    """A drop done while its job is working, on the job's day (the log row is its own audit
    entry): a job left working overnight does not take the next day's work under the checks
    of the day before."""
    require_writer(by)
    if len(note) > DROP_NOTE_MAX:
        raise ValidationError({"note": [f"A text of at most {DROP_NOTE_MAX} characters."]})
    with transaction.atomic():
        job = locked(drop.job)
        refusal = drop_refusal(job, device_time, phone_clock_offset_s, drop=drop)
        if refusal:
            raise InvalidTransition(refusal)
        done_on = clock.day_made(job.date, device_time, phone_clock_offset_s)
        if done_on != job.date:
            raise ValidationError(
                {
                    "drop": [
                        f"This job is for {job.date.isoformat()}: its drops are logged on its"
                        f" day, and this one was done on {done_on.isoformat()}."
                    ]
                }
            )
        extra = {"client_uuid": client_uuid} if client_uuid is not None else {}
        return DropLog.objects.create(drop=drop, by=by, device_time=device_time, note=note, **extra)


__all__ = [
    "Reason",
    "add_drop",
    "apply_sheet_outcome",
    "close_job",
    "create_job",
    "log_drop",
    "pause_job",
    "refresh_readiness",
    "start_job",
]

"""Stop work: every rule that opens or clears a hold on a job, and moves its state with it.

- A failed blocking item opens a hold per item at once, and the job goes to held (a closed day
  keeps its state: its record shows the failure).
- Only a passing sheet for the same requirement clears the holds a sheet opened; the owner's
  stop work (an anchor removed from service) is never cleared by a crew's sheet.
- Removing an anchor from service holds every open job, of any contractor, that hangs a drop
  from it today or later; returning it clears those holds, and each job's readiness is read
  again.
- A job with an open hold never moves to cleared; when its last hold clears it goes to cleared
  if nothing else blocks it, else back to planned.
- A held day may still be signed at its end, never as "reviewed, safe" (see SIGNED_HELD and
  daily_records.sign_daily_record).

Every function here runs inside its caller's transaction, with the job's row locked.
"""

import datetime as dt
from collections.abc import Iterable

from django.db.models import Q

from checklists.models import CheckSheet
from checklists.selectors import superseded
from checklists.verdicts import ItemResult
from compliance import clock
from compliance.jobs.selectors import job_blockers, job_requirements, open_holds
from compliance.models import (
    OPEN_STATES,
    Anchor,
    AnchorLogEntry,
    Drop,
    Equipment,
    Hold,
    HoldClearance,
    Job,
    JobState,
    JobTransition,
    User,
)
from compliance.registers.selectors import status_requirement

SIGNED_HELD = "Signed off at day's end with the hold open."
"""The reason written when a held day is closed by signing its record."""


def transition(job: Job, to_state: str, by: User | None, reason: str) -> Job:
    """Move the job to `to_state` with its log entry (the job's row is locked by the caller)."""
    JobTransition.objects.create(
        job=job, from_state=job.state, to_state=to_state, by=by, reason=reason
    )
    job.state = to_state
    job.save(update_fields=["state"])
    return job


def locked(job: Job) -> Job:
    """The job's row, locked until the transaction ends; its site and profile are read along
    but not locked (every crew under one profile would otherwise wait on the others)."""
    return (
        Job.objects.select_for_update(of=("self",)).select_related("site__profile").get(pk=job.pk)
    )


def hold_for_failed_items(
    *, job: Job, sheet: CheckSheet, failures: Iterable[ItemResult], by: User
) -> Job:
    """Open a hold for each failed blocking item of the sheet and put the job on hold. An item
    already holding the job on this requirement keeps its one hold: the new failing sheet is
    recorded with its entries, and one passing sheet clears the hold either way. A closed job
    (a failure made before it closed, sent after) keeps its state: the open hold is what its
    day's record shows, and what keeps it from being signed "safe"."""
    failures = list(failures)
    holding = set(
        Hold.objects.filter(
            job=job, requirement=sheet.requirement, clearance__isnull=True
        ).values_list("item_key", flat=True)
    )
    Hold.objects.bulk_create(
        [
            Hold(
                job=job,
                requirement=sheet.requirement,
                item_key=item.key,
                sheet=sheet,
                reason=hold_reason(item.label, item.message),
            )
            for item in failures
            if item.key not in holding
        ]
    )
    if job.state not in (JobState.HELD, JobState.CLOSED):
        names = ", ".join(i.label for i in failures)
        transition(job, JobState.HELD, by, f"Stop work: blocking item failed ({names}).")
    return job


def clear_by_passing_sheet(*, job: Job, sheet: CheckSheet, by: User) -> bool:
    """A passing sheet clears the holds sheets opened on its requirement, and only those, when
    it was filled against the checklist's current version (an older one may lack the very item
    that failed) and made after the sheet that opened the hold (a pass filled at 05:02 on a
    phone that was offline says nothing of the grip that failed at 07:02), by the made order
    and by the phones' own times (see _phones_say_older). Returns whether any such hold stays
    open."""
    holds = list(
        Hold.objects.filter(
            job=job, requirement=sheet.requirement, clearance__isnull=True, sheet__isnull=False
        ).select_related("sheet")
    )
    if not holds:
        return False
    if superseded(sheet.version):
        return True
    made = sheet.order_made
    cleared = [
        hold
        for hold in holds
        if hold.sheet.order_made < made and not _phones_say_older(sheet, hold.sheet)
    ]
    for hold in cleared:
        HoldClearance.objects.create(hold=hold, sheet=sheet, by=by)
    return len(cleared) < len(holds)


def _phone_time(sheet: CheckSheet) -> dt.datetime | None:
    """When the sheet was made by its phone's own time (None without one): set right by its
    batch's clock where the batch said when it was sent, and never after it was received (a
    time past the receipt is a clock ahead, not a time of making)."""
    if sheet.device_time is None:
        return None
    return clock.time_made(sheet.device_time, sheet.phone_clock_offset_s or 0, sheet.received_at)


def _phones_say_older(passing: CheckSheet, failing: CheckSheet) -> bool:
    """Whether, both sheets carrying a phone's time, the pass's is earlier than the failure's.
    A pass sent in a batch without sent_at counts as made when received, which may put it
    after a failure its own phone says it came before (filled half an hour earlier, offline):
    when the two disagree, stop work first, the hold stays and a check made since clears it."""
    said_pass, said_failure = _phone_time(passing), _phone_time(failing)
    return said_pass is not None and said_failure is not None and said_pass < said_failure


def refresh_readiness(
    *, job: Job, by: User | None, drops: list[Drop] | None = None, why: str = ""
) -> Job:
    """Move a held or planned job to cleared (or back to planned) from what it now has; `why`,
    when given, is the job log's reason for a move (what changed, where the generic words would
    name a check that did not)."""
    if job.state not in (JobState.PLANNED, JobState.HELD, JobState.CLEARED):
        return job
    holds = open_holds(job)
    if holds:
        return job
    ready = not job_blockers(job, drops, holds=holds)
    if job.state == JobState.HELD:
        target = JobState.CLEARED if ready else JobState.PLANNED
        return transition(job, target, by, why or "Every hold cleared.")
    if job.state == JobState.PLANNED and ready:
        return transition(
            job, JobState.CLEARED, by, why or "Every required pre-start check passed."
        )
    if job.state == JobState.CLEARED and not ready:
        return transition(
            job, JobState.PLANNED, by, why or "A required check is no longer satisfied."
        )
    return job


def jobs_using(anchor: Anchor) -> list[Job]:
    """Open jobs of any day, of any contractor, with a drop hung from the anchor; locked (a
    night shift begun before midnight is still at work, and an open job has no signed record
    yet)."""
    ids = (
        Job.objects.filter(
            Q(drops__anchor=anchor) | Q(drops__safety_anchor=anchor),
            state__in=OPEN_STATES,
        )
        .values_list("pk", flat=True)
        .distinct()
    )
    # PostgreSQL refuses FOR UPDATE with DISTINCT: find the jobs, then lock them by id.
    return list(Job.objects.select_for_update().filter(pk__in=list(ids)).order_by("pk"))


def jobs_with_kit(equipment: Equipment) -> list[Job]:
    """Open jobs of any day with a drop using the piece of kit; locked."""
    ids = (
        Job.objects.filter(
            Q(drops__robot=equipment)
            | Q(drops__tether=equipment)
            | Q(drops__safety_line=equipment)
            | Q(drops__hose=equipment),
            state__in=OPEN_STATES,
        )
        .values_list("pk", flat=True)
        .distinct()
    )
    return list(Job.objects.select_for_update().filter(pk__in=list(ids)).order_by("pk"))


def jobs_at_site(*, organisation_id: int, site_id: int) -> list[Job]:
    """The organisation's open jobs of any day at the site; locked."""
    return list(
        Job.objects.select_for_update()
        .filter(organisation_id=organisation_id, site_id=site_id, state__in=OPEN_STATES)
        .order_by("pk")
    )


def jobs_under_profile(profile_id: int) -> list[Job]:
    """Open jobs of any day at sites under the profile; locked."""
    return list(
        Job.objects.select_for_update()
        .filter(site__profile_id=profile_id, state__in=OPEN_STATES)
        .order_by("pk")
    )


def reread_for_new_version(*, organisation_id: int | None, by: User | None) -> None:
    """A checklist version just published leaves the checks filled against the one before
    behind: each cleared job that may read it (the organisation's, or every
    organisation's for a default checklist) is read again, and goes back to planned until they
    are filled again. A job at work goes on: it started on the checks of the version then in
    force, and the new version applies to its next check."""
    jobs = Job.objects.filter(state=JobState.CLEARED)
    if organisation_id is not None:
        jobs = jobs.filter(organisation_id=organisation_id)
    for job in jobs.select_for_update().order_by("pk"):
        refresh_readiness(job=job, by=by)


JUDGED_ON_CHANGED = "judged_on"
"""The item key of a hold opened because a figure a check read has changed since."""
WEATHER_DUE = "weather_due"
"""The item key of a hold opened because the weather was not read again in time."""
CLEARED_BY_A_NEW_CHECK = {JUDGED_ON_CHANGED, WEATHER_DUE}
"""Holds that name the check they leave behind, so that a check made since clears them."""

STOPS_WORK = {
    "sheet_judged_on_changed": JUDGED_ON_CHANGED,
    "equipment_out_of_service": "equipment_out_of_service",
    "equipment_inspection_overdue": "equipment_inspection_overdue",
    "anchor_uncertified": "anchor_uncertified",
    "anchor_certification_expired": "anchor_certification_expired",
    "anchor_capacity_low": "anchor_capacity_low",
    "anchor_inspection_overdue": "anchor_inspection_overdue",
    "line_shorter_than_drop": "line_shorter_than_drop",
    "weather_stale": WEATHER_DUE,
    "no_grant_for_day": "no_grant",
}
"""What a register change can leave that stops a job at work, by blocker code, and the item key
of the hold it opens. An anchor removed from service is the owner's log book's own hold."""


def reread_readiness(*, jobs: Iterable[Job], by: User | None, why: str = "") -> None:
    """A register change (a rating, a date, in or out of service, a certification) may leave a
    cleared job's checks behind, or put right what held or kept back another: each job's state
    is read again. A job at work that it leaves short stops (a safety line re-rated below its
    arrest load, or taken out of service, while the robot is on the facade); the hold clears
    when the register is put right, or, for a check judged on a figure since changed, with a
    check made since."""
    for job in jobs:
        if job.state == JobState.WORKING:
            hold_for_register_change(job=job, by=by)
        else:
            clear_register_holds(job=job, by=by)
            refresh_readiness(job=job, by=by, why=why)


def hold_for_register_change(
    *,
    job: Job,
    by: User | None,
    codes: Iterable[str] = STOPS_WORK,
    why: str = "Stop work: the register changed under the job.",
) -> Job:
    """Open a hold for each thing the register now says stops the job (see STOPS_WORK; only
    `codes` of them) that no open hold already stands for."""
    codes = set(codes)
    requirements = job_requirements(job)
    latest = {r.key: r.latest_sheet_id for r in requirements}
    holding = set(
        Hold.objects.filter(job=job, clearance__isnull=True).values_list("requirement", "item_key")
    )
    opened = []
    for reason in job_blockers(job, requirements=requirements):
        item_key = STOPS_WORK.get(reason.code) if reason.code in codes else None
        if item_key is None or (reason.requirement, item_key) in holding:
            continue
        holding.add((reason.requirement, item_key))
        opened.append(
            Hold(
                job=job,
                requirement=reason.requirement,
                item_key=item_key,
                # A check judged on a changed figure, or weather read too long ago, is cleared
                # by a check made since.
                sheet_id=latest.get(reason.requirement)
                if item_key in CLEARED_BY_A_NEW_CHECK
                else None,
                reason=reason.message,
            )
        )
    if not opened:
        return job
    Hold.objects.bulk_create(opened)
    return transition(job, JobState.HELD, by, why)


def hold_for_stale_weather(*, job: Job, by: User | None = None) -> Job:
    """Stop a job at work whose weather check has run out (the profile's
    `weather_recheck_min`): the hold names that check, and a weather check made since clears
    it. The job's row is locked by the caller."""
    if job.state != JobState.WORKING:
        return job
    return hold_for_register_change(
        job=job,
        by=by,
        codes=("weather_stale",),
        why="Stop work: the wind was not read again in time.",
    )


def hold_for_ended_grant(*, jobs: Iterable[Job], by: User) -> int:
    """The owner ended a contractor's access (`jobs`: its open jobs at the site, locked): a
    robot at work there stops, and a job not at work is read again (a cleared one is no longer
    ready). The hold clears when the owner grants access for the day again. Returns how many
    jobs at work were stopped."""
    stopped = 0
    for job in jobs:
        if job.state == JobState.WORKING:
            job = hold_for_register_change(
                job=job,
                by=by,
                codes=("no_grant_for_day",),
                why="Stop work: the building's owner ended access to the site.",
            )
            stopped += job.state == JobState.HELD
        else:
            refresh_readiness(job=job, by=by, why="The building's owner ended access to the site.")
    return stopped


def clear_register_holds(*, job: Job, by: User | None) -> None:
    """Clear the holds a register change opened once the register no longer says so (the line
    back in service, its inspection recorded, the anchor certified again)."""
    held = [
        hold
        for hold in Hold.objects.filter(
            job=job, clearance__isnull=True, sheet__isnull=True, log_entry__isnull=True
        )
        if hold.item_key in STOPS_WORK.values()
    ]
    if not held:
        return
    standing = {(reason.requirement, STOPS_WORK.get(reason.code)) for reason in job_blockers(job)}
    for hold in held:
        if (hold.requirement, hold.item_key) not in standing:
            HoldClearance.objects.create(hold=hold, by=by)


def hold_for_removed_anchor(
    *, jobs: list[Job], anchor: Anchor, entry: AnchorLogEntry, by: User
) -> None:
    """The owner's stop work: each job using the anchor is held until the anchor returns. A
    failed periodic inspection or load test takes the anchor out of service as a removal does
    (compliance.registers.selectors.anchor_status)."""
    if entry.kind == AnchorLogEntry.Kind.REMOVED:
        what, done = "was removed from service on", "removed from service"
    else:
        what = f"failed its {entry.get_kind_display().lower()} on"
        done = f"failed its {entry.get_kind_display().lower()}"
    for job in jobs:
        Hold.objects.create(
            job=job,
            requirement=status_requirement(anchor),
            item_key="in_service",
            log_entry=entry,
            reason=f"Anchor {anchor.label} {what} {entry.performed_on:%Y-%m-%d}: {entry.details}",
        )
        if job.state != JobState.HELD:
            transition(job, JobState.HELD, by, f"Stop work: anchor {anchor.label} {done}.")


def clear_for_returned_anchor(
    *, jobs: list[Job], anchor: Anchor, entry: AnchorLogEntry, by: User
) -> None:
    """The anchor's return clears the holds its removal opened on the open jobs (`jobs`);
    readiness is read again. A closed day keeps its hold as it was: a signed record showed it
    open, and its rows must still read as they were sealed."""
    for hold in Hold.objects.filter(
        job__in=jobs, requirement=status_requirement(anchor), clearance__isnull=True
    ):
        HoldClearance.objects.create(hold=hold, log_entry=entry, by=by)
    for job in jobs:
        refresh_readiness(job=job, by=by)


def hold_reason(label: str, message: str) -> str:
    """Why an item holds the job, saying the item once: a tick marked failed reads
    "Zone closed: marked failed on the check." (its verdict's words repeat the label)."""
    if not message or message == f"Marked failed: {label}.":
        return f"{label}: marked failed on the check."
    return f"{label}: {message}"

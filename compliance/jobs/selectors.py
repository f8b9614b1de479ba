"""Reads that are more than a one-liner: what a job needs, what blocks it, list querysets."""

import datetime as dt
from collections.abc import Iterable, Sequence
from dataclasses import dataclass

from django.db.models import Exists, OuterRef, Prefetch, QuerySet, prefetch_related_objects
from django.utils import timezone

from checklists.models import CheckSheet
from checklists.selectors import changed_since, current_versions, latest_sheets
from checklists.verdicts import REGISTER_WORDS
from compliance import clock
from compliance.engineering.working import told_apart
from compliance.errors import Reason
from compliance.models import (
    OPEN_STATES,
    Anchor,
    AnchorCertification,
    AnchorLogEntry,
    DailyRecord,
    Drop,
    Equipment,
    Hold,
    Job,
    JobState,
    JobTransition,
    User,
)
from compliance.registers.ratings import rating_labels
from compliance.registers.selectors import (
    GRANT_REQUIREMENT,
    anchor_status,
    failed_test,
    withdrawal,
)
from compliance.registers.visibility import access_words, can_work_at
from compliance.timeline import WEATHER_CHECKLIST, reading_time, recheck_interval, weather_gaps


@dataclass(frozen=True)
class Subject:
    kind: str  # anchor, robot, tether, safety_line, hose, site
    anchor: Anchor | None = None
    equipment: Equipment | None = None

    @property
    def ref(self) -> str:
        if self.kind == "anchor":
            return f"anchor:{self.anchor.pk}"  # type: ignore[union-attr]
        if self.kind == "site":
            return "site"
        return f"equipment:{self.equipment.pk}"  # type: ignore[union-attr]

    @property
    def label(self) -> str:
        if self.anchor is not None:
            return f"anchor {self.anchor.label}"
        if self.equipment is not None:
            return f"{self.equipment.kind.replace('_', ' ')} {self.equipment.label}"
        return "site"


@dataclass(frozen=True)
class Requirement:
    checklist_key: str
    checklist_title: str
    version_id: int
    subject: Subject
    satisfied: bool
    latest_sheet_id: int | None
    latest_verdict: str | None
    latest_version_id: int | None = None
    """The version the newest sheet was filled against: only the current one counts."""
    before_drop: str = ""
    """The label of a drop the subject serves that was planned after the newest sheet: the
    sheet was judged without it (a line checked at 10 m before a 114 m drop was added)."""
    changed: tuple[str, object, object] | None = None
    """A figure the newest sheet was judged on that reads otherwise since, as (name, then,
    now): a safety line re-rated from 30 kN to 10 kN after its check passed."""
    before_return: bool = False
    """The newest sheet was made before its subject was last returned to service (a line
    taken out for a cut sheath and put back): it checked the kit as it was then."""
    read_at: dt.datetime | None = None
    """When the newest weather check was made, where the profile asks for the weather to be
    read again within a time (`weather_recheck_min`) and that time has run out."""
    read_again_by: dt.datetime | None = None
    """When the newest weather check runs out (made, set right, plus the profile's
    `weather_recheck_min`), for a weather check that counts now; the phone shows it."""
    published_at: dt.datetime | None = None
    """When the version the job needs now was published: one published while the robot was at
    work is the job's next check (see lapsed_checks)."""

    @property
    def outdated(self) -> bool:
        return self.latest_version_id is not None and self.latest_version_id != self.version_id

    @property
    def key(self) -> str:
        return f"{self.checklist_key}@{self.subject.ref}"

    def as_dict(self) -> dict[str, object]:
        return {
            "key": self.key,
            "checklist": self.checklist_key,
            "title": self.checklist_title,
            "version": self.version_id,
            "subject_kind": self.subject.kind,
            "subject": self.subject.label,
            "anchor": self.subject.anchor.pk if self.subject.anchor else None,
            "equipment": self.subject.equipment.pk if self.subject.equipment else None,
            "satisfied": self.satisfied,
            "latest_sheet": self.latest_sheet_id,
            "latest_verdict": self.latest_verdict,
            "latest_version": self.latest_version_id,
            "read_again_by": self.read_again_by,
        }


def _status_entries() -> QuerySet[AnchorLogEntry]:
    return AnchorLogEntry.objects.filter(
        kind__in=["removed_from_service", "returned_to_service", "periodic_inspection", "load_test"]
    ).only("id", "anchor_id", "kind", "result", "performed_on", "details", "sequence", "signed_at")


def drops_of(job: Job) -> list[Drop]:
    """The job's drops with their equipment, anchors and sites, and each anchor's
    certifications and status entries: the certifications of the drops' anchors and safety
    anchors in one query, their entries in another (prefetching through the two relations
    took four, and building them a tenth of a morning sync's batch)."""
    drops = list(
        Drop.objects.filter(job=job).select_related(
            "robot",
            "tether",
            "safety_line",
            "hose",
            "anchor__site",
            "safety_anchor__site",
        )
    )
    prefetch_related_objects(
        [anchor for drop in drops for anchor in (drop.anchor, drop.safety_anchor)],
        Prefetch("certifications", queryset=AnchorCertification.objects.all()),
        Prefetch("log", queryset=_status_entries()),
    )
    return drops


def job_subjects(drops: Iterable[Drop]) -> list[Subject]:
    """Every distinct anchor and piece of equipment the job's drops use, then the site."""
    subjects: dict[str, Subject] = {}
    for drop in drops:
        for anchor in (drop.anchor, drop.safety_anchor):
            subjects.setdefault(f"a{anchor.pk}", Subject("anchor", anchor=anchor))
        for item in (drop.robot, drop.tether, drop.safety_line, drop.hose):
            subjects.setdefault(f"e{item.pk}", Subject(item.kind, equipment=item))
    subjects["site"] = Subject("site")
    return list(subjects.values())


def drop_serves(drop: Drop, anchor: Anchor | None, equipment: Equipment | None) -> bool:
    """Whether the drop hangs from the anchor or uses the piece of kit (a site check serves
    every drop)."""
    if anchor is not None:
        return anchor.pk in (drop.anchor_id, drop.safety_anchor_id)
    if equipment is not None:
        return equipment.pk in (drop.robot_id, drop.tether_id, drop.safety_line_id, drop.hose_id)
    return True


def _serves(drop: Drop, subject: Subject) -> bool:
    return drop_serves(drop, subject.anchor, subject.equipment)


def returned_at(subject: Subject) -> dt.datetime | None:
    """When the subject was last returned to service: the kit's register says so, and an
    anchor's log book does (its prefetched status entries; see anchor_returned_at)."""
    if subject.equipment is not None:
        return subject.equipment.returned_at
    if subject.anchor is not None:
        return anchor_returned_at(subject.anchor.log.all())
    return None


def anchor_returned_at(entries: Iterable[AnchorLogEntry]) -> dt.datetime | None:
    """When an anchor was last returned to service, from its log's status entries.

    An entry takes effect when it was signed, or at the end of the day it names if that is
    earlier (an owner writing up past work in the log book). A return never takes effect
    before the removal or failed test it ends: a return dated back cannot reach over the checks
    made before the damage was recorded."""
    zone = timezone.get_current_timezone()

    def effective(entry: AnchorLogEntry) -> dt.datetime:
        day_end = dt.datetime.combine(
            entry.performed_on + dt.timedelta(days=1), dt.time.min, tzinfo=zone
        )
        return min(entry.signed_at, day_end)

    stopped: dt.datetime | None = None
    moment: dt.datetime | None = None
    for entry in sorted(entries, key=lambda e: e.sequence):
        if entry.kind == AnchorLogEntry.Kind.REMOVED or failed_test(entry):
            stopped = effective(entry)
        elif entry.kind == AnchorLogEntry.Kind.RETURNED:
            moment = effective(entry) if stopped is None else max(effective(entry), stopped)
    return moment


def weather_recheck(job: Job) -> dt.timedelta | None:
    """How long a weather check counts for under the job's profile (None: all day, as a
    profile without `weather_recheck_min` says)."""
    return recheck_interval(job.site.profile.thresholds)


def weather_stale_since(job: Job, made_at: dt.datetime) -> bool:
    """Whether a weather check made at `made_at` has run out now. A day the demo replays is
    history laid down as it happened, and is not judged by today's clock."""
    interval = weather_recheck(job)
    if interval is None or clock.replayed() or job.state == JobState.CLOSED:
        return False
    return timezone.now() - made_at > interval


def job_requirements(job: Job, drops: list[Drop] | None = None) -> list[Requirement]:
    """Which sheets the job needs, and whether the newest sheet for each passes."""
    drops = drops_of(job) if drops is None else drops
    versions = current_versions(job.organisation_id, items=False)
    latest = latest_sheets(job)
    requirements = []
    for subject in job_subjects(drops):
        served = [d for d in drops if _serves(d, subject)]
        for version in versions.get(subject.kind, []):
            key = f"{version.checklist.key}@{subject.ref}"
            sheet = latest.get(key)
            later = [
                d.label
                for d in served
                if sheet is not None and d.added_at is not None and d.added_at > sheet.received_at
            ]
            returned = returned_at(subject)
            before_return = (
                sheet is not None
                and not later
                and returned is not None
                and sheet.made_at < returned
            )
            changed = (
                changed_since(sheet.judged_on, job, subject.anchor, subject.equipment, served)
                if sheet is not None and sheet.judged_on and not later and not before_return
                else None
            )
            read = (
                reading_time(sheet.device_time, sheet.phone_clock_offset_s, sheet.received_at)
                if sheet is not None
                and sheet.blocking_failures == 0
                and version.checklist.key == WEATHER_CHECKLIST
                else None
            )
            stale = read is not None and weather_stale_since(job, read)
            interval = weather_recheck(job) if read is not None and not stale else None
            requirements.append(
                Requirement(
                    checklist_key=version.checklist.key,
                    checklist_title=version.checklist.title,
                    version_id=version.pk,
                    subject=subject,
                    satisfied=sheet is not None
                    and sheet.version_id == version.pk
                    and sheet.blocking_failures == 0
                    and not later
                    and not before_return
                    and changed is None
                    and not stale,
                    latest_sheet_id=sheet.pk if sheet else None,
                    latest_verdict=sheet.verdict if sheet else None,
                    latest_version_id=sheet.version_id if sheet else None,
                    before_drop=later[0] if later else "",
                    changed=changed,
                    before_return=before_return,
                    read_at=read if stale else None,
                    read_again_by=read + interval if read and interval else None,
                    published_at=version.published_at,
                )
            )
    return requirements


def photo_item_keys(job: Job) -> set[str]:
    """The keys of the photo items of the checklists the job's requirements use (the newest
    published version of each, for the job's subjects, as job_requirements reads them): the
    items a photo sent without a sheet may name."""
    drops = Drop.objects.filter(job=job).select_related(
        "anchor", "safety_anchor", "robot", "tether", "safety_line", "hose"
    )
    kinds = {subject.kind for subject in job_subjects(drops)}
    versions = current_versions(job.organisation_id)
    return {
        item["key"]
        for kind in kinds
        for version in versions.get(kind, [])
        for item in version.items
        if item.get("kind") == "photo"
    }


def open_holds(job: Job) -> list[Hold]:
    return list(Hold.objects.filter(job=job, clearance__isnull=True).select_related("sheet"))


def _figure(text: str, unit: str, value: object) -> str:
    """A figure's text (told_apart) with its unit; "nothing" where there is none."""
    if value is None:
        return "nothing"
    if isinstance(value, float | int) and not isinstance(value, bool):
        return f"{text} {unit}" if unit else text
    return str(value)


PLAN_WORDS = {
    "anchor.rated_capacity_kn": ("certified capacity", "kN"),
    "drop.length_m": ("length", "m"),
    "drop.height_m": ("building height", "m"),
    "drop.terrain": ("terrain", ""),
    "drop.corner_distance_m": ("distance from the facade's corner", "m"),
    "drop.building_depth_m": ("building depth", "m"),
}
"""A figure of the plan or the anchor's certificate in words, with its unit."""


def _figure_words(job: Job, subject: Subject, kind: str, ref: str) -> tuple[str, str]:
    """A figure a check read, in the register's words and with its unit: "minimum breaking
    strength", "kN" for a line's mbs_kn (a reason read "its mbs_kn at 30")."""
    if f"{kind}.{ref}" in PLAN_WORDS:
        return PLAN_WORDS[f"{kind}.{ref}"]
    if kind == "profile":
        threshold = job.site.profile.thresholds.get(ref)
        unit = str(threshold.get("unit") or "") if isinstance(threshold, dict) else ""
        words = ref.replace("_", " ")
        suffix = f" {unit.lower().replace('/', '').replace(' ', '')}"
        return (words.removesuffix(suffix) if unit else words), unit
    equipment_kind = subject.equipment.kind if kind == "equipment" and subject.equipment else kind
    rating = rating_labels(equipment_kind).get(ref)
    if rating is None:
        return ref.replace("_", " "), ""
    words, _, unit = rating.rpartition(", ")
    return (words, unit) if words else (rating, "")


def _the(subject: Subject) -> str:
    """A subject in a sentence: "the site", "anchor R1", "robot RB-1"."""
    return "the site" if subject.kind == "site" else subject.label


def job_blockers(
    job: Job,
    drops: list[Drop] | None = None,
    requirements: list[Requirement] | None = None,
    holds: list[Hold] | None = None,
) -> list[Reason]:
    """Everything that keeps the job from starting, in plain words (``drops``,
    ``requirements`` and ``holds`` when the caller has read them)."""
    drops = drops_of(job) if drops is None else drops
    reasons: list[Reason] = []
    if not drops:
        reasons.append(Reason("no_drops", "No drops are planned for this job."))
    for hold in open_holds(job) if holds is None else holds:
        reasons.append(Reason("open_hold", f"Stop work: {hold.reason}", hold.requirement))
    profile = job.site.profile
    min_capacity = profile.threshold("min_anchor_capacity_kn")
    interval_days = int(profile.threshold("certification_interval_days"))
    if not can_work_at(job.organisation_id, job.site, job.date):
        reasons.append(
            Reason(
                "no_grant_for_day",
                access_words(job.organisation_id, job.site, job.date),
                GRANT_REQUIREMENT,
            )
        )
    # Anchors and equipment apart: an anchor and a robot may share a primary key.
    seen: set[tuple[str, int]] = set()
    for drop in drops:
        # The plan check refused these; the register may have changed since.
        for line in (drop.tether, drop.safety_line):
            long = (line.ratings or {}).get("length_m")
            if isinstance(long, int | float) and long < drop.length_m:
                reasons.append(
                    Reason(
                        "line_shorter_than_drop",
                        f"Drop {drop.label}: {line.kind.replace('_', ' ')} {line.label} is"
                        f" {long:g} m long, shorter than the {drop.length_m:g} m drop.",
                        f"equipment:{line.pk}",
                    )
                )
        for anchor in (drop.anchor, drop.safety_anchor):
            if ("anchor", anchor.pk) in seen:
                continue
            seen.add(("anchor", anchor.pk))
            cert = anchor.current_certification()
            ref = f"anchor:{anchor.pk}"
            if cert is None:
                reasons.append(
                    Reason(
                        "anchor_uncertified",
                        f"Anchor {anchor.label} has no certification on record.",
                        ref,
                    )
                )
            elif not cert.is_valid_on(job.date):
                reasons.append(
                    Reason(
                        "anchor_certification_expired",
                        f"Anchor {anchor.label}'s certification expired on "
                        f"{cert.valid_until:%Y-%m-%d}.",
                        ref,
                    )
                )
            elif cert.rated_capacity_kn < min_capacity:
                reasons.append(
                    Reason(
                        "anchor_capacity_low",
                        f"Anchor {anchor.label} is rated {cert.rated_capacity_kn:g} kN, below the "
                        f"profile's minimum of {min_capacity:g} kN.",
                        ref,
                    )
                )
            status = anchor_status(anchor, interval_days)
            if not status.in_service:
                reasons.append(
                    Reason(
                        "anchor_out_of_service",
                        f"Anchor {anchor.label} is out of service since "
                        f"{status.removed_on:%Y-%m-%d}: {status.removed_reason}",
                        ref,
                    )
                )
            elif cert is not None and cert.is_valid_on(job.date) and status.overdue_on(job.date):
                reasons.append(
                    Reason(
                        "anchor_inspection_overdue",
                        f"Anchor {anchor.label}'s periodic inspection was due on "
                        f"{status.inspection_due:%Y-%m-%d}.",
                        ref,
                    )
                )
        for item in (drop.robot, drop.tether, drop.safety_line, drop.hose):
            if ("equipment", item.pk) in seen:
                continue
            seen.add(("equipment", item.pk))
            if not item.in_service:
                # Read only for what is out of service: the register's reason and day.
                gone = withdrawal(item)
                since = f" since {timezone.localdate(gone.at):%Y-%m-%d}" if gone.at else ""
                why = f": {gone.reason}" if gone.reason.strip() else "."
                reasons.append(
                    Reason(
                        "equipment_out_of_service",
                        f"{item.label} is out of service{since}{why}",
                        f"equipment:{item.pk}",
                    )
                )
            if item.next_inspection_due and item.next_inspection_due < job.date:
                reasons.append(
                    Reason(
                        "equipment_inspection_overdue",
                        f"{item.label}'s periodic inspection was due on "
                        f"{item.next_inspection_due:%Y-%m-%d}.",
                        f"equipment:{item.pk}",
                    )
                )
    for req in job_requirements(job, drops) if requirements is None else requirements:
        reason = requirement_reason(job, req)
        if reason is not None:
            reasons.append(reason)
    return reasons


def requirement_reason(job: Job, req: Requirement) -> Reason | None:
    """Why one requirement keeps the job from starting, in plain words (None when its newest
    sheet counts)."""
    subject = f"{req.checklist_title} for {_the(req.subject)}"
    if req.latest_sheet_id is None:
        return Reason("sheet_missing", f"{subject} has not been done.", req.key)
    if req.before_drop:
        return Reason(
            "sheet_before_drop",
            f"{subject} was done before drop {req.before_drop} was planned, and judged without"
            " it: check it again.",
            req.key,
        )
    if req.before_return:
        return Reason(
            "sheet_before_return",
            f"{subject} was filled before it was returned to service: check it again.",
            req.key,
        )
    if req.changed is not None:
        name, then, now = req.changed
        kind, _, ref = name.partition(".")
        whose = "its" if kind == "equipment" else REGISTER_WORDS.get(kind, f"the {kind}'s")
        words, unit = _figure_words(job, req.subject, kind, ref)
        was, reads = told_apart(then, now)
        return Reason(
            "sheet_judged_on_changed",
            f"{subject} was judged with {whose} {words} at {_figure(was, unit, then)}; it now"
            f" reads {_figure(reads, unit, now)}: check it again.",
            req.key,
        )
    if req.read_at is not None:
        minutes = weather_recheck(job) // dt.timedelta(minutes=1)  # type: ignore[operator]
        return Reason(
            "weather_stale",
            f"{req.checklist_title} was last read at {timezone.localtime(req.read_at):%H:%M},"
            f" more than {minutes} min ago: read the wind again before work goes on.",
            req.key,
        )
    if req.outdated:
        return Reason(
            "sheet_old_version",
            f"{subject} was filled against an older version of the checklist: fill it again"
            " against the current version.",
            req.key,
        )
    if not req.satisfied:
        return Reason("sheet_failed", f"{subject} failed a blocking item.", req.key)
    return None


def jobs_for(user: User) -> QuerySet[Job]:
    """The organisation's jobs, each with whether its day's record is signed (in the same
    query), so a desk list shows the unsigned past days without a request per job."""
    signed = DailyRecord.objects.filter(job=OuterRef("pk"), kind=DailyRecord.Kind.RECORD)
    return (
        Job.objects.filter(organisation_id=getattr(user, "organisation_id", None))
        .select_related("site", "site__profile", "supervisor")
        .annotate(record_signed=Exists(signed))
        .order_by("-date", "id")
    )


@dataclass(frozen=True)
class Readiness:
    drops: list[Drop]
    requirements: list[Requirement]
    blockers: list[Reason]
    holds: list[Hold]


def job_readiness(job: Job) -> Readiness:
    """Drops, requirements, blockers and all holds of a job in a fixed number of queries."""
    drops = drops_of(job)
    requirements = job_requirements(job, drops)
    return Readiness(
        drops=drops,
        requirements=requirements,
        blockers=job_blockers(job, drops, requirements),
        holds=list(Hold.objects.filter(job=job).select_related("clearance", "sheet")),
    )


@dataclass(frozen=True)
class Conflict:
    """Something wrong with a drop being planned, in words, against the field it concerns.

    `refuses` marks what cannot be planned at all (a rig or an anchor in two places at once,
    something out of service); the rest is shown while planning and then blocks the start
    until it is put right (a certificate or an inspection lapsing by the day).
    """

    field: str
    code: str
    message: str
    refuses: bool

    def as_dict(self) -> dict[str, object]:
        return {
            "field": self.field,
            "code": self.code,
            "message": self.message,
            "refuses": self.refuses,
        }


EQUIPMENT_FIELDS = ("robot", "tether", "safety_line", "hose")
ANCHOR_FIELDS = ("anchor", "safety_anchor")


LINE_FIELDS = ("tether", "safety_line", "hose")
"""What hangs the length of the drop: each is at least as long as the drop."""


def plan_conflicts(
    *,
    job: Job,
    chosen: dict[str, Anchor | Equipment],
    exclude_drop: int | None = None,
    length_m: float | None = None,
) -> list[Conflict]:
    """What stands against planning these anchors and this equipment (and a drop this long)
    on the job's day.

    Equipment or an anchor already on another open job that day refuses (one robot, one
    anchor, one place), whoever's job it is: the other contractor is not named. Within one job
    drops are worked one after another, so reusing a robot or an anchor there is fine. One
    anchor for both lines refuses, as does a drop taller than the building or longer than its
    tether or safety line; a hose shorter than the drop is a caution (it may be joined).
    """
    conflicts: list[Conflict] = []
    day = job.date
    height = job.site.height_m
    if length_m is not None and length_m > height:
        conflicts.append(
            Conflict(
                "length_m",
                "drop_taller_than_building",
                f"At most the site's height, {height:g} m: a drop cannot be longer than the"
                " building is tall.",
                True,
            )
        )
    others = Drop.objects.filter(job__date=day, job__state__in=OPEN_STATES).exclude(job=job)
    if exclude_drop is not None:
        others = others.exclude(pk=exclude_drop)
    equipment = {f: chosen[f] for f in EQUIPMENT_FIELDS if isinstance(chosen.get(f), Equipment)}
    anchors = {f: chosen[f] for f in ANCHOR_FIELDS if isinstance(chosen.get(f), Anchor)}
    booked_equipment = set(
        others.filter(job__organisation_id=job.organisation_id).values_list(
            "robot", "tether", "safety_line", "hose"
        )
    )
    busy = {pk for row in booked_equipment for pk in row}
    anchor_ids = [a.pk for a in anchors.values()]
    busy_anchors = set(others.filter(anchor__in=anchor_ids).values_list("anchor", flat=True)) | set(
        others.filter(safety_anchor__in=anchor_ids).values_list("safety_anchor", flat=True)
    )
    for field, item in equipment.items():
        what = f"{item.kind.replace('_', ' ').capitalize()} {item.label}"
        long = (item.ratings or {}).get("length_m") if field in LINE_FIELDS else None
        if (
            length_m is not None
            and length_m <= height  # a drop taller than the building is refused as that alone
            and isinstance(long, int | float)
            and long < length_m
        ):
            conflicts.append(
                Conflict(
                    field,
                    "line_shorter_than_drop",
                    f"{what} is {long:g} m long, shorter than the {length_m:g} m drop.",
                    field != "hose",
                )
            )
        if item.pk in busy:
            conflicts.append(
                Conflict(field, "equipment_booked", f"{what} is on another job on {day}.", True)
            )
        if not item.in_service:
            conflicts.append(
                Conflict(field, "equipment_out_of_service", f"{what} is out of service.", True)
            )
        elif item.next_inspection_due and item.next_inspection_due < day:
            conflicts.append(
                Conflict(
                    field,
                    "equipment_inspection_overdue",
                    f"{what}'s periodic inspection falls due on {item.next_inspection_due},"
                    f" before {day}.",
                    False,
                )
            )
    same = chosen.get("anchor")
    if same is not None and same == chosen.get("safety_anchor"):
        conflicts.append(
            Conflict(
                "safety_anchor",
                "anchors_not_independent",
                "The safety line needs an anchor independent of the tether's.",
                True,
            )
        )
    if anchors:
        loaded = {
            a.pk: a
            for a in Anchor.objects.filter(pk__in=anchor_ids).prefetch_related(
                "certifications", Prefetch("log", queryset=_status_entries())
            )
        }
        interval_days = int(job.site.profile.threshold("certification_interval_days"))
        for field, chosen_anchor in anchors.items():
            anchor = loaded[chosen_anchor.pk]
            what = f"Anchor {anchor.label}"
            if anchor.pk in busy_anchors:
                conflicts.append(
                    Conflict(field, "anchor_booked", f"{what} is on another job on {day}.", True)
                )
            status = anchor_status(anchor, interval_days)
            if not status.in_service:
                conflicts.append(
                    Conflict(
                        field,
                        "anchor_out_of_service",
                        f"{what} is out of service since {status.removed_on}:"
                        f" {status.removed_reason}",
                        True,
                    )
                )
                continue
            cert = anchor.current_certification()
            if cert is None:
                conflicts.append(
                    Conflict(field, "anchor_uncertified", f"{what} has no certificate.", False)
                )
            elif not cert.is_valid_on(day):
                conflicts.append(
                    Conflict(
                        field,
                        "anchor_certificate_lapses",
                        f"{what}'s certificate is valid until {cert.valid_until}, before {day}.",
                        False,
                    )
                )
            elif status.overdue_on(day):
                conflicts.append(
                    Conflict(
                        field,
                        "anchor_inspection_overdue",
                        f"{what}'s periodic inspection falls due on {status.inspection_due},"
                        f" before {day}.",
                        False,
                    )
                )
    return conflicts


def reached(job: Job, *states: str) -> set[str]:
    """Which of `states` the job was in at any time, in one query."""
    return set(
        JobTransition.objects.filter(job=job, to_state__in=states)
        .values_list("to_state", flat=True)
        .distinct()
    )


READY_STATES = (JobState.CLEARED, JobState.WORKING)


def moves_in_order(job: Job) -> list[tuple[str, dt.datetime]]:
    """Every state the job moved into and when, in order, in one query (a job starts
    planned)."""
    return list(JobTransition.objects.filter(job=job).order_by("id").values_list("to_state", "at"))


def unread_wind(job: Job, moves: Sequence[tuple[str, dt.datetime]]) -> str:
    """For a day that has ended (closed, or held at its end), when work went on without a
    recent wind reading, in words ("" when it did not): what refuses "safe" at signing
    (compliance.timeline.weather_gaps, reckoned from the same rows the record seals). One
    query, for such a day only."""
    if job.state not in (JobState.CLOSED, JobState.HELD):
        return ""
    sheets = CheckSheet.objects.filter(job=job, version__checklist__key=WEATHER_CHECKLIST)
    before = JobState.PLANNED
    transitions = []
    for state, at in moves:
        transitions.append({"from": before, "to": state, "at": at.isoformat()})
        before = state
    day = {
        "profile": {"thresholds": job.site.profile.thresholds},
        "sheets": [
            {
                "checklist": WEATHER_CHECKLIST,
                "device_time": row["device_time"].isoformat() if row["device_time"] else None,
                "phone_clock_offset_s": row["phone_clock_offset_s"],
                "received_at": row["received_at"].isoformat(),
                "judged_on": row["judged_on"],
            }
            for row in sheets.values(
                "device_time", "phone_clock_offset_s", "received_at", "judged_on"
            )
        ],
        "transitions": transitions,
    }
    gaps = weather_gaps(day)
    if not gaps:
        return ""
    spans = ", ".join(
        f"{timezone.localtime(a):%H:%M} to {timezone.localtime(b):%H:%M}" for a, b in gaps
    )
    return f"Work went on without a recent wind reading ({spans})."


def ready_when_closed(states: Sequence[str]) -> bool:
    """Whether every pre-start check was done and passing (cleared or working) in the last
    state the job held before it closed, or holds now while it is open. A job ready in the
    morning, then left behind by a changed figure and closed without work, was ready once but
    not when it closed."""
    held = [state for state in states if state != JobState.CLOSED]
    return bool(held) and held[-1] in READY_STATES


LAPSES = ("sheet_failed", "sheet_before_drop", "sheet_before_return", "sheet_judged_on_changed")
"""A check that no longer counts whenever it happened: the kit or the plan is not what was
checked (a figure read otherwise, kit returned since, a drop planned since) or it failed."""

NEXT_CHECKS = ("sheet_missing", "sheet_old_version")
"""A check the job needs now that it may not have needed when it was last ready: a checklist,
or a version of one, published while the robot was at work applies to its next check."""


def lapsed_checks(
    job: Job, requirements: Iterable[Requirement], moves: Sequence[tuple[str, dt.datetime]]
) -> list[Reason]:
    """The day's pre-start checks that no longer count though the job's states say it was
    ready (cleared or working) when it closed, or is now: a day is not signed "safe" while one
    stands. ``moves`` is the job's log as (state, when), in order.

    Kit returned to service after the job closed does not count against the day (at close
    it was in service or its removal held the job). A figure read otherwise counts whenever
    it changed: a figure wrong all day and one changed since cannot be told apart. A check the
    job needs only because its version was published after the job was last ready is its next
    check, not a lapse (a job at work goes on under the version it started with)."""
    held = [(state, at) for state, at in moves if state != JobState.CLOSED]
    if not held or held[-1][0] not in READY_STATES:
        return []
    ready_since = held[-1][1]
    closes = [at for state, at in moves if state == JobState.CLOSED]
    closed = closes[-1] if closes and job.state == JobState.CLOSED else None
    lapsed = []
    for req in requirements:
        reason = requirement_reason(job, req)
        if reason is None:
            continue
        if reason.code in NEXT_CHECKS:
            if req.published_at is not None and req.published_at > ready_since:
                continue
        elif reason.code == "sheet_before_return":
            back = returned_at(req.subject)
            if closed is not None and back is not None and back > closed:
                continue
        elif reason.code not in LAPSES:
            continue
        lapsed.append(reason)
    return lapsed


def ever_reached(job: Job, *states: str) -> bool:
    """Whether the job was in one of `states` at any time (its transitions say so): work
    started (working), or every pre-start check was done and passing (cleared)."""
    return bool(reached(job, *states))


def closed_at(job: Job) -> dt.datetime | None:
    """When the job last moved to closed, by its log (None when its log has no close)."""
    return (
        JobTransition.objects.filter(job=job, to_state=JobState.CLOSED)
        .order_by("-at", "-id")
        .values_list("at", flat=True)
        .first()
    )


def day_signed(job: Job) -> bool:
    """Whether the job's day's record is signed (sealed: nothing may be added to its day)."""
    return DailyRecord.objects.filter(job=job, kind=DailyRecord.Kind.RECORD).exists()


def was_working_at(job: Job, moment: dt.datetime) -> bool:
    """Whether the job was at work at the moment, by its state log."""
    last = job.transitions.filter(at__lte=moment).order_by("-at", "-id").first()
    return last is not None and last.to_state == JobState.WORKING

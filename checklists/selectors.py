"""Reads over checklists and sheets that own their joins."""

from collections.abc import Iterator, Mapping
from typing import Any

from django.db.models import Exists, OuterRef, Q, QuerySet

from checklists.models import Checklist, ChecklistVersion, CheckSheet, ItemEntry
from compliance.engineering.site_plan import facade_position
from compliance.engineering.working import same_figure
from compliance.models import Anchor, Drop, Equipment, Job


def visible_checklists(organisation_id: int | None) -> QuerySet[Checklist]:
    return Checklist.objects.filter(Q(organisation=None) | Q(organisation_id=organisation_id))


UNKNOWN_VERSION = "Unknown checklist version."


def usable_versions(organisation_id: int | None) -> QuerySet[ChecklistVersion]:
    """The versions an organisation may name: its own (draft or published) and the defaults.

    Every lookup of a version by id goes through this, so another organisation's version,
    draft or published, answers exactly as an id that does not exist (``UNKNOWN_VERSION``).
    """
    return ChecklistVersion.objects.filter(
        checklist__in=visible_checklists(organisation_id)
    ).select_related("checklist")


def fillable_versions(organisation_id: int | None) -> QuerySet[ChecklistVersion]:
    """The versions a sheet may be filled against: those the organisation may name, less the
    defaults its own published checklist of the same key replaces (a sheet against one would
    count for the requirement without the organisation's own items)."""
    replaced = Checklist.objects.filter(
        organisation_id=organisation_id,
        key=OuterRef("checklist__key"),
        versions__status=ChecklistVersion.Status.PUBLISHED,
    )
    return usable_versions(organisation_id).exclude(
        Q(checklist__organisation__isnull=True) & Exists(replaced)
    )


def superseded(version: ChecklistVersion) -> bool:
    """Whether a newer version of the checklist is published."""
    return ChecklistVersion.objects.filter(
        checklist_id=version.checklist_id,
        status=ChecklistVersion.Status.PUBLISHED,
        number__gt=version.number,
    ).exists()


def current_versions(
    organisation_id: int | None, *, items: bool = True
) -> dict[str, list[ChecklistVersion]]:
    """The newest published version of each checklist the organisation uses, by subject kind.

    An organisation's own checklist replaces the default one with the same key. Without
    ``items`` the versions come without their items and notes (reading one is a query each):
    what a job needs is which checklists, not their questions, and decoding every
    checklist's items was a tenth of settling a job's readiness.
    """
    versions = (
        ChecklistVersion.objects.filter(
            status=ChecklistVersion.Status.PUBLISHED,
            checklist__in=visible_checklists(organisation_id),
        )
        .select_related("checklist")
        .order_by("checklist__key", "checklist__organisation_id", "-number")
    )
    if not items:
        versions = versions.defer("items", "notes")
    newest: dict[str, ChecklistVersion] = {}
    for version in versions:
        key = version.checklist.key
        current = newest.get(key)
        own = version.checklist.organisation_id is not None
        if current is None or (own and current.checklist.organisation_id is None):
            newest[key] = version
    by_kind: dict[str, list[ChecklistVersion]] = {}
    for version in newest.values():
        by_kind.setdefault(version.checklist.applies_to, []).append(version)
    return by_kind


def latest_sheets(job: Job) -> dict[str, CheckSheet]:
    """The newest sheet for each requirement key (checklist key @ subject) of a job, by when it
    was made (an older check arriving late from an offline phone is not the newest); their
    versions without items or notes (each sheet's row decoded its version's items again, a
    twentieth of a sync batch)."""
    latest: dict[str, CheckSheet] = {}
    sheets = (
        CheckSheet.objects.filter(job=job)
        .select_related("version__checklist")
        .defer("version__items", "version__notes")
    )
    for sheet in sorted(sheets, key=lambda s: s.order_made):
        latest[sheet.requirement] = sheet
    return latest


def sheets_for(organisation_id: int | None) -> QuerySet[CheckSheet]:
    return (
        CheckSheet.objects.filter(job__organisation_id=organisation_id)
        .select_related("version__checklist", "filled_by", "anchor", "equipment", "job")
        .prefetch_related("entries")
    )


def entry_rows(sheet_ids: list[int], fields: list[str]) -> dict[int, list[dict[str, Any]]]:
    """The entries of these sheets as plain dicts of `fields`, in entry order, by sheet: one
    query, no model instances (a month of sheets holds thousands of entries)."""
    found: dict[int, list[dict[str, Any]]] = {pk: [] for pk in sheet_ids}
    for row in (
        ItemEntry.objects.filter(sheet_id__in=sheet_ids)
        .order_by("sheet_id", "id")
        .values("sheet_id", *fields)
    ):
        found[row.pop("sheet_id")].append(row)
    return found


def drop_place(site: Any, anchor: Anchor) -> dict[str, float]:
    """Where the drop hangs on its facade, from the roof plan and its anchor's position.

    With no usable roof outline the drop is taken to stand at a corner (distance 0), the worst
    place for wind suction; the depth then does not change the zone, and twice the height is
    given so that e = min(b, 2h) stays defined.
    """
    try:
        place = facade_position(site.roof_outline or [], (anchor.x_m, anchor.y_m))
    except (TypeError, ValueError, IndexError):  # an outline that is not a list of [x, y]
        place = None
    if place is None or not place.building_depth_m > 0.0:
        # An outline whose corners lie on one line (stored before the API refused it) has no
        # depth to measure from: no plan, as above.
        return {"corner_distance_m": 0.0, "building_depth_m": 2.0 * site.height_m}
    return {
        "corner_distance_m": place.corner_distance_m,
        "building_depth_m": place.building_depth_m,
    }


def drop_context(
    job: Job, anchor: Anchor | None, equipment: Equipment | None, drop: Drop | None
) -> dict[str, dict[str, Any]]:
    """The numbers a sheet's limits and calculations may draw on, for one drop (None: a site
    check on a job with no drops)."""
    profile = job.site.profile
    context: dict[str, dict[str, Any]] = {"profile": dict(profile.thresholds)}
    if equipment is not None:
        context["equipment"] = dict(equipment.ratings)
    if drop is not None:
        for kind in ("robot", "tether", "safety_line", "hose"):
            context[kind] = dict(getattr(drop, kind).ratings)
        tied = anchor if anchor is not None else drop.safety_anchor
        cert = tied.current_certification()
        context["anchor"] = {"rated_capacity_kn": cert.rated_capacity_kn if cert else None}
        context["drop"] = {
            "length_m": drop.length_m,
            "height_m": job.site.height_m,
            "terrain": job.site.terrain,
            **drop_place(job.site, drop.anchor),
        }
    else:
        context["drop"] = {"height_m": job.site.height_m, "terrain": job.site.terrain}
    return context


CONTEXT_KINDS = frozenset(
    ("profile", "equipment", "robot", "tether", "safety_line", "hose", "anchor", "drop")
)
"""The sources an item may name that come from the register, the profile or the plan (not
from the sheet's own readings)."""


def _sources(value: Any) -> Iterator[tuple[str, str]]:
    if isinstance(value, Mapping):
        if len(value) == 1:
            ((kind, ref),) = value.items()
            if kind in CONTEXT_KINDS and isinstance(ref, str):
                yield kind, ref
                return
        for inner in value.values():
            yield from _sources(inner)
    elif isinstance(value, list):
        for inner in value:
            yield from _sources(inner)


def context_reads(items: list[dict[str, Any]]) -> list[str]:
    """Every register, profile or plan figure a version's items name, as "kind.ref"."""
    return sorted({f"{kind}.{ref}" for item in items for kind, ref in _sources(item)})


def read_value(context: Mapping[str, Mapping[str, Any]], name: str) -> Any:
    """The figure "kind.ref" in a sheet's context, as its limits and calculations read it
    (None when there is none)."""
    kind, _, ref = name.partition(".")
    value = (context.get(kind) or {}).get(ref)
    if kind == "profile" and isinstance(value, Mapping):
        return value.get("value")
    return value


def read_values(reads: list[str], context: Mapping[str, Mapping[str, Any]]) -> dict[str, Any]:
    return {name: read_value(context, name) for name in reads}


def drop_key(drop: Drop | None) -> str:
    """A drop's key in a sheet's ``judged_on`` ("" for a site check with no drop)."""
    return "" if drop is None else str(drop.pk)


def changed_since(
    judged: Mapping[str, Mapping[str, Any]],
    job: Job,
    anchor: Anchor | None,
    equipment: Equipment | None,
    served: list[Drop],
) -> tuple[str, Any, Any] | None:
    """The first figure a sheet was judged on that now reads otherwise, as (name, was, now);
    None when all still agree. Only the drops the subject still serves are read again (a drop
    planned since is the caller's other check)."""
    for drop in served or [None]:
        was = judged.get(drop_key(drop))
        if not was:
            continue
        now = drop_context(job, anchor, equipment, drop)
        for name, value in was.items():
            current = read_value(now, name)
            if not same_figure(current, value):
                return name, value, current
    return None

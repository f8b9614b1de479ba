"""Reads over checklists and sheets that own their joins."""

from typing import Any

from django.db.models import Exists, OuterRef, Q, QuerySet

from checklists.models import Checklist, ChecklistVersion, CheckSheet, ItemEntry
from compliance.models import Job


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
    """The newest sheet for each requirement key (checklist key @ subject) of a job; their
    versions without items or notes (each sheet's row decoded its version's items again, a
    twentieth of a sync batch)."""
    latest: dict[str, CheckSheet] = {}
    for sheet in (
        CheckSheet.objects.filter(job=job)
        .select_related("version__checklist")
        .defer("version__items", "version__notes")
        .order_by("id")
    ):
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

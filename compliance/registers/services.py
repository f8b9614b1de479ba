"""Every change to a register (sites, anchors, certifications, equipment, access grants), each
in one transaction with its audit entry; these services are the only writers of those rows."""

import datetime as dt
from dataclasses import dataclass
from typing import IO, Any

from django.core.exceptions import NON_FIELD_ERRORS, ValidationError
from django.db import IntegrityError, models, transaction
from django.utils import timezone

from compliance.errors import InvalidTransition, NotPermitted, require_writer
from compliance.jobs.holds import (
    hold_for_ended_grant,
    jobs_at_site,
    jobs_using,
    jobs_with_kit,
    reread_readiness,
)
from compliance.models import (
    Anchor,
    AnchorCertification,
    Equipment,
    Organisation,
    RegisterChange,
    Site,
    SiteGrant,
    SiteGrantEnd,
    User,
)
from compliance.registers.documents import check_document
from compliance.registers.visibility import grantable_contractors, owns_site


def record_certification(
    *, anchor: Anchor, by: User, document: IO[bytes] | None = None, **fields: Any
) -> AnchorCertification:
    """Add a certification; only the building's own organisation certifies its anchors. The
    certificate's file, if given, is checked (a PDF, PNG or JPEG by its bytes) and kept under
    its SHA-256; a row refused after the file was stored takes the file with it. The open jobs
    hung from the anchor have their readiness read again (a rating below the profile's minimum
    takes a cleared job back to planned; a valid one may clear it)."""
    require_writer(by)
    if not by.can_keep_anchor_log:
        raise NotPermitted(
            "Only a supervisor, an admin or a property manager records anchor certifications."
        )
    if not owns_site(by.organisation_id, anchor.site):
        raise NotPermitted(
            "Only the building's owner certifies its anchors; "
            "record your own pre-use checks on a sheet."
        )
    checked = check_document(document) if document is not None else None
    with transaction.atomic():
        cert = AnchorCertification(anchor=anchor, recorded_by=by, **fields)
        cert.full_clean()
        jobs = jobs_using(anchor)  # locked before the row, as the log book's changes lock them
        if checked is None:
            cert.save()
        else:
            cert.document.save(checked.name, checked.content, save=False)
            cert.document_sha256 = checked.sha256
            saved = False
            try:
                cert.save()
                saved = True
            finally:
                if not saved:  # whatever stopped the row, the file does not stay without it
                    cert.document.storage.delete(cert.document.name)
        reread_readiness(jobs=jobs, by=by)
    return cert


UNKNOWN_CONTRACTOR = "Unknown contractor organisation."


def give_grant(
    *, site: Site, contractor: Organisation, starts_on: dt.date, ends_on: dt.date, by: User
) -> SiteGrant:
    """Let a contractor organisation work at the owner's site for a period.

    The grant row is its own audit entry (who granted it and when) and is never edited. Any
    organisation that is not a contractor, the owner itself included, is refused in the same
    words as an id that does not exist, so the answer names no other organisation.
    """
    require_writer(by)
    if not owns_site(by.organisation_id, site):
        raise NotPermitted("Only the site's owner manages access.")
    if not by.can_keep_anchor_log:
        raise NotPermitted("Only a property manager, supervisor or admin grants access.")
    if not grantable_contractors(site).filter(pk=contractor.pk).exists():
        raise ValidationError({"contractor": UNKNOWN_CONTRACTOR})
    with transaction.atomic():
        grant = SiteGrant(
            site=site, contractor=contractor, starts_on=starts_on, ends_on=ends_on, granted_by=by
        )
        grant.full_clean()
        grant.save()
        # A job held or kept back for want of access may go on (holds "no_grant" clear).
        reread_readiness(
            jobs=jobs_at_site(organisation_id=contractor.pk, site_id=site.pk),
            by=by,
            why="The building's owner granted access to the site.",
        )
    return grant


@dataclass(frozen=True)
class GrantEnded:
    """A grant's end, and how many of the contractor's jobs at work at the site it stopped."""

    end: SiteGrantEnd
    work_stopped: int


def end_grant(*, grant: SiteGrant, by: User, reason: str = "") -> GrantEnded:
    """End a grant now: the contractor loses the site, its anchors and its log book at once.

    Its jobs there no longer start (``no_grant_for_day``), and a robot of its at work there
    stops (a hold the owner's next grant for the day clears); the grant keeps its dates, and
    the end row records who ended it, when and why.
    """
    require_writer(by)
    if not owns_site(by.organisation_id, grant.site):
        raise NotPermitted("Only the site's owner manages access.")
    if not by.can_keep_anchor_log:
        raise NotPermitted("Only a property manager, supervisor or admin ends access.")
    with transaction.atomic():
        grant = SiteGrant.objects.select_for_update().get(pk=grant.pk)
        if SiteGrantEnd.objects.filter(grant=grant).exists():
            raise InvalidTransition("This grant has already been ended.")
        end = SiteGrantEnd(grant=grant, ended_by=by, reason=reason)
        end.full_clean()
        end.save()
        stopped = hold_for_ended_grant(
            jobs=jobs_at_site(organisation_id=grant.contractor_id, site_id=grant.site_id), by=by
        )
    return GrantEnded(end=end, work_stopped=stopped)


def require_register_keeper(user: User) -> None:
    require_writer(user)
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


UNIQUE_CODES = ("unique", "unique_together")


def clean_register_row(row: models.Model, *, unique: dict[str, str], **checks: Any) -> None:
    """full_clean, with a uniqueness the model states named by its field: full_clean names a
    composite unique constraint under __all__. Only the uniqueness is renamed; a check
    constraint's error stays where it is, and is not taken for a name in use."""
    try:
        row.full_clean(**checks)
    except ValidationError as exc:
        ((field, words),) = unique.items()
        errors = dict(exc.error_dict)
        shared = errors.pop(NON_FIELD_ERRORS, [])
        if any(e.code in UNIQUE_CODES for e in shared):
            errors.setdefault(field, []).append(ValidationError(words, code="unique"))
        rest = [e for e in shared if e.code not in UNIQUE_CODES]
        if rest:
            errors[NON_FIELD_ERRORS] = rest
        raise ValidationError(errors) from None


def save_new_register_row(row: models.Model, *, unique: dict[str, str]) -> None:
    """Validate and insert; a uniqueness the model states is the caller's error, named by
    field, whether full_clean sees it first or the database does (two at once)."""
    clean_register_row(row, unique=unique)
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
        save_new_register_row(site, unique={"name": DUPLICATE_SITE})
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
        save_new_register_row(anchor, unique={"label": DUPLICATE_ANCHOR})
        audit_register_change(subject="anchor", row=anchor, action="created", by=by)
    return anchor


def create_equipment(*, by: User, **fields: Any) -> Equipment:
    """A robot, tether, safety line or hose in the organisation's register."""
    require_register_keeper(by)
    with transaction.atomic():
        item = Equipment(organisation_id=by.organisation_id, **fields)
        save_new_register_row(item, unique={"label": DUPLICATE_EQUIPMENT})
        audit_register_change(subject="equipment", row=item, action="created", by=by)
    return item


EQUIPMENT_CHANGEABLE = ("label", "serial", "ratings", "made_on", "next_inspection_due")


READINESS_FIELDS = {"ratings", "in_service", "next_inspection_due", "made_on"}
"""The register fields a job's readiness reads: changing one reads each open job's again."""


RETURN_NEEDS_REASON = (
    "Say why it is fit to return to service: what was repaired or replaced, and who inspected it."
)


def update_equipment(*, item: Equipment, by: User, reason: str = "", **fields: Any) -> Equipment:
    """Change a register entry: its label, serial, ratings, dates, or whether it is in service.

    The kind never changes (its ratings would mean something else); the audit entry keeps
    each changed field before and after. Taking equipment out of service needs a reason, and
    so does returning it: a check made before its return no longer counts.
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
        returning = fields.get("in_service") is True and not item.in_service
        if returning and not reason.strip():
            raise ValidationError({"reason": [RETURN_NEEDS_REASON]})
        for name, value in fields.items():
            setattr(item, name, value)
        saved = sorted(changes)
        if returning:
            # The checks made before it came back were of the kit as it was then.
            item.returned_at = timezone.now()
            saved.append("returned_at")
        clean_register_row(item, unique={"label": DUPLICATE_EQUIPMENT}, validate_unique=False)
        try:
            with transaction.atomic():
                item.save(update_fields=saved)
        except IntegrityError:
            raise ValidationError({"label": [DUPLICATE_EQUIPMENT]}) from None
        if "in_service" in changes:
            action = "returned to service" if item.in_service else "taken out of service"
        else:
            action = "updated"
        if reason.strip():
            changes["reason"] = reason.strip()
        audit_register_change(subject="equipment", row=item, action=action, by=by, changes=changes)
        if changes.keys() & READINESS_FIELDS:
            reread_readiness(jobs=jobs_with_kit(item), by=by)
    return item

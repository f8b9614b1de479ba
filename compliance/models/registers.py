"""The registers: sites, access grants, anchors and their certifications, equipment, and the audit
of register changes."""

import datetime as dt
from typing import Any

from django.core.exceptions import ValidationError
from django.db import models
from django.db.models import Q
from django.utils import timezone

from compliance.append_only import AppendOnlyModel
from compliance.engineering.site_plan import distance_outside
from compliance.models.people import Organisation, User
from compliance.models.profiles import JurisdictionProfile
from compliance.registers.bounds import (
    ANCHOR_BEYOND_OUTLINE_M,
    ANCHOR_FROM_ORIGIN_M,
    MAX_SITE_HEIGHT_M,
    STOREYS,
)
from compliance.registers.ratings import EQUIPMENT_KINDS, validate_ratings


class Site(models.Model):
    """A building; it belongs to its owner (or to the contractor that registered it)."""

    organisation = models.ForeignKey(Organisation, on_delete=models.PROTECT, related_name="sites")
    name = models.CharField(max_length=200)
    address = models.CharField(max_length=300, blank=True)
    height_m = models.FloatField(help_text="Roof height above ground, m.")
    storeys = models.PositiveIntegerField(null=True, blank=True)
    profile = models.ForeignKey(JurisdictionProfile, on_delete=models.PROTECT, related_name="+")
    terrain = models.CharField(
        max_length=3,
        choices=[
            ("0", "0 sea"),
            ("I", "I open flat"),
            ("II", "II low vegetation"),
            ("III", "III suburban"),
            ("IV", "IV urban"),
        ],
        default="IV",
        help_text="Terrain category around the building (EN 1991-1-4 Table 4.1).",
    )
    roof_outline = models.JSONField(default=list, blank=True, help_text="[[x_m, y_m], ...]")

    class Meta:
        constraints = [
            models.UniqueConstraint(fields=["organisation", "name"], name="site_name_unique"),
            models.CheckConstraint(condition=Q(height_m__gt=0), name="site_height_positive"),
        ]

    def __str__(self) -> str:
        return self.name

    def clean(self) -> None:
        errors: dict[str, str] = {}
        if self.height_m is not None and not 0 < self.height_m <= MAX_SITE_HEIGHT_M:
            errors["height_m"] = f"A roof height above 0 and at most {MAX_SITE_HEIGHT_M:g} m."
        fewest, most = STOREYS
        if self.storeys is not None and not fewest <= self.storeys <= most:
            errors["storeys"] = f"Between {fewest} and {most} storeys."
        if errors:
            raise ValidationError(errors)


class SiteGrant(AppendOnlyModel):
    """The owner lets a contractor work at the site, and see its anchors and log, for a period."""

    site = models.ForeignKey(Site, on_delete=models.PROTECT, related_name="grants")
    contractor = models.ForeignKey(
        Organisation, on_delete=models.PROTECT, related_name="site_grants"
    )
    starts_on = models.DateField()
    ends_on = models.DateField()
    granted_by = models.ForeignKey("User", on_delete=models.PROTECT, related_name="+")
    granted_at = models.DateTimeField(auto_now_add=True)

    class Meta:
        constraints = [
            models.CheckConstraint(
                condition=Q(ends_on__gte=models.F("starts_on")), name="grant_ends_after_start"
            ),
        ]

    def covers(self, day: dt.date) -> bool:
        """Within its dates and not ended."""
        return not hasattr(self, "end") and self.starts_on <= day <= self.ends_on


class SiteGrantEnd(AppendOnlyModel):
    """The owner ends a grant: from then on it lets the contractor do nothing at the site.

    The grant keeps its dates for the record; this row says who ended it, when and why.
    """

    grant = models.OneToOneField(SiteGrant, on_delete=models.PROTECT, related_name="end")
    ended_by = models.ForeignKey("User", on_delete=models.PROTECT, related_name="+")
    ended_at = models.DateTimeField(auto_now_add=True)
    reason = models.TextField(blank=True)


class Anchor(models.Model):
    site = models.ForeignKey(Site, on_delete=models.PROTECT, related_name="anchors")
    label = models.CharField(max_length=40)
    x_m = models.FloatField(default=0)
    y_m = models.FloatField(default=0)
    description = models.CharField(max_length=200, blank=True)

    class Meta:
        constraints = [
            models.UniqueConstraint(fields=["site", "label"], name="anchor_label_unique"),
        ]
        ordering = ["site_id", "label"]

    def __str__(self) -> str:
        return f"{self.site.name} {self.label}"

    def clean(self) -> None:
        """On the roof: within the outline's bounding box widened by a parapet's reach, or, on a
        site without an outline, within a sane distance of the plan's origin."""
        if not self.site_id:
            return
        outline = self.site.roof_outline or []
        reach = ANCHOR_BEYOND_OUTLINE_M
        errors: dict[str, str] = {}
        for axis, field in enumerate(("x_m", "y_m")):
            value = getattr(self, field)
            if value is None:
                continue
            if outline:
                low = min(float(corner[axis]) for corner in outline)
                high = max(float(corner[axis]) for corner in outline)
                if not low - reach <= value <= high + reach:
                    errors[field] = (
                        f"Off the roof: the outline runs from {low:g} to {high:g} m in "
                        f"{field[0]}; an anchor lies on it or at most {reach:g} m beyond its edge."
                    )
            elif not -ANCHOR_FROM_ORIGIN_M <= value <= ANCHOR_FROM_ORIGIN_M:
                errors[field] = (
                    "The site has no roof outline: a coordinate is at most "
                    f"{ANCHOR_FROM_ORIGIN_M:g} m from its origin."
                )
        if outline and not errors and self.x_m is not None and self.y_m is not None:
            off = distance_outside(outline, (self.x_m, self.y_m))
            if off is not None and off > reach:
                words = (
                    f"Off the roof: {f'{off:.1f}'.rstrip('0').rstrip('.')} m outside the roof"
                    " outline; an anchor lies on the"
                    f" roof or at most {reach:g} m beyond its edge."
                )
                errors = {"x_m": words, "y_m": words}
        if errors:
            raise ValidationError(errors)

    def current_certification(self) -> "AnchorCertification | None":
        """The newest certification whose day has come; uses the prefetched list when there is
        one. (A certification cannot be dated after the day it is recorded; one recorded so
        before that was checked must not hide the one in force.)"""
        today = timezone.localdate()
        certs = [c for c in self.certifications.all() if c.certified_on <= today]
        return max(certs, key=lambda c: (c.certified_on, c.pk)) if certs else None


class AnchorCertification(AppendOnlyModel):
    """One certification of an anchor by a competent or qualified person (append-only)."""

    anchor = models.ForeignKey(Anchor, on_delete=models.PROTECT, related_name="certifications")
    certifier = models.CharField(max_length=200)
    certifier_company = models.CharField(max_length=200, blank=True)
    rated_capacity_kn = models.FloatField()
    certified_on = models.DateField()
    valid_until = models.DateField()
    document = models.FileField(upload_to="certificates/", blank=True)
    # The file's SHA-256 as received, so anyone holding a copy can check it is the one kept.
    document_sha256 = models.CharField(max_length=64, blank=True)
    recorded_by = models.ForeignKey(
        User, null=True, blank=True, on_delete=models.PROTECT, related_name="+"
    )
    recorded_at = models.DateTimeField(auto_now_add=True)

    class Meta:
        constraints = [
            models.CheckConstraint(
                condition=Q(rated_capacity_kn__gt=0), name="certification_capacity_positive"
            ),
            models.CheckConstraint(
                condition=Q(valid_until__gt=models.F("certified_on")),
                name="certification_valid_after_certified",
            ),
        ]

    def __str__(self) -> str:
        return (
            f"Anchor {self.anchor.label} certified {self.certified_on:%Y-%m-%d}, "
            f"valid until {self.valid_until:%Y-%m-%d}"
        )

    def clean(self) -> None:
        if self.certified_on is not None and self.certified_on > timezone.localdate():
            raise ValidationError(
                {"certified_on": "A certification is recorded on or after the day it was made."}
            )

    def is_valid_on(self, day: dt.date) -> bool:
        return self.certified_on <= day <= self.valid_until


class Equipment(models.Model):
    organisation = models.ForeignKey(
        Organisation, on_delete=models.PROTECT, related_name="equipment"
    )
    kind = models.CharField(
        max_length=20, choices=[(k, k.replace("_", " ")) for k in EQUIPMENT_KINDS]
    )
    label = models.CharField(max_length=80)
    serial = models.CharField(max_length=80, blank=True)
    ratings = models.JSONField(default=dict)
    made_on = models.DateField(null=True, blank=True)
    next_inspection_due = models.DateField(null=True, blank=True)
    in_service = models.BooleanField(default=True)
    returned_at = models.DateTimeField(
        null=True,
        blank=True,
        help_text="When it was last returned to service: a check made before no longer counts.",
    )

    class Meta:
        constraints = [
            models.UniqueConstraint(
                fields=["organisation", "label"], name="equipment_label_unique"
            ),
        ]
        ordering = ["kind", "label"]
        verbose_name_plural = "equipment"

    def __str__(self) -> str:
        return f"{self.label} ({self.kind})"

    def clean(self) -> None:
        errors: dict[str, Any] = {}
        if self.made_on is not None and self.made_on > timezone.localdate():
            errors["made_on"] = "A manufacturing date cannot be after today."
        try:
            validate_ratings(self.kind, self.ratings)
        except ValidationError as exc:
            errors = exc.update_error_dict(errors)
        if errors:
            raise ValidationError(errors)


class RegisterChange(AppendOnlyModel):
    """The audit entry of a register change: a site, an anchor, equipment or a checklist made
    or changed, by whom and when, with each changed field's value before and after.

    Registers themselves stay editable (an inspection date moves, a robot goes out of service),
    so what they said on a given day is read here, and in the sealed records that snapshot it.
    """

    SUBJECTS = ("site", "anchor", "equipment", "checklist")

    organisation = models.ForeignKey(Organisation, on_delete=models.PROTECT, related_name="+")
    subject = models.CharField(max_length=20, choices=[(s, s) for s in SUBJECTS])
    object_id = models.PositiveBigIntegerField()
    action = models.CharField(max_length=40)
    changes = models.JSONField(default=dict, blank=True)
    by = models.ForeignKey("User", on_delete=models.PROTECT, related_name="+")
    at = models.DateTimeField(auto_now_add=True)

    class Meta:
        indexes = [models.Index(fields=["subject", "object_id"], name="register_change_subject")]
        ordering = ["at", "pk"]

    def __str__(self) -> str:
        return f"{self.subject} {self.object_id} {self.action}"

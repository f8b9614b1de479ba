"""Checklists with immutable published versions, and the check sheets filled against them."""

import datetime as dt
import uuid
from typing import Any

from django.db import models
from django.db.models import Q

from checklists.schema import SUBJECT_KINDS
from compliance import clock
from compliance.append_only import AppendOnlyModel, AppendOnlyViolation
from compliance.models import Anchor, Equipment, Job, Organisation, User


class Checklist(models.Model):
    """A named pre-start check; organisation is null for the default checklists."""

    key = models.SlugField(max_length=60)
    title = models.CharField(max_length=200)
    applies_to = models.CharField(max_length=20, choices=[(k, k) for k in SUBJECT_KINDS])
    description = models.TextField(blank=True)
    organisation = models.ForeignKey(
        Organisation, null=True, blank=True, on_delete=models.PROTECT, related_name="checklists"
    )

    class Meta:
        constraints = [
            models.UniqueConstraint(
                fields=["key"], condition=Q(organisation=None), name="checklist_default_key_unique"
            ),
            models.UniqueConstraint(
                fields=["organisation", "key"], name="checklist_org_key_unique"
            ),
        ]
        ordering = ["key"]

    def __str__(self) -> str:
        return self.title


class ChecklistVersion(models.Model):
    """A version of a checklist; once published its content never changes."""

    class Status(models.TextChoices):
        DRAFT = "draft", "Draft"
        PUBLISHED = "published", "Published"

    checklist = models.ForeignKey(Checklist, on_delete=models.PROTECT, related_name="versions")
    number = models.PositiveIntegerField()
    status = models.CharField(max_length=10, choices=Status.choices, default=Status.DRAFT)
    items = models.JSONField()
    notes = models.TextField(blank=True)
    content_hash = models.CharField(max_length=64, blank=True)
    created_by = models.ForeignKey(
        User, null=True, blank=True, on_delete=models.PROTECT, related_name="+"
    )
    created_at = models.DateTimeField(auto_now_add=True)
    published_by = models.ForeignKey(
        User, null=True, blank=True, on_delete=models.PROTECT, related_name="+"
    )
    published_at = models.DateTimeField(null=True, blank=True)

    class Meta:
        constraints = [
            models.UniqueConstraint(fields=["checklist", "number"], name="version_number_unique"),
            models.CheckConstraint(
                condition=Q(status="draft") | (Q(published_at__isnull=False) & ~Q(content_hash="")),
                name="published_version_sealed",
            ),
        ]
        ordering = ["checklist_id", "number"]

    def __str__(self) -> str:
        return f"{self.checklist.key} v{self.number}"

    def save(self, *args: Any, **kwargs: Any) -> None:
        if self.pk is not None:
            stored = type(self).objects.filter(pk=self.pk).values_list("status", flat=True).first()
            if stored == self.Status.PUBLISHED:
                raise AppendOnlyViolation(
                    f"{self} is published and cannot be changed; publish a new version instead."
                )
        super().save(*args, **kwargs)

    def delete(self, *args: Any, **kwargs: Any) -> tuple[int, dict[str, int]]:
        if self.status == self.Status.PUBLISHED:
            raise AppendOnlyViolation(f"{self} is published and cannot be deleted.")
        return super().delete(*args, **kwargs)

    def hashed_content(self) -> dict[str, Any]:
        return {
            "checklist": self.checklist.key,
            "applies_to": self.checklist.applies_to,
            "number": self.number,
            "items": self.items,
        }


class Verdict(models.TextChoices):
    PASS = "pass", "Pass"
    FAIL = "fail", "Fail"
    NOT_APPLICABLE = "na", "Not applicable"
    RECORDED = "recorded", "Recorded"


class CheckSheet(AppendOnlyModel):
    """One filled checklist for one subject of a job, pinned to the version it was filled in."""

    client_uuid = models.UUIDField(unique=True, default=uuid.uuid4)
    job = models.ForeignKey(Job, on_delete=models.PROTECT, related_name="sheets")
    version = models.ForeignKey(ChecklistVersion, on_delete=models.PROTECT, related_name="sheets")
    version_hash = models.CharField(max_length=64)
    subject_kind = models.CharField(max_length=20, choices=[(k, k) for k in SUBJECT_KINDS])
    anchor = models.ForeignKey(
        Anchor, null=True, blank=True, on_delete=models.PROTECT, related_name="sheets"
    )
    equipment = models.ForeignKey(
        Equipment, null=True, blank=True, on_delete=models.PROTECT, related_name="sheets"
    )
    filled_by = models.ForeignKey(User, on_delete=models.PROTECT, related_name="sheets")
    device_time = models.DateTimeField(null=True, blank=True)
    # 64 bits: a phone whose clock reset to 1900 is 4 billion seconds off, and keeps its sheet.
    phone_clock_offset_s = models.BigIntegerField(
        null=True, blank=True, help_text="Phone clock minus server clock when the batch was sent."
    )
    received_at = models.DateTimeField(auto_now_add=True)
    made_at_receipt = models.BooleanField(
        default=False,
        help_text="A failure whose phone's time put it on another day than its job's: kept all"
        " the same, and counted as made when it was received (its phone's time as sent).",
    )
    verdict = models.CharField(max_length=10, choices=Verdict.choices)
    blocking_failures = models.PositiveIntegerField(default=0)
    remarks = models.TextField(blank=True)
    judged_on = models.JSONField(default=dict, blank=True)
    """What the items read from the register, the profile and the plan when the sheet was
    judged, by drop id ("" with no drop): {"12": {"safety_line.mbs_kn": 30.0, ...}}. A figure
    that reads otherwise since leaves the sheet's verdict behind (see changed_since)."""

    class Meta:
        constraints = [
            models.CheckConstraint(
                condition=(Q(subject_kind="site") & Q(anchor=None) & Q(equipment=None))
                | (Q(subject_kind="anchor") & Q(anchor__isnull=False) & Q(equipment=None))
                | (
                    ~Q(subject_kind__in=["site", "anchor"])
                    & Q(anchor=None)
                    & Q(equipment__isnull=False)
                ),
                name="sheet_subject_matches_kind",
            ),
        ]
        indexes = [models.Index(fields=["job", "version", "anchor", "equipment"])]
        ordering = ["received_at", "id"]

    @property
    def subject_ref(self) -> str:
        if self.subject_kind == "anchor":
            return f"anchor:{self.anchor_id}"
        if self.subject_kind == "site":
            return "site"
        return f"equipment:{self.equipment_id}"

    @property
    def requirement(self) -> str:
        return f"{self.version.checklist.key}@{self.subject_ref}"

    @property
    def made_at(self) -> dt.datetime:
        """When the sheet was filled, as near as the server can tell: the phone's time set
        right by how far its clock was off when it sent the batch, and never after it was
        received; without both, when it was received. A sheet filled at 05:02 on a phone that
        was offline is older than one filled at 07:02 and sent at once. A failure whose time
        is not believed (``made_at_receipt``) is stored without its batch's offset, so it is
        taken as made when it was received by every reader of the row."""
        return clock.time_made(self.device_time, self.phone_clock_offset_s, self.received_at)

    @property
    def order_made(self) -> tuple[dt.datetime, int]:
        """Sorts sheets by when they were made, then as received."""
        return (self.made_at, self.pk)


class ItemEntry(AppendOnlyModel):
    """One item's entry on a sheet and the server's verdict for it."""

    sheet = models.ForeignKey(CheckSheet, on_delete=models.PROTECT, related_name="entries")
    item_key = models.CharField(max_length=80)
    kind = models.CharField(max_length=10)
    value = models.JSONField(null=True)
    unit = models.CharField(max_length=20, blank=True)
    verdict = models.CharField(max_length=10, choices=Verdict.choices)
    blocking = models.BooleanField()
    margin = models.FloatField(null=True)
    message = models.TextField(blank=True)
    working = models.JSONField(default=dict, help_text="Limits used and calculation steps.")

    class Meta:
        constraints = [
            models.UniqueConstraint(fields=["sheet", "item_key"], name="entry_key_unique"),
        ]
        ordering = ["sheet_id", "id"]


class Photo(AppendOnlyModel):
    """A photo taken on the roof, attached to one item of a sheet by the sheet's client uuid."""

    client_uuid = models.UUIDField(unique=True)
    organisation = models.ForeignKey(Organisation, on_delete=models.PROTECT, related_name="+")
    job = models.ForeignKey(Job, on_delete=models.PROTECT, related_name="photos")
    sheet_uuid = models.UUIDField(null=True, blank=True)
    item_key = models.CharField(max_length=80, blank=True)
    image = models.ImageField(upload_to="photos/%Y/%m/")
    sha256 = models.CharField(max_length=64)
    width = models.PositiveIntegerField()
    height = models.PositiveIntegerField()
    uploaded_by = models.ForeignKey(User, on_delete=models.PROTECT, related_name="+")
    uploaded_at = models.DateTimeField(auto_now_add=True)

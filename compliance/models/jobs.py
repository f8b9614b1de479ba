"""Jobs and their drops, transitions, holds and clearances, drop logs and the phone's sync receipts
(the safety records are append-only)."""

import uuid

from django.core.exceptions import ValidationError
from django.db import models
from django.db.models import Q

from compliance.append_only import AppendOnlyModel
from compliance.models.people import Organisation, User
from compliance.models.registers import Anchor, Equipment, Site


class JobState(models.TextChoices):
    PLANNED = "planned", "Planned"
    CLEARED = "cleared", "Cleared to start"
    WORKING = "working", "Working"
    HELD = "held", "Stop work (held)"
    CLOSED = "closed", "Closed"


OPEN_STATES = (JobState.PLANNED, JobState.CLEARED, JobState.WORKING, JobState.HELD)


class Job(models.Model):
    """One day's work at one site."""

    organisation = models.ForeignKey(Organisation, on_delete=models.PROTECT, related_name="jobs")
    site = models.ForeignKey(Site, on_delete=models.PROTECT, related_name="jobs")
    date = models.DateField()
    state = models.CharField(max_length=10, choices=JobState.choices, default=JobState.PLANNED)
    supervisor = models.ForeignKey(User, on_delete=models.PROTECT, related_name="supervised_jobs")
    crew = models.ManyToManyField(User, related_name="jobs", blank=True)
    notes = models.TextField(blank=True)
    created_at = models.DateTimeField(auto_now_add=True)

    class Meta:
        ordering = ["-date", "id"]
        indexes = [models.Index(fields=["organisation", "date"])]

    def __str__(self) -> str:
        return f"{self.site.name} {self.date:%Y-%m-%d}"


class Drop(models.Model):
    """A planned vertical strip of facade worked from one anchor pair."""

    job = models.ForeignKey(Job, on_delete=models.PROTECT, related_name="drops")
    label = models.CharField(max_length=40)
    robot = models.ForeignKey(Equipment, on_delete=models.PROTECT, related_name="+")
    anchor = models.ForeignKey(Anchor, on_delete=models.PROTECT, related_name="+")
    safety_anchor = models.ForeignKey(Anchor, on_delete=models.PROTECT, related_name="+")
    tether = models.ForeignKey(Equipment, on_delete=models.PROTECT, related_name="+")
    safety_line = models.ForeignKey(Equipment, on_delete=models.PROTECT, related_name="+")
    hose = models.ForeignKey(Equipment, on_delete=models.PROTECT, related_name="+")
    length_m = models.FloatField(help_text="Height of the strip worked, m.")
    added_at = models.DateTimeField(
        auto_now_add=True,
        null=True,
        help_text="When the drop was planned: a sheet of a subject it serves made before then"
        " was judged without it (empty for drops planned before this was kept).",
    )

    class Meta:
        constraints = [
            models.UniqueConstraint(fields=["job", "label"], name="drop_label_unique"),
            models.CheckConstraint(condition=Q(length_m__gt=0), name="drop_length_positive"),
            models.CheckConstraint(
                condition=~Q(anchor=models.F("safety_anchor")),
                name="drop_safety_anchor_independent",
            ),
        ]
        ordering = ["job_id", "label"]

    def __str__(self) -> str:
        return self.label

    def clean(self) -> None:
        errors: dict[str, str] = {}
        expected = {
            "robot": "robot",
            "tether": "tether",
            "safety_line": "safety_line",
            "hose": "hose",
        }
        for field, kind in expected.items():
            item = getattr(self, field, None)
            if item is not None and item.kind != kind:
                errors[field] = f"Must be a {kind.replace('_', ' ')}, not a {item.kind}."
            if (
                item is not None
                and self.job_id
                and item.organisation_id != self.job.organisation_id
            ):
                errors[field] = "Unknown equipment."
        for field in ("anchor", "safety_anchor"):
            anchor = getattr(self, field, None)
            if anchor is not None and self.job_id and anchor.site_id != self.job.site_id:
                errors[field] = "This anchor is not on the job's site."
        if self.anchor_id and self.anchor_id == self.safety_anchor_id:
            errors["safety_anchor"] = "The safety line needs an anchor independent of the tether's."
        if self.length_m is not None and not self.length_m > 0:
            errors["length_m"] = "Must be greater than zero."
        elif self.length_m is not None and self.job_id and self.length_m > self.job.site.height_m:
            errors["length_m"] = (
                f"At most the site's height, {self.job.site.height_m:g} m: "
                "a drop cannot be longer than the building is tall."
            )
        if errors:
            raise ValidationError(errors)


class JobTransition(AppendOnlyModel):
    """Who moved a job from which state to which, when and why."""

    job = models.ForeignKey(Job, on_delete=models.PROTECT, related_name="transitions")
    from_state = models.CharField(max_length=10, choices=JobState.choices)
    to_state = models.CharField(max_length=10, choices=JobState.choices)
    by = models.ForeignKey(User, null=True, blank=True, on_delete=models.PROTECT, related_name="+")
    at = models.DateTimeField(auto_now_add=True)
    reason = models.TextField()

    class Meta:
        ordering = ["at", "id"]


class Hold(AppendOnlyModel):
    """Stop work on a job, opened by a failed blocking item; cleared by a HoldClearance."""

    job = models.ForeignKey(Job, on_delete=models.PROTECT, related_name="holds")
    requirement = models.CharField(max_length=200, help_text="checklist key @ subject")
    item_key = models.CharField(max_length=80)
    reason = models.TextField()
    sheet = models.ForeignKey(
        "checklists.CheckSheet",
        null=True,
        blank=True,
        on_delete=models.PROTECT,
        related_name="holds_opened",
    )
    log_entry = models.ForeignKey(
        "compliance.AnchorLogEntry",
        null=True,
        blank=True,
        on_delete=models.PROTECT,
        related_name="holds_opened",
    )
    opened_at = models.DateTimeField(auto_now_add=True)

    class Meta:
        ordering = ["opened_at", "id"]


class HoldClearance(AppendOnlyModel):
    """A hold cleared by a new passing sheet for the same requirement."""

    hold = models.OneToOneField(Hold, on_delete=models.PROTECT, related_name="clearance")
    sheet = models.ForeignKey(
        "checklists.CheckSheet",
        null=True,
        blank=True,
        on_delete=models.PROTECT,
        related_name="holds_cleared",
    )
    log_entry = models.ForeignKey(
        "compliance.AnchorLogEntry",
        null=True,
        blank=True,
        on_delete=models.PROTECT,
        related_name="holds_cleared",
    )
    by = models.ForeignKey(User, null=True, blank=True, on_delete=models.PROTECT, related_name="+")
    at = models.DateTimeField(auto_now_add=True)


class DropLog(AppendOnlyModel):
    """A drop worked, logged from the roof."""

    client_uuid = models.UUIDField(unique=True, default=uuid.uuid4)
    drop = models.ForeignKey(Drop, on_delete=models.PROTECT, related_name="logs")
    by = models.ForeignKey(User, on_delete=models.PROTECT, related_name="+")
    device_time = models.DateTimeField(null=True, blank=True)
    received_at = models.DateTimeField(auto_now_add=True)
    note = models.CharField(max_length=500, blank=True)


class SyncReceipt(AppendOnlyModel):
    """The answer given to one client record, kept so a retried batch gets the same answer."""

    client_uuid = models.UUIDField(unique=True)
    kind = models.CharField(max_length=20)
    user = models.ForeignKey(User, on_delete=models.PROTECT, related_name="+")
    status = models.CharField(max_length=10)  # applied / rejected
    result = models.JSONField()
    device_time = models.DateTimeField(null=True, blank=True)
    phone_clock_offset_s = models.BigIntegerField(null=True, blank=True)  # see CheckSheet
    received_at = models.DateTimeField(auto_now_add=True)
    content_sha256 = models.CharField(
        max_length=64,
        blank=True,
        help_text="SHA-256 of the record's type and data as RFC 8785 JSON: a record sent again"
        " under its client uuid must match it (empty on receipts kept before it was).",
    )

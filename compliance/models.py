"""Core registers: organisations, people, sites, anchors, equipment, jobs, drops, holds.

Safety records (certifications, transitions, holds, clearances, drop logs) are append-only.
"""

import datetime as dt
import uuid

from django.contrib.auth.models import AbstractUser
from django.core.exceptions import ValidationError
from django.db import models
from django.db.models import Q

from compliance.append_only import AppendOnlyModel
from compliance.ratings import EQUIPMENT_KINDS, validate_ratings


class Organisation(models.Model):
    class Kind(models.TextChoices):
        CONTRACTOR = "contractor", "Facade contractor"
        OWNER = "owner", "Building owner"

    name = models.CharField(max_length=200, unique=True)
    kind = models.CharField(max_length=20, choices=Kind.choices, default=Kind.CONTRACTOR)
    created_at = models.DateTimeField(auto_now_add=True)

    def __str__(self) -> str:
        return self.name


class Role(models.TextChoices):
    OPERATOR = "operator", "Operator"
    SUPERVISOR = "supervisor", "Supervisor (competent person)"
    AUDITOR = "auditor", "Auditor (read only)"
    ADMIN = "admin", "Organisation admin"
    PROPERTY_MANAGER = "property_manager", "Property manager (building owner)"


class User(AbstractUser):
    """A person who signs in; belongs to one organisation with one role."""

    organisation = models.ForeignKey(
        Organisation, null=True, blank=True, on_delete=models.PROTECT, related_name="people"
    )
    role = models.CharField(max_length=20, choices=Role.choices, default=Role.OPERATOR)

    @property
    def display_name(self) -> str:
        return self.get_full_name() or self.username

    @property
    def can_write(self) -> bool:
        return self.role != Role.AUDITOR

    @property
    def can_supervise(self) -> bool:
        return self.role in (Role.SUPERVISOR, Role.ADMIN)

    @property
    def can_keep_anchor_log(self) -> bool:
        """Supervisors, admins and property managers sign anchor log entries."""
        return self.role in (Role.SUPERVISOR, Role.ADMIN, Role.PROPERTY_MANAGER)


class JurisdictionProfile(models.Model):
    """Thresholds and cautions of one jurisdiction, loaded from fixtures/profiles."""

    key = models.SlugField(max_length=50, unique=True)
    name = models.CharField(max_length=200)
    thresholds = models.JSONField(help_text="{key: {value, unit, source}}")
    cautions = models.TextField()
    content_hash = models.CharField(max_length=64)

    def __str__(self) -> str:
        return self.name

    def threshold(self, key: str) -> float:
        return float(self.thresholds[key]["value"])


class ProfileRevision(AppendOnlyModel):
    """One published content of a profile, kept for ever: loading new values adds a revision
    and never edits an old one (the profile row points at the newest content)."""

    profile = models.ForeignKey(
        JurisdictionProfile, on_delete=models.PROTECT, related_name="revisions"
    )
    number = models.PositiveIntegerField()
    name = models.CharField(max_length=200)
    thresholds = models.JSONField()
    cautions = models.TextField()
    content_hash = models.CharField(max_length=64)
    published_at = models.DateTimeField(auto_now_add=True)

    class Meta:
        ordering = ["profile_id", "number"]
        constraints = [
            models.UniqueConstraint(fields=["profile", "number"], name="profile_revision_number"),
            models.UniqueConstraint(
                fields=["profile", "content_hash"], name="profile_revision_content"
            ),
        ]

    def __str__(self) -> str:
        return f"{self.profile.key} revision {self.number}"


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


class SiteAccess(AppendOnlyModel):
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


class SiteAccessEnd(AppendOnlyModel):
    """The owner ends a grant: from then on it lets the contractor do nothing at the site.

    The grant keeps its dates for the record; this row says who ended it, when and why.
    """

    grant = models.OneToOneField(SiteAccess, on_delete=models.PROTECT, related_name="end")
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

    def current_certification(self) -> "AnchorCertification | None":
        """The newest certification; uses the prefetched list when there is one."""
        certs = list(self.certifications.all())
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
        validate_ratings(self.kind, self.ratings)


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
    phone_clock_offset_s = models.IntegerField(null=True, blank=True)
    received_at = models.DateTimeField(auto_now_add=True)


class SigningCredential(models.Model):
    """An organisation's document-signing certificate and its key (encrypted at rest)."""

    organisation = models.ForeignKey(
        Organisation, on_delete=models.PROTECT, related_name="signing_credentials"
    )
    certificate_pem = models.TextField()
    encrypted_key_pem = models.TextField()
    fingerprint_sha256 = models.CharField(max_length=64, unique=True)
    subject = models.CharField(max_length=300)
    not_after = models.DateTimeField()
    self_signed = models.BooleanField(default=False)
    active = models.BooleanField(default=True)
    created_at = models.DateTimeField(auto_now_add=True)
    retired_at = models.DateTimeField(
        null=True,
        blank=True,
        help_text="When a newer key replaced this one; nothing signed after it is accepted.",
    )

    class Meta:
        ordering = ["-created_at", "-id"]

    def __str__(self) -> str:
        return self.subject


class DailyRecord(AppendOnlyModel):
    """The sealed, signed record of one job-day (or an addendum to one); never edited."""

    class Kind(models.TextChoices):
        RECORD = "record", "Daily record"
        ADDENDUM = "addendum", "Addendum"

    kind = models.CharField(max_length=10, choices=Kind.choices, default=Kind.RECORD)
    organisation = models.ForeignKey(Organisation, on_delete=models.PROTECT, related_name="+")
    site = models.ForeignKey(Site, on_delete=models.PROTECT, related_name="daily_records")
    job = models.ForeignKey(Job, on_delete=models.PROTECT, related_name="daily_records")
    amends = models.ForeignKey(
        "self", null=True, blank=True, on_delete=models.PROTECT, related_name="addenda"
    )
    sequence = models.PositiveIntegerField(
        help_text="Position in the organisation's chain at this site, from 1."
    )
    previous_seal = models.CharField(max_length=64, blank=True)
    canonical_json = models.TextField(help_text="RFC 8785 canonical JSON, exactly as sealed.")
    seal = models.CharField(max_length=64, unique=True, help_text="SHA-256 of canonical_json.")
    seal_signature = models.TextField(help_text="Base64 signature of the seal by the org key.")
    credential = models.ForeignKey(SigningCredential, on_delete=models.PROTECT, related_name="+")
    signer = models.ForeignKey(User, on_delete=models.PROTECT, related_name="+")
    signer_name = models.CharField(max_length=200)
    signer_role = models.CharField(max_length=40)
    meaning = models.CharField(max_length=200)
    signed_at = models.DateTimeField()
    client_uuid = models.UUIDField(
        null=True,
        blank=True,
        help_text="The id the phone or page gave the request, so a resent request adds nothing.",
    )

    class Meta:
        constraints = [
            models.UniqueConstraint(
                fields=["organisation", "site", "sequence"], name="record_sequence_unique"
            ),
            models.UniqueConstraint(
                fields=["organisation", "client_uuid"], name="record_client_uuid_unique"
            ),
            models.UniqueConstraint(
                fields=["job"], condition=Q(kind="record"), name="one_record_per_job"
            ),
            models.CheckConstraint(
                condition=Q(kind="record", amends=None) | Q(kind="addendum", amends__isnull=False),
                name="addendum_amends_a_record",
            ),
        ]
        ordering = ["site_id", "organisation_id", "sequence"]


class RecordChainHead(models.Model):
    """The signed head of one organisation's chain of daily records at one site.

    Re-signed at every append (and when the organisation's key is replaced), so deleting the
    last records of a chain, or rolling its head back, shows: the head names a sequence and a
    seal the chain no longer ends with, and only the organisation's current key can sign a new
    head. Its row is also the lock that serialises appends to the chain.
    """

    organisation = models.ForeignKey(Organisation, on_delete=models.PROTECT, related_name="+")
    site = models.ForeignKey(Site, on_delete=models.PROTECT, related_name="+")
    sequence = models.PositiveIntegerField(default=0)
    seal = models.CharField(max_length=64, blank=True)
    statement = models.TextField(blank=True, help_text="RFC 8785 JSON of what was signed.")
    signature = models.TextField(blank=True)
    credential = models.ForeignKey(
        SigningCredential, null=True, blank=True, on_delete=models.PROTECT, related_name="+"
    )

    class Meta:
        constraints = [
            models.UniqueConstraint(fields=["organisation", "site"], name="one_head_per_chain"),
        ]

    def __str__(self) -> str:
        return f"chain of organisation {self.organisation_id} at site {self.site_id}"


class RecordPdf(AppendOnlyModel):
    """The rendered, signed PDF of a daily record."""

    record = models.OneToOneField(DailyRecord, on_delete=models.PROTECT, related_name="pdf")
    file = models.FileField(upload_to="records/%Y/%m/")
    sha256 = models.CharField(max_length=64)
    size_bytes = models.PositiveIntegerField()
    created_at = models.DateTimeField(auto_now_add=True)


class Notice(AppendOnlyModel):
    """Something the background checks found for a supervisor to act on."""

    class Kind(models.TextChoices):
        UNSIGNED = "unsigned_record", "Daily record not signed"
        CERT_DUE = "certification_due", "Anchor certification falls due"
        INSPECTION_DUE = "inspection_due", "Equipment inspection falls due"

    organisation = models.ForeignKey(Organisation, on_delete=models.PROTECT, related_name="+")
    kind = models.CharField(max_length=20, choices=Kind.choices)
    subject = models.CharField(max_length=100, help_text="e.g. job:12, anchor:3")
    day = models.DateField(help_text="The day the check ran.")
    message = models.TextField()
    due_on = models.DateField(null=True, blank=True)
    created_at = models.DateTimeField(auto_now_add=True)

    class Meta:
        constraints = [
            models.UniqueConstraint(fields=["kind", "subject", "day"], name="notice_once_a_day"),
        ]


class NoticeEmail(AppendOnlyModel):
    """That a notice went out by e-mail, and to whom: one row per notice, so it is sent once.

    A row of its own because notices are append-only; the one-to-one key is the database's
    guarantee that two runs of the sending task never both send the same notice.
    """

    notice = models.OneToOneField(Notice, on_delete=models.PROTECT, related_name="email")
    sent_at = models.DateTimeField()
    recipients = models.JSONField(default=list, help_text="The addresses it went to.")

    def __str__(self) -> str:
        return f"notice {self.notice_id} e-mailed {self.sent_at:%Y-%m-%d %H:%M}"


class CalendarFeed(models.Model):
    """A person's secret calendar address of due dates; only the token's SHA-256 is kept."""

    user = models.ForeignKey(User, on_delete=models.CASCADE, related_name="calendar_feeds")
    token_sha256 = models.CharField(max_length=64, unique=True)
    created_at = models.DateTimeField(auto_now_add=True)
    revoked_at = models.DateTimeField(null=True, blank=True)

    class Meta:
        constraints = [
            models.UniqueConstraint(
                fields=["user"],
                condition=Q(revoked_at__isnull=True),
                name="one_live_calendar_feed",
            ),
        ]

    def __str__(self) -> str:
        state = "revoked" if self.revoked_at else "live"
        return f"calendar feed of {self.user_id} ({state})"


class AnchorLogEntry(AppendOnlyModel):
    """One entry of the building's anchor log book: signed by who made it, chained per site."""

    class Kind(models.TextChoices):
        PERIODIC_INSPECTION = "periodic_inspection", "Periodic inspection"
        LOAD_TEST = "load_test", "Load test"
        REPAIR = "repair", "Repair"
        MODIFICATION = "modification", "Modification"
        INSTALLATION = "installation", "Installation"
        REMOVED = "removed_from_service", "Removed from service"
        RETURNED = "returned_to_service", "Returned to service"
        PRE_USE = "pre_use_check", "Pre-use check (from a contractor's sheet)"

    class Result(models.TextChoices):
        PASS = "pass", "Pass"
        FAIL = "fail", "Fail"
        NONE = "none", "No result"

    site = models.ForeignKey(Site, on_delete=models.PROTECT, related_name="anchor_log")
    anchor = models.ForeignKey(Anchor, on_delete=models.PROTECT, related_name="log")
    kind = models.CharField(max_length=30, choices=Kind.choices)
    result = models.CharField(max_length=10, choices=Result.choices, default=Result.NONE)
    performed_on = models.DateField()
    performed_by = models.CharField(max_length=200, help_text="Printed name of who did the work.")
    performed_by_company = models.CharField(max_length=200, blank=True)
    details = models.TextField()
    sheet = models.ForeignKey(
        "checklists.CheckSheet", null=True, blank=True, on_delete=models.PROTECT, related_name="+"
    )
    organisation = models.ForeignKey(Organisation, on_delete=models.PROTECT, related_name="+")
    recorded_by = models.ForeignKey(User, on_delete=models.PROTECT, related_name="+")
    sequence = models.PositiveIntegerField()
    previous_seal = models.CharField(max_length=64, blank=True)
    canonical_json = models.TextField()
    seal = models.CharField(max_length=64, unique=True)
    seal_signature = models.TextField(blank=True)
    credential = models.ForeignKey(
        SigningCredential, null=True, blank=True, on_delete=models.PROTECT, related_name="+"
    )
    meaning = models.CharField(max_length=200)
    signed_at = models.DateTimeField()

    class Meta:
        constraints = [
            models.UniqueConstraint(fields=["site", "sequence"], name="log_sequence_unique"),
        ]
        ordering = ["site_id", "sequence"]

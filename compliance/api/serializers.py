"""Input parsing and output shapes for the API; no serializer saves domain state itself."""

import datetime as dt
import math
from typing import Any

from django.urls import reverse
from django.utils import timezone
from drf_spectacular.utils import extend_schema_field
from rest_framework import serializers

from checklists.models import Checklist, ChecklistVersion, CheckSheet, ItemEntry, Verdict
from checklists.selectors import UNKNOWN_VERSION, fillable_versions
from compliance.api.fields import (
    FiniteFloatField,
    IdField,
    PlausibleDateField,
    StrictInput,
    ZonedDateTimeField,
)
from compliance.models import (
    Anchor,
    AnchorCertification,
    Drop,
    Equipment,
    Hold,
    Job,
    JobState,
    JobTransition,
    JurisdictionProfile,
    Site,
    User,
)
from compliance.registers.bounds import MAX_RATED_CAPACITY_KN, MAX_SITE_HEIGHT_M, STOREYS
from compliance.registers.ratings import EQUIPMENT_KINDS
from compliance.registers.selectors import withdrawal
from compliance.registers.visibility import (
    anchors_checkable_by,
    anchors_visible_to,
    sites_visible_to,
)


class UserSerializer(serializers.ModelSerializer):
    name = serializers.CharField(source="display_name", read_only=True)
    organisation = serializers.CharField(source="organisation.name", read_only=True, default=None)

    class Meta:
        model = User
        fields = ["id", "username", "name", "role", "organisation"]


class ProfileSerializer(serializers.ModelSerializer):
    class Meta:
        model = JurisdictionProfile
        fields = ["key", "name", "thresholds", "cautions", "content_hash"]


def _finite_metres(value: Any) -> bool:
    """A JSON number a float holds (10**400 is not; nor is true or false)."""
    if isinstance(value, bool) or not isinstance(value, int | float):
        return False
    try:
        return math.isfinite(float(value))
    except OverflowError:
        return False


class SiteSerializer(StrictInput, serializers.ModelSerializer):
    profile = serializers.SlugRelatedField(
        slug_field="key", queryset=JurisdictionProfile.objects.all()
    )
    # The model's clean bounds the storeys (1 to 300). Taken from the column, the field would
    # answer first with the database's own range (2**31 - 1 on PostgreSQL, 2**63 - 1 on
    # SQLite), in other words on each; it keeps the widest range so the schema says int64.
    storeys = serializers.IntegerField(
        required=False, allow_null=True, min_value=0, max_value=2**63 - 1
    )
    owned = serializers.SerializerMethodField()

    class Meta:
        model = Site
        fields = [
            "id",
            "name",
            "address",
            "height_m",
            "storeys",
            "profile",
            "terrain",
            "roof_outline",
            "owned",
        ]

    def validate_height_m(self, value: float) -> float:
        """As the model's clean says it, beside the storeys (both are answered at once)."""
        if not 0 < value <= MAX_SITE_HEIGHT_M:
            raise serializers.ValidationError(
                f"A roof height above 0 and at most {MAX_SITE_HEIGHT_M:g} m."
            )
        return value

    def validate_storeys(self, value: int | None) -> int | None:
        """Bounded here as the model's clean bounds it, so that a number past the database's
        integer range is answered in the same words on PostgreSQL (whose column range the
        model would name first) as on SQLite."""
        fewest, most = STOREYS
        if value is not None and not fewest <= value <= most:
            raise serializers.ValidationError(f"Between {fewest} and {most} storeys.")
        return value

    def get_owned(self, site: Site) -> bool:
        """Whether the asker's organisation owns the building (and so keeps its anchors, their
        certificates, its log book and its grants); a contractor works there under a grant."""
        request = self.context.get("request")
        return site.organisation_id == getattr(getattr(request, "user", None), "organisation_id", 0)

    def validate_roof_outline(self, value: Any) -> list[list[float]]:
        """No plan (an empty list), or a polygon: at least three [x_m, y_m] corners in metres,
        finite numbers, no corner repeated, not all on one line. The outline places each drop in
        its facade's wind zone, so a shape that is not a roof is refused rather than measured."""
        if value in (None, []):
            return []
        if not isinstance(value, list) or len(value) < 3:
            raise serializers.ValidationError(
                "A roof outline is a list of at least three [x_m, y_m] corners, or empty."
            )
        corners: list[tuple[float, float]] = []
        for n, point in enumerate(value, start=1):
            if (
                not isinstance(point, list)
                or len(point) != 2
                or not all(_finite_metres(c) for c in point)
            ):
                raise serializers.ValidationError(
                    f"Corner {n} must be [x_m, y_m], two finite numbers in metres."
                )
            corner = (float(point[0]), float(point[1]))
            if corner in corners:
                raise serializers.ValidationError(f"Corner {n} repeats an earlier corner.")
            corners.append(corner)
        twice_area = sum(
            ax * by - bx * ay
            for (ax, ay), (bx, by) in zip(corners, corners[1:] + corners[:1], strict=True)
        )
        if abs(twice_area) < 1e-6:
            raise serializers.ValidationError(
                "The corners lie on one line: the outline encloses no roof."
            )
        return value


class CertificationSerializer(StrictInput, serializers.ModelSerializer):
    rated_capacity_kn = FiniteFloatField()
    certified_on = PlausibleDateField()
    valid_until = PlausibleDateField()
    recorded_by = serializers.CharField(
        source="recorded_by.display_name", read_only=True, default=None
    )
    # The certificate's file: sent with the form (multipart), checked by the service; read back
    # through the API (``document_url``, for those who may see the anchor) with its SHA-256.
    document = serializers.FileField(write_only=True, required=False, allow_empty_file=False)
    document_url = serializers.SerializerMethodField()

    class Meta:
        model = AnchorCertification
        fields = [
            "id",
            "certifier",
            "certifier_company",
            "rated_capacity_kn",
            "certified_on",
            "valid_until",
            "document",
            "document_url",
            "document_sha256",
            "recorded_by",
            "recorded_at",
        ]
        read_only_fields = ["recorded_at", "document_sha256"]

    def get_document_url(self, cert: AnchorCertification) -> str | None:
        if not cert.document:
            return None
        return reverse("anchor-certificate-file", args=[cert.anchor_id, cert.pk])

    def validate_rated_capacity_kn(self, value: float) -> float:
        if value <= 0:
            raise serializers.ValidationError("Rated capacity must be greater than zero.")
        if value > MAX_RATED_CAPACITY_KN:
            raise serializers.ValidationError(
                f"At most {MAX_RATED_CAPACITY_KN:g} kN: a larger value is taken for a typing error."
            )
        return value

    def validate(self, attrs: dict[str, Any]) -> dict[str, Any]:
        if attrs["valid_until"] <= attrs["certified_on"]:
            raise serializers.ValidationError(
                {"valid_until": "Must be after the certification date."}
            )
        return attrs


class AnchorSerializer(StrictInput, serializers.ModelSerializer):
    certification = serializers.SerializerMethodField()

    class Meta:
        model = Anchor
        fields = ["id", "site", "label", "x_m", "y_m", "description", "certification"]

    def get_certification(self, anchor: Anchor) -> dict[str, Any] | None:
        cert = anchor.current_certification()
        return CertificationSerializer(cert).data if cert else None


class EquipmentSerializer(StrictInput, serializers.ModelSerializer):
    kind = serializers.ChoiceField(choices=EQUIPMENT_KINDS)
    made_on = PlausibleDateField(required=False, allow_null=True)
    next_inspection_due = PlausibleDateField(required=False, allow_null=True)
    out_of_service_reason = serializers.SerializerMethodField()
    out_of_service_since = serializers.SerializerMethodField()

    class Meta:
        model = Equipment
        fields = [
            "id",
            "kind",
            "label",
            "serial",
            "ratings",
            "made_on",
            "next_inspection_due",
            "in_service",
            "out_of_service_reason",
            "out_of_service_since",
        ]

    def _withdrawal(self, item: Equipment) -> tuple[dt.datetime | None, str]:
        if hasattr(item, "withdrawn_reason"):
            return getattr(item, "withdrawn_at", None), item.withdrawn_reason or ""
        found = withdrawal(item)
        return found.at, found.reason

    def get_out_of_service_reason(self, item: Equipment) -> str | None:
        """Why it is out of service, as said when it was taken out (None while in service)."""
        if item.in_service or item.pk is None:
            return None
        return self._withdrawal(item)[1]

    def get_out_of_service_since(self, item: Equipment) -> dt.date | None:
        """The day (local) it was taken out of service (None while in service or unrecorded)."""
        if item.in_service or item.pk is None:
            return None
        at = self._withdrawal(item)[0]
        return timezone.localdate(at) if at else None


class RatingFieldSerializer(serializers.Serializer):
    key = serializers.CharField()
    label = serializers.CharField()
    unit = serializers.CharField()
    required = serializers.BooleanField()
    text = serializers.BooleanField()
    minimum = serializers.ChoiceField(choices=["above_zero", "zero_or_more"], allow_null=True)
    choices = serializers.ListField(child=serializers.CharField())


class EquipmentKindSerializer(serializers.Serializer):
    kind = serializers.CharField()
    label = serializers.CharField()
    ratings = RatingFieldSerializer(many=True)


class EquipmentChangeInput(StrictInput, serializers.Serializer):
    """What a supervisor may change on a register entry (all optional); never its kind."""

    label = serializers.CharField(max_length=80, required=False)
    serial = serializers.CharField(max_length=80, required=False, allow_blank=True)
    ratings = serializers.JSONField(required=False)
    made_on = PlausibleDateField(required=False, allow_null=True)
    next_inspection_due = PlausibleDateField(required=False, allow_null=True)
    in_service = serializers.BooleanField(required=False)
    reason = serializers.CharField(max_length=500, required=False, allow_blank=True)

    def validate_ratings(self, value: Any) -> dict[str, Any]:
        if not isinstance(value, dict):
            raise serializers.ValidationError("An object of ratings, field by field.")
        return value


class DropSerializer(StrictInput, serializers.ModelSerializer):
    length_m = FiniteFloatField()

    class Meta:
        model = Drop
        fields = [
            "id",
            "label",
            "robot",
            "anchor",
            "safety_anchor",
            "tether",
            "safety_line",
            "hose",
            "length_m",
        ]

    def __init__(self, *args: Any, **kwargs: Any) -> None:
        super().__init__(*args, **kwargs)
        request = self.context.get("request")
        org = getattr(getattr(request, "user", None), "organisation_id", None)
        for name in ("robot", "tether", "safety_line", "hose"):
            self.fields[name].queryset = Equipment.objects.filter(organisation_id=org)
        for name in ("anchor", "safety_anchor"):
            self.fields[name].queryset = anchors_visible_to(org)


class PlanCheckInput(StrictInput, serializers.Serializer):
    """Any of a drop's anchors and equipment, as chosen so far on the planning form."""

    robot = IdField(queryset=Equipment.objects.none(), required=False)
    tether = IdField(queryset=Equipment.objects.none(), required=False)
    safety_line = IdField(queryset=Equipment.objects.none(), required=False)
    hose = IdField(queryset=Equipment.objects.none(), required=False)
    anchor = IdField(queryset=Anchor.objects.none(), required=False)
    safety_anchor = IdField(queryset=Anchor.objects.none(), required=False)
    length_m = FiniteFloatField(required=False)

    def __init__(self, *args: Any, **kwargs: Any) -> None:
        super().__init__(*args, **kwargs)
        request = self.context.get("request")
        org = getattr(getattr(request, "user", None), "organisation_id", None)
        for name in ("robot", "tether", "safety_line", "hose"):
            self.fields[name].queryset = Equipment.objects.filter(organisation_id=org)
        for name in ("anchor", "safety_anchor"):
            self.fields[name].queryset = anchors_visible_to(org)


class ConflictSerializer(serializers.Serializer):
    field = serializers.CharField()
    code = serializers.CharField()
    message = serializers.CharField()
    refuses = serializers.BooleanField()


class PlanCheckSerializer(serializers.Serializer):
    conflicts = ConflictSerializer(many=True)


class TransitionSerializer(serializers.ModelSerializer):
    by = serializers.CharField(source="by.display_name", default=None)

    class Meta:
        model = JobTransition
        fields = ["from_state", "to_state", "by", "at", "reason"]


class HoldSerializer(serializers.ModelSerializer):
    # A hold still open has no clearance: both are null (the schema says so, for the phone).
    cleared_at = serializers.DateTimeField(source="clearance.at", read_only=True, allow_null=True)
    cleared_by_sheet = serializers.IntegerField(
        source="clearance.sheet_id", read_only=True, allow_null=True
    )
    found_at = serializers.SerializerMethodField(
        help_text="When the failed check that opened the hold was made, as the server orders"
        " checks (a phone offline on the roof sends it later than the hold's opening says);"
        " null for a hold the owner's log book or a register change opened."
    )

    class Meta:
        model = Hold
        fields = [
            "id",
            "requirement",
            "item_key",
            "reason",
            "sheet",
            "opened_at",
            "found_at",
            "cleared_at",
            "cleared_by_sheet",
        ]

    @extend_schema_field(serializers.DateTimeField(allow_null=True))
    def get_found_at(self, hold: Hold) -> str | None:
        if hold.sheet_id is None or not hold.sheet.blocking_failures:
            # A register change's hold, or one naming the passing check it leaves behind.
            return None
        return serializers.DateTimeField().to_representation(hold.sheet.made_at)

    def to_representation(self, instance: Hold) -> dict[str, Any]:
        if not hasattr(instance, "clearance"):
            data = super().to_representation(instance)
            return {**data, "cleared_at": None, "cleared_by_sheet": None}
        return super().to_representation(instance)


class JobSerializer(StrictInput, serializers.ModelSerializer):
    date = PlausibleDateField()
    notes = serializers.CharField(max_length=4000, required=False, allow_blank=True)
    site_name = serializers.CharField(source="site.name", read_only=True)
    supervisor_name = serializers.CharField(source="supervisor.display_name", read_only=True)
    record_signed = serializers.SerializerMethodField()

    class Meta:
        model = Job
        fields = [
            "id",
            "site",
            "site_name",
            "date",
            "state",
            "supervisor",
            "supervisor_name",
            "notes",
            "record_signed",
        ]
        read_only_fields = ["state"]

    def get_record_signed(self, job: Job) -> bool:
        """Whether the day's record is signed (read along with the job by jobs_for)."""
        found = getattr(job, "record_signed", None)
        if found is None:
            found = job.daily_records.filter(kind="record").exists()
        return bool(found)

    def __init__(self, *args: Any, **kwargs: Any) -> None:
        super().__init__(*args, **kwargs)
        request = self.context.get("request")
        org = getattr(getattr(request, "user", None), "organisation_id", None)
        self.fields["site"].queryset = sites_visible_to(org)
        self.fields["supervisor"].queryset = User.objects.filter(
            organisation_id=org, role__in=["supervisor", "admin"]
        )


class RequirementSerializer(serializers.Serializer):
    """One check a job requires before it may start (a selector's ``Requirement.as_dict``)."""

    key = serializers.CharField()
    checklist = serializers.CharField()
    title = serializers.CharField()
    version = serializers.IntegerField()
    subject_kind = serializers.CharField()
    subject = serializers.CharField()
    anchor = serializers.IntegerField(allow_null=True)
    equipment = serializers.IntegerField(allow_null=True)
    satisfied = serializers.BooleanField()
    latest_sheet = serializers.IntegerField(allow_null=True)
    latest_verdict = serializers.CharField(allow_null=True)
    latest_version = serializers.IntegerField(
        allow_null=True, help_text="The version the newest sheet was filled against."
    )
    read_again_by = serializers.DateTimeField(
        allow_null=True,
        help_text="For a weather check that counts now under a profile that limits how long"
        " (weather_recheck_min): when it runs out. A job at work is stopped then unless the"
        " wind is read again.",
    )


class ReasonSerializer(serializers.Serializer):
    """Why a job cannot go on, in words, with the requirement it concerns if any."""

    code = serializers.CharField()
    message = serializers.CharField()
    requirement = serializers.CharField(allow_null=True, required=False)


class JobDetailSerializer(JobSerializer):
    """A job with its drops, what it requires, what blocks it, its holds and the profile's
    cautions: the answer of a job's detail and of every action on it (built by the API's
    ``job_detail_data``, which renders each part with these serializers)."""

    drops = DropSerializer(many=True, read_only=True)
    requirements = RequirementSerializer(many=True, read_only=True)
    blockers = ReasonSerializer(many=True, read_only=True)
    holds = HoldSerializer(many=True, read_only=True)
    cautions = serializers.CharField(read_only=True)
    work_started = serializers.BooleanField(
        read_only=True,
        help_text="Whether work ever started (only a supervisor or an admin closes it before).",
    )
    was_ready = serializers.BooleanField(
        read_only=True,
        help_text="Whether every pre-start check was ever done and passing (cleared or working):"
        " a day that never was is not signed as safe.",
    )
    ready_when_closed = serializers.BooleanField(
        read_only=True,
        help_text="Whether every pre-start check was done and passing in the last state the job"
        " held before it closed (or holds now while open): a day left behind by a changed figure"
        " and closed without work is not signed as safe.",
    )
    lapsed_checks = ReasonSerializer(
        many=True,
        read_only=True,
        help_text="The pre-start checks that no longer count though the job was ready when it"
        " closed (or is now), with no hold standing for them: a figure a check read changed,"
        " kit returned to service after its check, a drop planned after it. While one stands"
        " the day is not signed as safe.",
    )

    unread_wind = serializers.CharField(
        read_only=True,
        help_text="For a day that has ended: when work went on without a recent wind reading"
        " (the profile's weather_recheck_min), in words; empty when it did not. While it says"
        " something the day is not signed as safe.",
    )

    class Meta(JobSerializer.Meta):
        fields = [
            *JobSerializer.Meta.fields,
            *("drops", "requirements", "blockers", "holds", "cautions", "work_started"),
            *("was_ready", "ready_when_closed", "lapsed_checks", "unread_wind"),
        ]


class SyncLineSerializer(serializers.Serializer):
    """One record's answer in a sync batch: applied (with what it made) or refused alone with its
    errors; ``duplicate`` when the record had been applied before and this is its stored answer."""

    client_uuid = serializers.CharField(allow_null=True)
    status = serializers.ChoiceField(choices=["applied", "rejected"])
    duplicate = serializers.BooleanField(required=False)
    errors = serializers.DictField(required=False)
    reasons = ReasonSerializer(many=True, required=False)
    sheet = serializers.IntegerField(required=False)
    verdict = serializers.ChoiceField(choices=Verdict.choices, required=False)
    blocking_failures = serializers.IntegerField(required=False)
    drop_log = serializers.IntegerField(required=False)
    job = serializers.IntegerField(required=False)
    state = serializers.ChoiceField(choices=JobState.choices, required=False)


class SyncJobSerializer(serializers.Serializer):
    """A job's state after the batch: today's jobs and every job the batch touched."""

    id = serializers.IntegerField()
    state = serializers.ChoiceField(choices=JobState.choices)
    date = serializers.DateField()


class SyncResultSerializer(serializers.Serializer):
    results = SyncLineSerializer(many=True)
    jobs = SyncJobSerializer(many=True)
    server_time = serializers.DateTimeField()


SHEET_FIELDS = [
    "id",
    "client_uuid",
    "job",
    "date",
    "checklist",
    "version",
    "version_number",
    "version_hash",
    "subject_kind",
    "anchor",
    "equipment",
    "filled_by",
    "device_time",
    "received_at",
    "verdict",
    "blocking_failures",
    "remarks",
]
ENTRY_FIELDS = [
    "item_key",
    "kind",
    "value",
    "unit",
    "verdict",
    "blocking",
    "margin",
    "message",
    "working",
]


class ItemEntrySerializer(serializers.ModelSerializer):
    class Meta:
        model = ItemEntry
        fields = ENTRY_FIELDS


class SheetHeadSerializer(serializers.ModelSerializer):
    """A sheet without its entries: a long list reads the entries as plain rows instead."""

    checklist = serializers.CharField(source="version.checklist.key")
    version_number = serializers.IntegerField(source="version.number")
    filled_by = serializers.CharField(source="filled_by.display_name")
    # The job's day, so a day without a signed record is placed on its own date.
    date = serializers.DateField(source="job.date", read_only=True)

    class Meta:
        model = CheckSheet
        fields = SHEET_FIELDS


class SheetSerializer(SheetHeadSerializer):
    entries = ItemEntrySerializer(many=True)

    class Meta:
        model = CheckSheet
        fields = [*SHEET_FIELDS, "entries"]


class SheetInputSerializer(StrictInput, serializers.Serializer):
    client_uuid = serializers.UUIDField(required=False)
    job = IdField(queryset=Job.objects.none())
    version = IdField(
        queryset=ChecklistVersion.objects.none(),
        error_messages={"does_not_exist": UNKNOWN_VERSION},
    )
    anchor = IdField(queryset=Anchor.objects.none(), required=False, allow_null=True)
    equipment = IdField(queryset=Equipment.objects.none(), required=False, allow_null=True)
    device_time = serializers.DateTimeField(required=False, allow_null=True)
    remarks = serializers.CharField(required=False, allow_blank=True, max_length=4000)
    entries = serializers.DictField(child=serializers.JSONField())
    # The sender's clock when it sent the sheet, as a sync batch's `sent_at`: how far the
    # sender's clock is off is kept with the sheet and stated on the record.
    sent_at = ZonedDateTimeField(required=False, allow_null=True)

    def __init__(self, *args: Any, **kwargs: Any) -> None:
        super().__init__(*args, **kwargs)
        request = self.context.get("request")
        org = getattr(getattr(request, "user", None), "organisation_id", None)
        self.fields["job"].queryset = Job.objects.filter(organisation_id=org).select_related(
            "site__profile"
        )
        self.fields["version"].queryset = fillable_versions(org)
        self.fields["anchor"].queryset = anchors_checkable_by(org)
        self.fields["equipment"].queryset = Equipment.objects.filter(organisation_id=org)


class ChecklistVersionSerializer(StrictInput, serializers.ModelSerializer):
    checklist = serializers.CharField(source="checklist.key", read_only=True)
    applies_to = serializers.CharField(source="checklist.applies_to", read_only=True)
    title = serializers.CharField(source="checklist.title", read_only=True)
    # Which checklist, by id: an organisation's own and a default may share a key.
    checklist_id = serializers.IntegerField(read_only=True)
    default = serializers.SerializerMethodField()

    class Meta:
        model = ChecklistVersion
        fields = [
            "id",
            "checklist",
            "checklist_id",
            "default",
            "title",
            "applies_to",
            "number",
            "status",
            "items",
            "notes",
            "content_hash",
            "created_at",
            "published_at",
        ]
        read_only_fields = ["number", "status", "content_hash", "created_at", "published_at"]

    def get_default(self, version: ChecklistVersion) -> bool:
        """A default checklist (Parapet's, changed only with a release), not the organisation's."""
        return version.checklist.organisation_id is None


class ChecklistSerializer(StrictInput, serializers.ModelSerializer):
    versions = serializers.SerializerMethodField()
    default = serializers.SerializerMethodField()

    class Meta:
        model = Checklist
        fields = ["id", "key", "title", "applies_to", "description", "default", "versions"]

    def get_default(self, checklist: Checklist) -> bool:
        return checklist.organisation_id is None

    def get_versions(self, checklist: Checklist) -> list[dict[str, Any]]:
        return [
            {"id": v.pk, "number": v.number, "status": v.status, "content_hash": v.content_hash}
            for v in checklist.versions.all()
        ]


class VersionRefSerializer(serializers.Serializer):
    id = serializers.IntegerField()
    number = serializers.IntegerField()
    content_hash = serializers.CharField()


class ItemChangeSerializer(serializers.Serializer):
    """One item in both versions that differs: the fields that changed, before and after."""

    key = serializers.CharField()
    fields = serializers.ListField(child=serializers.CharField())
    before = serializers.DictField()
    after = serializers.DictField()


class VersionDiffSerializer(serializers.Serializer):
    """Two versions of one checklist compared item by item (items are JSON, as in a version)."""

    from_ = VersionRefSerializer()
    to = VersionRefSerializer()
    added = serializers.ListField(child=serializers.DictField())
    removed = serializers.ListField(child=serializers.DictField())
    changed = ItemChangeSerializer(many=True)
    unified = serializers.CharField()

    def get_fields(self) -> dict[str, serializers.Field]:
        fields = super().get_fields()
        fields["from"] = fields.pop("from_")  # "from" is a Python keyword
        return fields

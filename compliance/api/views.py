"""Thin API views: parse, call one service or selector, shape the answer."""

from typing import Any

from django.contrib.auth import authenticate, login, logout
from django.db.models import Prefetch, Q, QuerySet
from django.http import FileResponse, Http404
from django.shortcuts import get_object_or_404
from django.utils import timezone
from drf_spectacular.types import OpenApiTypes
from drf_spectacular.utils import OpenApiParameter, extend_schema, inline_serializer
from rest_framework import mixins, serializers, status, viewsets
from rest_framework.decorators import (
    action,
    api_view,
    parser_classes,
    permission_classes,
    throttle_classes,
)
from rest_framework.permissions import AllowAny, IsAuthenticated
from rest_framework.request import Request
from rest_framework.response import Response

from checklists import services as checklist_services
from checklists.models import Checklist, ChecklistVersion
from checklists.photos import store_photo
from checklists.selectors import entry_rows, sheets_for, usable_versions, visible_checklists
from compliance.api import serializers as s
from compliance.api.fields import (
    ParsedJSON,
    StrictInput,
    ZonedDateTimeField,
    query_day,
    query_id,
    query_period,
    query_text,
)
from compliance.api.pagination import BoundedLimitOffset
from compliance.api.parsers import JSONParser, MultiPartParser
from compliance.api.permissions import OrganisationMember, SupervisorWrites
from compliance.api.records import RecordSerializer, SignInput, sign_job
from compliance.api.throttles import LOGIN_THROTTLES, PasswordReentryThrottle
from compliance.api.tokens import issue_token, revoke_tokens, token_lifetime
from compliance.engineering import CALCULATIONS, CalcInputError, run
from compliance.jobs import services
from compliance.jobs.selectors import (
    READY_STATES,
    job_readiness,
    jobs_for,
    lapsed_checks,
    moves_in_order,
    plan_conflicts,
    ready_when_closed,
    unread_wind,
)
from compliance.jobs.sync import (
    MAX_BATCH,
    apply_batch,
    clock_offset,
    printable,
    record_posted_sheet,
)
from compliance.models import (
    Anchor,
    AnchorCertification,
    Equipment,
    Job,
    JobState,
    JurisdictionProfile,
    Site,
)
from compliance.registers import services as register_services
from compliance.registers.documents import content_type
from compliance.registers.profiles import profile_diff
from compliance.registers.ratings import EQUIPMENT_KINDS, KIND_WORDS, rating_form
from compliance.registers.selectors import equipment_of
from compliance.registers.visibility import anchors_visible_to, sites_visible_to


class LoginInput(StrictInput, serializers.Serializer):
    username = serializers.CharField(max_length=150)
    password = serializers.CharField(max_length=256)


@extend_schema(request=LoginInput, responses=s.UserSerializer)
@api_view(["POST"])
@permission_classes([AllowAny])
@throttle_classes(LOGIN_THROTTLES)
def session_login(request: Request) -> Response:
    """Sign in with a session cookie (the phone app)."""
    data = LoginInput(data=request.data)
    data.is_valid(raise_exception=True)
    user = authenticate(request, **data.validated_data)
    if user is None:
        return Response(
            {"detail": "Wrong username or password."}, status=status.HTTP_400_BAD_REQUEST
        )
    login(request, user)
    return Response(s.UserSerializer(user).data)


@extend_schema(request=None, responses={204: None})
@api_view(["POST"])
@permission_classes([IsAuthenticated])
def session_logout(request: Request) -> Response:
    """Sign out: the session ends and every API token of the person stops working."""
    revoke_tokens(user=request.user)
    logout(request)
    return Response(status=status.HTTP_204_NO_CONTENT)


@extend_schema(
    request=LoginInput,
    responses=inline_serializer(
        "Token", {"token": serializers.CharField(), "expires_at": serializers.DateTimeField()}
    ),
)
@api_view(["POST"])
@permission_classes([AllowAny])
@throttle_classes(LOGIN_THROTTLES)
def token_login(request: Request) -> Response:
    """Exchange a username and password for an API token (scripts)."""
    data = LoginInput(data=request.data)
    data.is_valid(raise_exception=True)
    user = authenticate(request, **data.validated_data)
    if user is None:
        return Response(
            {"detail": "Wrong username or password."}, status=status.HTTP_400_BAD_REQUEST
        )
    token = issue_token(user=user)
    return Response({"token": token.key, "expires_at": token.created + token_lifetime()})


@extend_schema(responses=s.UserSerializer)
@api_view(["GET"])
@permission_classes([IsAuthenticated])
def me(request: Request) -> Response:
    return Response(s.UserSerializer(request.user).data)


class SyncInput(StrictInput, serializers.Serializer):
    # Each record as parsed: apply_record refuses a bad one alone (null, not an object, holding
    # 1e400), where a JSONField would refuse the whole batch.
    records = serializers.ListField(child=ParsedJSON(allow_null=True), max_length=MAX_BATCH)
    sent_at = ZonedDateTimeField(required=False, allow_null=True)
    text_checked_later = ("records",)


@extend_schema(
    request=SyncInput,
    responses=s.SyncResultSerializer,
)
@api_view(["POST"])
@permission_classes([OrganisationMember])
def sync(request: Request) -> Response:
    """Apply a batch of records made offline; each once, whatever the number of retries."""
    data = SyncInput(data=request.data)
    data.is_valid(raise_exception=True)
    results = apply_batch(
        request.user, data.validated_data["records"], data.validated_data.get("sent_at")
    )
    touched = {r["job"] for r in results if isinstance(r.get("job"), int)}
    today = timezone.localdate()
    jobs = (
        Job.objects.filter(organisation_id=request.user.organisation_id)
        .filter(Q(date=today) | Q(pk__in=touched))
        .order_by("date", "id")
        .values("id", "state", "date")
    )
    return Response({"results": results, "jobs": list(jobs), "server_time": timezone.now()})


class PhotoInput(StrictInput, serializers.Serializer):
    client_uuid = serializers.UUIDField()
    job = serializers.IntegerField()
    sheet_uuid = serializers.UUIDField(required=False, allow_null=True)
    item_key = serializers.CharField(required=False, allow_blank=True, max_length=80)
    image = serializers.FileField()


class PhotoOutput(serializers.Serializer):
    client_uuid = serializers.UUIDField()
    job = serializers.IntegerField(source="job_id")
    sheet_uuid = serializers.UUIDField()
    item_key = serializers.CharField()
    sha256 = serializers.CharField()
    width = serializers.IntegerField()
    height = serializers.IntegerField()
    uploaded_at = serializers.DateTimeField()


@extend_schema(request={"multipart/form-data": PhotoInput}, responses={201: PhotoOutput})
@api_view(["POST"])
@permission_classes([OrganisationMember])
@parser_classes([MultiPartParser])
def upload_photo(request: Request) -> Response:
    """Store a roof photo once per client uuid; it is re-encoded and its metadata dropped."""
    data = PhotoInput(data=request.data)
    data.is_valid(raise_exception=True)
    values = data.validated_data
    job = Job.objects.filter(organisation_id=request.user.organisation_id, pk=values["job"]).first()
    if job is None:
        return Response({"job": ["Unknown job."]}, status=status.HTTP_400_BAD_REQUEST)
    photo, created = store_photo(
        by=request.user,
        job=job,
        image=values["image"],
        client_uuid=values["client_uuid"],
        sheet_uuid=values.get("sheet_uuid"),
        item_key=values.get("item_key", ""),
    )
    return Response(PhotoOutput(photo).data, status=201 if created else 200)


class ReadOnlyCalc(IsAuthenticated):
    """Calculations change nothing, so an auditor may run them too."""

    def has_permission(self, request: Request, view: Any) -> bool:
        return super().has_permission(request, view) and bool(request.user.organisation_id)


class ProfileViewSet(viewsets.ReadOnlyModelViewSet):
    serializer_class = s.ProfileSerializer
    pagination_class = BoundedLimitOffset
    permission_classes = [OrganisationMember]
    lookup_field = "key"
    queryset = JurisdictionProfile.objects.order_by("key")

    @extend_schema(responses={200: OpenApiTypes.OBJECT})
    @action(detail=True, methods=["get"])
    def revisions(self, request: Request, key: str | None = None) -> Response:
        """Every revision of the profile, oldest first, each with what it changed."""
        revisions = list(self.get_object().revisions.select_related("profile"))
        return Response(
            [
                {
                    "number": r.number,
                    "content_hash": r.content_hash,
                    "published_at": r.published_at,
                    "changes": profile_diff(prev, r) if prev is not None else None,
                }
                for prev, r in zip([None, *revisions[:-1]], revisions, strict=True)
            ]
        )


class OrgScoped:
    request: Request

    @property
    def org_id(self) -> int | None:
        return getattr(self.request.user, "organisation_id", None)


class SiteViewSet(OrgScoped, mixins.CreateModelMixin, viewsets.ReadOnlyModelViewSet):
    serializer_class = s.SiteSerializer
    pagination_class = BoundedLimitOffset
    permission_classes = [SupervisorWrites]

    def get_queryset(self) -> QuerySet[Site]:
        return sites_visible_to(self.org_id).select_related("profile").order_by("name")

    def create(self, request: Request, *args: Any, **kwargs: Any) -> Response:
        data = self.get_serializer(data=request.data)
        data.is_valid(raise_exception=True)
        site = register_services.create_site(by=request.user, **data.validated_data)
        return Response(self.get_serializer(site).data, status=status.HTTP_201_CREATED)


class AnchorViewSet(OrgScoped, mixins.CreateModelMixin, viewsets.ReadOnlyModelViewSet):
    serializer_class = s.AnchorSerializer
    pagination_class = BoundedLimitOffset
    permission_classes = [SupervisorWrites]

    def get_queryset(self) -> QuerySet[Anchor]:
        qs = anchors_visible_to(self.org_id).prefetch_related(
            Prefetch(
                "certifications", queryset=AnchorCertification.objects.select_related("recorded_by")
            )
        )
        site = query_id(self.request.query_params, "site")
        if site is not None:
            qs = qs.filter(site_id=site)
        return qs

    def get_serializer(self, *args: Any, **kwargs: Any) -> s.AnchorSerializer:
        serializer = super().get_serializer(*args, **kwargs)
        if hasattr(serializer, "fields") and "site" in serializer.fields:
            serializer.fields["site"].queryset = Site.objects.filter(organisation_id=self.org_id)
        return serializer

    def create(self, request: Request, *args: Any, **kwargs: Any) -> Response:
        data = self.get_serializer(data=request.data)
        data.is_valid(raise_exception=True)
        anchor = register_services.add_anchor(by=request.user, **data.validated_data)
        return Response(self.get_serializer(anchor).data, status=status.HTTP_201_CREATED)

    @extend_schema(
        methods=["GET"],
        request=None,
        responses={200: s.CertificationSerializer(many=True)},
    )
    @extend_schema(
        methods=["POST"],
        request=s.CertificationSerializer,
        responses={201: s.CertificationSerializer},
    )
    @action(
        detail=True,
        methods=["get", "post"],
        pagination_class=None,
        parser_classes=[JSONParser, MultiPartParser],
    )
    def certifications(self, request: Request, pk: str | None = None) -> Response:
        """Every certification of the anchor, newest first (GET), or add one (POST: append
        only; an old one is never edited)."""
        anchor = self.get_object()
        if request.method == "GET":
            history = sorted(
                anchor.certifications.all(), key=lambda c: (c.certified_on, c.pk), reverse=True
            )
            return Response(s.CertificationSerializer(history, many=True).data)
        data = s.CertificationSerializer(data=request.data)
        data.is_valid(raise_exception=True)
        cert = register_services.record_certification(
            anchor=anchor, by=request.user, **data.validated_data
        )
        return Response(s.CertificationSerializer(cert).data, status=status.HTTP_201_CREATED)

    @extend_schema(responses={(200, "application/octet-stream"): bytes})
    @action(
        detail=True,
        methods=["get"],
        url_path=r"certifications/(?P<cert_pk>[0-9]{1,18})/file",
        url_name="certificate-file",
    )
    def certificate_file(
        self, request: Request, pk: str | None = None, cert_pk: str | None = None
    ) -> FileResponse:
        """The certificate's file as it was received (PDF, PNG or JPEG), for anyone who may see
        the anchor; its SHA-256 is in the certification."""
        anchor = self.get_object()
        # The anchor comes with its certifications (the viewset's prefetch): find it there.
        cert = next(
            (c for c in anchor.certifications.all() if str(c.pk) == cert_pk and c.document), None
        )
        if cert is None:
            raise Http404("No such certificate file.")
        extension = cert.document.name.rsplit(".", 1)[-1]
        response = FileResponse(
            cert.document.open("rb"),
            content_type=content_type(cert.document.name),
            as_attachment=True,
            filename=f"anchor-{anchor.label}-certificate-{cert.certified_on}.{extension}",
        )
        response["X-Content-Type-Options"] = "nosniff"
        return response


class EquipmentViewSet(OrgScoped, mixins.CreateModelMixin, viewsets.ReadOnlyModelViewSet):
    serializer_class = s.EquipmentSerializer
    pagination_class = BoundedLimitOffset
    permission_classes = [SupervisorWrites]

    def get_queryset(self) -> QuerySet[Equipment]:
        qs = equipment_of(self.org_id)
        kind = query_text(self.request.query_params, "kind")
        return qs.filter(kind=kind) if kind else qs

    def create(self, request: Request, *args: Any, **kwargs: Any) -> Response:
        data = self.get_serializer(data=request.data)
        data.is_valid(raise_exception=True)
        item = register_services.create_equipment(by=request.user, **data.validated_data)
        return Response(self.get_serializer(item).data, status=status.HTTP_201_CREATED)

    @extend_schema(responses=s.EquipmentKindSerializer(many=True))
    @action(detail=False, methods=["get"], pagination_class=None)
    def kinds(self, request: Request) -> Response:
        """Each kind of equipment and the ratings its register entry carries, field by field
        with units and lower bounds, so a form never asks for raw JSON."""
        return Response(
            [
                {"kind": kind, "label": KIND_WORDS[kind], "ratings": rating_form(kind)}
                for kind in EQUIPMENT_KINDS
            ]
        )

    @extend_schema(request=s.EquipmentChangeInput, responses={200: s.EquipmentSerializer})
    def partial_update(self, request: Request, *args: Any, **kwargs: Any) -> Response:
        """Change an entry: label, serial, ratings, dates, or take it out of service (with a
        reason) and return it. The kind never changes; each change has its audit entry."""
        item = self.get_object()
        data = s.EquipmentChangeInput(data=request.data, context={"kind": item.kind})
        data.is_valid(raise_exception=True)
        fields = dict(data.validated_data)
        reason = fields.pop("reason", "")
        item = register_services.update_equipment(
            item=item, by=request.user, reason=reason, **fields
        )
        return Response(self.get_serializer(item).data)


def job_detail_data(job: Job, context: dict[str, Any]) -> dict[str, Any]:
    readiness = job_readiness(job)
    moves = moves_in_order(job)
    states = [state for state, _ in moves]
    return {
        **s.JobSerializer(job, context=context).data,
        "drops": s.DropSerializer(readiness.drops, many=True, context=context).data,
        "requirements": s.RequirementSerializer(
            [r.as_dict() for r in readiness.requirements], many=True
        ).data,
        "blockers": s.ReasonSerializer([r.as_dict() for r in readiness.blockers], many=True).data,
        "holds": s.HoldSerializer(readiness.holds, many=True).data,
        "cautions": job.site.profile.cautions,
        "work_started": JobState.WORKING in states,
        "was_ready": any(state in READY_STATES for state in states),
        "ready_when_closed": ready_when_closed(states),
        "lapsed_checks": s.ReasonSerializer(
            [r.as_dict() for r in lapsed_checks(job, readiness.requirements, moves)], many=True
        ).data,
        "unread_wind": unread_wind(job, moves),
    }


class ReasonInput(StrictInput, serializers.Serializer):
    reason = serializers.CharField(required=False, allow_blank=True, max_length=2000)


class JobViewSet(OrgScoped, mixins.CreateModelMixin, viewsets.ReadOnlyModelViewSet):
    serializer_class = s.JobSerializer
    pagination_class = BoundedLimitOffset
    permission_classes = [OrganisationMember]

    def get_queryset(self) -> QuerySet[Job]:
        qs = jobs_for(self.request.user)
        day = query_day(self.request.query_params, "date")
        return qs if day is None else qs.filter(date=day)

    @extend_schema(request=s.JobSerializer, responses={201: s.JobDetailSerializer})
    def create(self, request: Request, *args: Any, **kwargs: Any) -> Response:
        data = self.get_serializer(data=request.data)
        data.is_valid(raise_exception=True)
        job = services.create_job(by=request.user, **data.validated_data)
        return Response(
            job_detail_data(job, self.get_serializer_context()), status=status.HTTP_201_CREATED
        )

    @extend_schema(responses=s.JobDetailSerializer)
    def retrieve(self, request: Request, *args: Any, **kwargs: Any) -> Response:
        return Response(job_detail_data(self.get_object(), self.get_serializer_context()))

    def _act(self, request: Request, service: Any, *, reasoned: bool = False) -> Response:
        # The job first: another organisation's job is 404 whatever the body holds.
        job = self.get_object()
        extra = {}
        if reasoned:
            data = ReasonInput(data=request.data)
            data.is_valid(raise_exception=True)
            extra["reason"] = data.validated_data.get("reason", "")
        service(job=job, by=request.user, **extra)
        job.refresh_from_db()
        return Response(job_detail_data(job, self.get_serializer_context()))

    @extend_schema(request=None, responses=s.JobDetailSerializer)
    @action(detail=True, methods=["post"])
    def start(self, request: Request, pk: str | None = None) -> Response:
        """Start work; 409 with the reasons when a check is missing or failed."""
        return self._act(request, services.start_job)

    @extend_schema(request=ReasonInput, responses=s.JobDetailSerializer)
    @action(detail=True, methods=["post"])
    def pause(self, request: Request, pk: str | None = None) -> Response:
        return self._act(request, services.pause_job, reasoned=True)

    @extend_schema(request=ReasonInput, responses=s.JobDetailSerializer)
    @action(detail=True, methods=["post"])
    def close(self, request: Request, pk: str | None = None) -> Response:
        return self._act(request, services.close_job, reasoned=True)

    @extend_schema(request=s.DropSerializer, responses={201: s.DropSerializer})
    @action(detail=True, methods=["post"])
    def drops(self, request: Request, pk: str | None = None) -> Response:
        job = self.get_object()
        data = s.DropSerializer(data=request.data, context=self.get_serializer_context())
        data.is_valid(raise_exception=True)
        drop = services.add_drop(job=job, by=request.user, **data.validated_data)
        return Response(s.DropSerializer(drop).data, status=status.HTTP_201_CREATED)

    @extend_schema(request=s.PlanCheckInput, responses=s.PlanCheckSerializer)
    @action(detail=True, methods=["post"], url_path="plan-check")
    def plan_check(self, request: Request, pk: str | None = None) -> Response:
        """What stands against a drop being planned, in words, before it is added: refusals
        (booked elsewhere that day, out of service) and what will block the start."""
        job = self.get_object()
        data = s.PlanCheckInput(data=request.data, context=self.get_serializer_context())
        data.is_valid(raise_exception=True)
        chosen = dict(data.validated_data)
        length_m = chosen.pop("length_m", None)
        conflicts = plan_conflicts(job=job, chosen=chosen, length_m=length_m)
        return Response({"conflicts": [c.as_dict() for c in conflicts]})

    @extend_schema(request=SignInput, responses={201: RecordSerializer})
    @action(detail=True, methods=["post"], throttle_classes=[PasswordReentryThrottle])
    def sign(self, request: Request, pk: str | None = None) -> Response:
        """Sign the day's record: the supervisor re-enters their password and picks a meaning."""
        return sign_job(request, self.get_object())

    @extend_schema(responses=s.TransitionSerializer(many=True))
    @action(detail=True, methods=["get"])
    def transitions(self, request: Request, pk: str | None = None) -> Response:
        job = self.get_object()
        rows = job.transitions.select_related("by").order_by("at", "id")
        return Response(s.TransitionSerializer(rows, many=True).data)


class ChecklistViewSet(OrgScoped, mixins.CreateModelMixin, viewsets.ReadOnlyModelViewSet):
    serializer_class = s.ChecklistSerializer
    pagination_class = BoundedLimitOffset
    permission_classes = [SupervisorWrites]

    def get_queryset(self) -> QuerySet[Checklist]:
        return visible_checklists(self.org_id).prefetch_related(
            Prefetch("versions", queryset=ChecklistVersion.objects.order_by("number"))
        )

    def create(self, request: Request, *args: Any, **kwargs: Any) -> Response:
        data = self.get_serializer(data=request.data)
        data.is_valid(raise_exception=True)
        checklist = checklist_services.create_checklist(by=request.user, **data.validated_data)
        return Response(self.get_serializer(checklist).data, status=status.HTTP_201_CREATED)

    @extend_schema(
        request=s.ChecklistVersionSerializer, responses={201: s.ChecklistVersionSerializer}
    )
    @action(detail=True, methods=["post"])
    def versions(self, request: Request, pk: str | None = None) -> Response:
        """Start a draft version of one of the organisation's own checklists."""
        checklist = self.get_object()
        data = s.ChecklistVersionSerializer(data=request.data)
        data.is_valid(raise_exception=True)
        version = checklist_services.create_draft(
            checklist=checklist,
            items=data.validated_data["items"],
            by=request.user,
            notes=data.validated_data.get("notes", ""),
        )
        return Response(s.ChecklistVersionSerializer(version).data, status=status.HTTP_201_CREATED)


class ChecklistVersionViewSet(OrgScoped, mixins.UpdateModelMixin, viewsets.ReadOnlyModelViewSet):
    serializer_class = s.ChecklistVersionSerializer
    pagination_class = BoundedLimitOffset
    permission_classes = [SupervisorWrites]
    http_method_names = ["get", "patch", "post", "head", "options"]

    def get_queryset(self) -> QuerySet[ChecklistVersion]:
        qs = usable_versions(self.org_id)
        status_ = query_text(self.request.query_params, "status")
        return qs.filter(status=status_) if status_ else qs

    def partial_update(self, request: Request, *args: Any, **kwargs: Any) -> Response:
        version = self.get_object()
        data = self.get_serializer(version, data=request.data, partial=True)
        data.is_valid(raise_exception=True)
        version = checklist_services.update_draft(
            version=version, items=data.validated_data.get("items", version.items), by=request.user
        )
        return Response(self.get_serializer(version).data)

    @extend_schema(request=None)
    @action(detail=True, methods=["post"])
    def publish(self, request: Request, pk: str | None = None) -> Response:
        version = self.get_object()
        version = checklist_services.publish_version(version=version, by=request.user)
        return Response(self.get_serializer(version).data)

    @extend_schema(
        parameters=[OpenApiParameter("against", int, required=False)],
        responses=s.VersionDiffSerializer,
    )
    @action(detail=True, methods=["get"])
    def diff(self, request: Request, pk: str | None = None) -> Response:
        """Compare with ``?against=<version id>`` (default: the previous version)."""
        version = self.get_object()
        against = request.query_params.get("against")
        qs = self.get_queryset()
        if against:
            other = get_object_or_404(qs, pk=query_id(request.query_params, "against"))
        else:
            other = (
                qs.filter(checklist=version.checklist, number__lt=version.number)
                .order_by("-number")
                .first()
            )
            if other is None:
                return Response(
                    {"against": ["This is the first version; name one to compare."]}, status=400
                )
        return Response(
            s.VersionDiffSerializer(checklist_services.diff_versions(other, version)).data
        )


class SheetViewSet(OrgScoped, mixins.CreateModelMixin, viewsets.ReadOnlyModelViewSet):
    serializer_class = s.SheetSerializer
    pagination_class = BoundedLimitOffset
    permission_classes = [OrganisationMember]

    def get_queryset(self) -> QuerySet[Any]:
        qs = sheets_for(self.org_id).order_by("id")
        params = self.request.query_params
        for name in ("job", "site"):
            value = query_id(params, name)
            if value is not None:
                qs = qs.filter(**{f"job__{name}_id" if name == "site" else "job_id": value})
        start, end = query_period(params)
        if start is not None:
            qs = qs.filter(job__date__gte=start)
        if end is not None:
            qs = qs.filter(job__date__lte=end)
        return qs

    def list(self, request: Request, *args: Any, **kwargs: Any) -> Response:
        """The sheets with their entries. The entries are read as plain rows in one query and
        attached to the page: an auditor's site-month is thousands of them, and a serializer
        per entry cost ten times the database's time. The answer is the same as the detail's."""
        sheets = self.paginate_queryset(
            self.get_queryset().prefetch_related(None).defer("version__items")
        )
        assert sheets is not None  # the view always paginates
        rows = entry_rows([sheet.pk for sheet in sheets], s.ENTRY_FIELDS)
        heads = s.SheetHeadSerializer(sheets, many=True).data
        return self.get_paginated_response(
            [{**head, "entries": rows.get(head["id"], [])} for head in heads]
        )

    @extend_schema(
        request=s.SheetInputSerializer, responses={201: s.SheetSerializer, 200: s.SheetSerializer}
    )
    def create(self, request: Request, *args: Any, **kwargs: Any) -> Response:
        """Record a filled sheet; the same sheet sent again under its client_uuid returns the
        stored copy, and other content under a used client_uuid is refused (400)."""
        data = s.SheetInputSerializer(data=request.data, context=self.get_serializer_context())
        data.is_valid(raise_exception=True)
        fields = dict(data.validated_data)
        offset = clock_offset(fields.pop("sent_at", None))
        # As sent, for the receipt's digest: the fields of a batch record's data (when it was
        # sent is the batch's, not the record's: a sheet sent again later is the same record).
        content = {
            key: value
            for key, value in request.data.items()
            if key not in ("client_uuid", "sent_at")
        }
        sheet, created = record_posted_sheet(
            by=request.user, content=content, phone_clock_offset_s=offset, **fields
        )
        # Read back past the list's ?job= filter: the sheet is stored, whatever the URL says.
        sheet = sheets_for(self.org_id).get(pk=sheet.pk)
        return Response(
            s.SheetSerializer(sheet).data,
            status=status.HTTP_201_CREATED if created else status.HTTP_200_OK,
        )


@extend_schema(
    request=inline_serializer("CalcInput", {"vacuum_kpa": serializers.FloatField(required=False)}),
    responses=inline_serializer("CalcResult", {"verdict": serializers.CharField()}),
)
@api_view(["POST"])
@permission_classes([OrganisationMember | ReadOnlyCalc])
def calculate(request: Request, name: str) -> Response:
    """Run a named calculation on the JSON object posted; the answer shows its working."""
    if name not in CALCULATIONS:
        return Response(
            {"detail": f"No calculation named {name!r}.", "calculations": sorted(CALCULATIONS)},
            status=status.HTTP_404_NOT_FOUND,
        )
    if not isinstance(request.data, dict):
        return Response(
            {"non_field_errors": ["Send a JSON object of inputs."]},
            status=status.HTTP_400_BAD_REQUEST,
        )
    try:
        result = run(name, dict(request.data))
    except CalcInputError as exc:
        # The field may be any name that was sent; echoed as it is, a lone surrogate in it
        # would make the answer unwritable.
        return Response(
            {printable(exc.field): [printable(exc.message)]}, status=status.HTTP_400_BAD_REQUEST
        )
    return Response(result.to_dict())

"""Daily records over HTTP: sign-off, addenda, PDFs, verification uploads and exports."""

import datetime as dt
import json
import logging
from typing import Any

from django.db import transaction
from django.db.models import QuerySet
from django.http import FileResponse, HttpResponse
from drf_spectacular.utils import OpenApiParameter, extend_schema, inline_serializer
from rest_framework import serializers, status, viewsets
from rest_framework.decorators import action, api_view, parser_classes, permission_classes
from rest_framework.permissions import IsAuthenticated
from rest_framework.request import Request
from rest_framework.response import Response

from compliance.api.fields import DAY, StrictInput, parse_day, query_id, query_period
from compliance.api.parsers import MultiPartParser
from compliance.api.permissions import OrganisationMember
from compliance.api.throttles import PasswordReentryThrottle
from compliance.errors import NotPermitted, PdfsPending
from compliance.models import DailyRecord, RecordPdf
from compliance.records.checks import verify_export, verify_pdf
from compliance.records.exports import build_export, export_scope
from compliance.records.services import MEANINGS, add_addendum, sign_daily_record
from compliance.tasks import queue_render

MAX_UPLOAD = 50 * 1024 * 1024
PDF_RETRY_AFTER_S = 5

logger = logging.getLogger(__name__)


class SignInput(StrictInput, serializers.Serializer):
    password = serializers.CharField(max_length=256, trim_whitespace=False)
    meaning = serializers.ChoiceField(choices=sorted(MEANINGS))
    remarks = serializers.CharField(required=False, allow_blank=True, max_length=4000)


class AddendumInput(StrictInput, serializers.Serializer):
    password = serializers.CharField(max_length=256, trim_whitespace=False)
    text = serializers.CharField(max_length=8000)
    client_uuid = serializers.UUIDField(
        required=False,
        help_text="The request's own id: sent again after a lost answer, it adds nothing twice.",
    )


class RecordSerializer(serializers.ModelSerializer):
    date = serializers.SerializerMethodField()
    pdf_ready = serializers.SerializerMethodField()

    class Meta:
        model = DailyRecord
        fields = [
            "id",
            "kind",
            "site",
            "job",
            "date",
            "amends",
            "sequence",
            "previous_seal",
            "seal",
            "signer_name",
            "signer_role",
            "meaning",
            "signed_at",
            "pdf_ready",
        ]

    def get_date(self, record: DailyRecord) -> str:
        return record.job.date.isoformat()

    def get_pdf_ready(self, record: DailyRecord) -> bool:
        """False while the PDF renders: GET .../pdf/ answers 202 until then."""
        return hasattr(record, "pdf")


class SignerSerializer(serializers.Serializer):
    subject = serializers.CharField()
    fingerprint_sha256 = serializers.CharField()
    organisation = serializers.CharField()


class CheckSerializer(serializers.Serializer):
    name = serializers.CharField()
    ok = serializers.BooleanField()
    detail = serializers.CharField()


class VerifyReportSerializer(serializers.Serializer):
    """The verifier's answer: VERIFIED only when intact and vouched for by a trust anchor."""

    ok = serializers.BooleanField()
    intact = serializers.BooleanField()
    vouched = serializers.BooleanField()
    verdict = serializers.CharField()
    seal = serializers.CharField(allow_null=True)
    signer = SignerSerializer(allow_null=True)
    trust = serializers.CharField()
    checks = CheckSerializer(many=True)


PDF_RENDERING = inline_serializer(
    "PdfRendering", {"status": serializers.CharField(), "detail": serializers.CharField()}
)
"""The answer while a record's PDF is being rendered (202, with Retry-After)."""


class RecordViewSet(viewsets.ReadOnlyModelViewSet):
    serializer_class = RecordSerializer
    permission_classes = [OrganisationMember]

    def get_queryset(self) -> QuerySet[DailyRecord]:
        org = getattr(self.request.user, "organisation_id", None)
        qs = DailyRecord.objects.filter(organisation_id=org)
        for name in ("site", "job"):
            value = query_id(self.request.query_params, name)
            if value is not None:
                qs = qs.filter(**{f"{name}_id": value})
        start, end = query_period(self.request.query_params)
        if start is not None:
            qs = qs.filter(job__date__gte=start)
        if end is not None:
            qs = qs.filter(job__date__lte=end)
        return qs.select_related("job", "pdf").order_by("site_id", "sequence")

    def retrieve(self, request: Request, *args: Any, **kwargs: Any) -> Response:
        record = self.get_object()
        return Response(
            {**self.get_serializer(record).data, "document": json.loads(record.canonical_json)}
        )

    @extend_schema(
        responses={
            (200, "application/pdf"): bytes,
            202: PDF_RENDERING,
        }
    )
    @action(detail=True, methods=["get"])
    def pdf(self, request: Request, pk: str | None = None) -> HttpResponse:
        """The signed PDF; while it is being rendered, 202 with Retry-After (never rendered in
        the request: a missing PDF is queued for the background render)."""
        record = self.get_object()
        stored = RecordPdf.objects.filter(record=record).first()
        if stored is None:
            return self._rendering(record)
        response = FileResponse(stored.file.open("rb"), content_type="application/pdf")
        response["Content-Disposition"] = (
            f'attachment; filename="daily-record-{record.site_id}-{record.sequence}.pdf"'
        )
        return response

    def _rendering(self, record: DailyRecord) -> Response:
        """No PDF yet: queue its render and say when to ask again."""
        queue_render(record.pk)
        response = Response(
            {
                "status": "rendering",
                "detail": "The record is sealed; its PDF is being rendered. Ask again "
                f"in {PDF_RETRY_AFTER_S} seconds.",
            },
            status=status.HTTP_202_ACCEPTED,
        )
        response["Retry-After"] = str(PDF_RETRY_AFTER_S)
        return response

    @extend_schema(responses={200: VerifyReportSerializer, 202: PDF_RENDERING})
    @action(detail=True, methods=["get"])
    def verify(self, request: Request, pk: str | None = None) -> Response:
        """The server's check of the stored record's signed PDF, as an auditor's upload of it
        would be checked (with the database and the organisation's registered certificates);
        202 while the PDF is being rendered."""
        record = self.get_object()
        stored = RecordPdf.objects.filter(record=record).first()
        if stored is None:
            return self._rendering(record)
        with stored.file.open("rb") as handle:
            content = handle.read()
        name = f"daily record {record.site_id}-{record.sequence}"
        return Response(VerifyReportSerializer(verify_pdf(content, name=name).as_dict()).data)

    @extend_schema(request=AddendumInput, responses={201: RecordSerializer})
    @action(detail=True, methods=["post"], throttle_classes=[PasswordReentryThrottle])
    def addenda(self, request: Request, pk: str | None = None) -> Response:
        record = self.get_object()
        data = AddendumInput(data=request.data)
        data.is_valid(raise_exception=True)
        client_uuid = data.validated_data.get("client_uuid")
        again = (
            client_uuid is not None
            and DailyRecord.objects.filter(
                organisation_id=record.organisation_id, client_uuid=client_uuid
            ).exists()
        )
        addendum = add_addendum(record=record, by=request.user, **data.validated_data)
        return Response(
            RecordSerializer(addendum).data,
            status=status.HTTP_200_OK if again else status.HTTP_201_CREATED,
        )

    @extend_schema(
        parameters=[
            OpenApiParameter("site", int),
            OpenApiParameter("start", dt.date),
            OpenApiParameter("end", dt.date),
        ],
        responses={(200, "application/zip"): bytes},
    )
    @action(detail=False, methods=["get"])
    def export(self, request: Request) -> HttpResponse:
        """All signed PDFs of a site and period plus a manifest that verifies offline."""
        errors: dict[str, list[str]] = {}
        site_id = query_id(request.query_params, "site")
        scope = None
        if site_id is not None:
            try:
                scope = export_scope(user=request.user, site_id=site_id)
            except NotPermitted:
                scope = None
        if scope is None:
            errors["site"] = ["Unknown site."]
        dates: dict[str, dt.date] = {}
        for name in ("start", "end"):
            day = parse_day(request.query_params.get(name, ""))
            if day is None:
                errors[name] = [DAY]
            else:
                dates[name] = day
        if errors:
            return Response(errors, status=status.HTTP_400_BAD_REQUEST)
        assert scope is not None
        try:
            data = build_export(
                scope=scope, by=request.user, start=dates["start"], end=dates["end"]
            )
        except PdfsPending as pending:
            for record_id in pending.record_ids:
                queue_render(record_id)
            response = Response(
                {
                    "status": "rendering",
                    "detail": f"{len(pending.record_ids)} of the period's record PDFs are being"
                    f" rendered. Ask again in {PDF_RETRY_AFTER_S} seconds.",
                },
                status=status.HTTP_202_ACCEPTED,
            )
            response["Retry-After"] = str(PDF_RETRY_AFTER_S)
            return response
        response = HttpResponse(data, content_type="application/zip")
        response["Content-Disposition"] = (
            f'attachment; filename="records-{scope.site.pk}-{dates["start"]}-{dates["end"]}.zip"'
        )
        return response


def sign_job(request: Request, job: Any) -> Response:
    """Seal and sign the day: 201 with the sealed record once it is committed, whether its
    PDF rendered, is still rendering or failed to render (the render is retried apart)."""
    data = SignInput(data=request.data)
    data.is_valid(raise_exception=True)
    record = None
    try:
        # The render is queued when this block commits; whatever happens in it after the
        # commit is the render's business, not the signature's.
        with transaction.atomic():
            record = sign_daily_record(job=job, by=request.user, **data.validated_data)
    except Exception:
        if record is None or not DailyRecord.objects.filter(pk=record.pk).exists():
            raise
        logger.exception("record %s is sealed; queueing its render failed", record.pk)
    return Response(RecordSerializer(record).data, status=status.HTTP_201_CREATED)


class VerifyAllowed(IsAuthenticated):
    """Verifying changes nothing: any signed-in member, auditors included."""

    def has_permission(self, request: Request, view: Any) -> bool:
        return super().has_permission(request, view) and bool(request.user.organisation_id)


class VerifyInput(serializers.Serializer):
    file = serializers.FileField()


@extend_schema(
    request={"multipart/form-data": VerifyInput},
    responses=VerifyReportSerializer,
)
@api_view(["POST"])
@permission_classes([VerifyAllowed])
@parser_classes([MultiPartParser])
def verify(request: Request) -> Response:
    """Upload a record PDF or an export ZIP; answers a plain-language verdict and each check."""
    data = VerifyInput(data=request.data)
    data.is_valid(raise_exception=True)
    upload = data.validated_data["file"]
    if upload.size > MAX_UPLOAD:
        return Response({"file": ["At most 50 MB."]}, status=status.HTTP_400_BAD_REQUEST)
    content = upload.read()
    report = (
        verify_export(content, use_database=True)
        if content[:2] == b"PK"
        else verify_pdf(content, name=upload.name)
    )
    return Response(VerifyReportSerializer(report.as_dict()).data)

"""The anchor log book over HTTP: its signed entries and its PDF."""

import json
from typing import Any

from django.db.models import QuerySet
from django.http import HttpResponse
from django.shortcuts import get_object_or_404
from drf_spectacular.utils import OpenApiParameter, extend_schema
from rest_framework import mixins, serializers, status, viewsets
from rest_framework.decorators import action
from rest_framework.request import Request
from rest_framework.response import Response

from compliance.anchor_log.document import signed_anchor_log
from compliance.anchor_log.services import SIGNED_KINDS, record_entry
from compliance.api.fields import IdField, PlausibleDateField, StrictInput, query_id
from compliance.api.pagination import BoundedLimitOffset
from compliance.api.permissions import OrganisationMember
from compliance.api.throttles import PasswordReentryThrottle
from compliance.models import AnchorLogEntry
from compliance.registers.visibility import (
    anchors_visible_to,
    sites_visible_to,
)


class LogEntrySerializer(serializers.ModelSerializer):
    anchor_label = serializers.CharField(source="anchor.label", read_only=True)
    recorded_by = serializers.CharField(source="recorded_by.display_name", read_only=True)
    organisation = serializers.CharField(source="organisation.name", read_only=True)
    document = serializers.SerializerMethodField()

    class Meta:
        model = AnchorLogEntry
        fields = [
            "id",
            "site",
            "anchor",
            "anchor_label",
            "sequence",
            "kind",
            "result",
            "performed_on",
            "performed_by",
            "performed_by_company",
            "details",
            "sheet",
            "organisation",
            "recorded_by",
            "meaning",
            "signed_at",
            "seal",
            "previous_seal",
            "document",
        ]

    def get_document(self, entry: AnchorLogEntry) -> dict[str, Any]:
        return json.loads(entry.canonical_json)


class LogEntryInput(StrictInput, serializers.Serializer):
    anchor = IdField(queryset=AnchorLogEntry.objects.none())
    kind = serializers.ChoiceField(choices=[str(k) for k in SIGNED_KINDS])
    result = serializers.ChoiceField(choices=AnchorLogEntry.Result.choices, default="none")
    performed_on = PlausibleDateField()
    performed_by = serializers.CharField(max_length=200, required=False, allow_blank=True)
    performed_by_company = serializers.CharField(max_length=200, required=False, allow_blank=True)
    details = serializers.CharField(max_length=4000)
    password = serializers.CharField(max_length=256, trim_whitespace=False)

    def __init__(self, *args: Any, **kwargs: Any) -> None:
        super().__init__(*args, **kwargs)
        request = self.context.get("request")
        org = getattr(getattr(request, "user", None), "organisation_id", None)
        self.fields["anchor"].queryset = anchors_visible_to(org).select_related("site")


class AnchorLogViewSet(mixins.CreateModelMixin, viewsets.ReadOnlyModelViewSet):
    """Entries of the anchor log books the user may see; new entries are signed."""

    serializer_class = LogEntrySerializer
    pagination_class = BoundedLimitOffset
    permission_classes = [OrganisationMember]
    throttle_classes = [PasswordReentryThrottle]

    def get_queryset(self) -> QuerySet[AnchorLogEntry]:
        org = getattr(self.request.user, "organisation_id", None)
        qs = AnchorLogEntry.objects.filter(site__in=sites_visible_to(org)).select_related(
            "anchor", "recorded_by", "organisation"
        )
        for name in ("site", "anchor"):
            value = query_id(self.request.query_params, name)
            if value is not None:
                qs = qs.filter(**{f"{name}_id": value})
        return qs.order_by("site_id", "sequence")

    @extend_schema(request=LogEntryInput, responses={201: LogEntrySerializer})
    def create(self, request: Request, *args: Any, **kwargs: Any) -> Response:
        data = LogEntryInput(data=request.data, context={"request": request})
        data.is_valid(raise_exception=True)
        entry = record_entry(by=request.user, **data.validated_data)
        return Response(LogEntrySerializer(entry).data, status=status.HTTP_201_CREATED)

    @extend_schema(
        parameters=[
            OpenApiParameter("site", int, required=True),
            OpenApiParameter("anchor", int, required=False),
        ],
        responses={(200, "application/pdf"): bytes},
    )
    @action(detail=False, methods=["get"], url_path="pdf")
    def pdf(self, request: Request) -> HttpResponse:
        """The signed PDF of a site's anchor log book (``?site=ID``; ``&anchor=ID`` for one
        anchor)."""
        site_id = query_id(request.query_params, "site")
        if site_id is None:
            raise serializers.ValidationError({"site": ["A site id is required."]})
        site = get_object_or_404(
            sites_visible_to(request.user.organisation_id).select_related("profile"), pk=site_id
        )
        anchor = None
        anchor_id = query_id(request.query_params, "anchor")
        if anchor_id is not None:
            anchor = get_object_or_404(site.anchors.all(), pk=anchor_id)
        pdf, seal = signed_anchor_log(site, request.user, anchor)
        response = HttpResponse(pdf, content_type="application/pdf")
        response["Content-Disposition"] = (
            f'attachment; filename="anchor-log-{site.pk}-{seal[:12]}.pdf"'
        )
        return response

"""The anchor log book and site access grants over HTTP."""

import json
from typing import Any

from django.db.models import QuerySet
from django.http import HttpResponse
from django.shortcuts import get_object_or_404
from drf_spectacular.utils import extend_schema
from rest_framework import mixins, serializers, status, viewsets
from rest_framework.decorators import api_view, permission_classes
from rest_framework.request import Request
from rest_framework.response import Response

from compliance.access import (
    anchors_visible_to,
    grantable_contractors,
    owns_site,
    sites_visible_to,
)
from compliance.anchor_log import SIGNED_KINDS, record_entry
from compliance.api.fields import IdField, PlausibleDateField, StrictInput, query_id
from compliance.api.pagination import BoundedLimitOffset
from compliance.api.permissions import OrganisationMember
from compliance.api.throttles import PasswordReentryThrottle
from compliance.log_book import signed_log_book
from compliance.models import AnchorLogEntry, Organisation, SiteAccess
from compliance.services import UNKNOWN_CONTRACTOR, end_grant, grant_site_access


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


class GrantSerializer(StrictInput, serializers.ModelSerializer):
    """A grant; on input the contractor is looked up only among the organisations the site's
    owner may grant to, so an owner's id reads exactly like one that does not exist."""

    contractor = IdField(
        queryset=Organisation.objects.none(),
        error_messages={
            "does_not_exist": UNKNOWN_CONTRACTOR,
            "incorrect_type": "An organisation id (a whole number).",
        },
    )
    contractor_name = serializers.CharField(source="contractor.name", read_only=True)
    ended_at = serializers.DateTimeField(source="end.ended_at", read_only=True, default=None)
    starts_on = PlausibleDateField()
    ends_on = PlausibleDateField()

    class Meta:
        model = SiteAccess
        fields = [
            "id",
            "site",
            "contractor",
            "contractor_name",
            "starts_on",
            "ends_on",
            "granted_at",
            "ended_at",
        ]
        read_only_fields = ["site", "granted_at"]

    def __init__(self, *args: Any, **kwargs: Any) -> None:
        super().__init__(*args, **kwargs)
        site = self.context.get("site")
        if site is not None:
            self.fields["contractor"].queryset = grantable_contractors(site)

    def validate(self, attrs: dict[str, Any]) -> dict[str, Any]:
        if attrs["ends_on"] < attrs["starts_on"]:
            raise serializers.ValidationError({"ends_on": "Must not be before starts_on."})
        return attrs


@extend_schema(request=GrantSerializer, responses=GrantSerializer(many=True))
@api_view(["GET", "POST"])
@permission_classes([OrganisationMember])
def site_grants(request: Request, pk: int) -> Response:
    """The owner lists and grants contractors' access to its site."""
    site = get_object_or_404(sites_visible_to(request.user.organisation_id), pk=pk)
    if not owns_site(request.user.organisation_id, site):
        return Response({"detail": "Only the site's owner manages access."}, status=403)
    if request.method == "POST":
        data = GrantSerializer(data=request.data, context={"site": site})
        data.is_valid(raise_exception=True)
        grant = grant_site_access(site=site, by=request.user, **data.validated_data)
        return Response(GrantSerializer(grant).data, status=status.HTTP_201_CREATED)
    grants = (
        SiteAccess.objects.filter(site=site)
        .select_related("contractor", "end")
        .order_by("starts_on", "id")
    )
    return Response(GrantSerializer(grants, many=True).data)


class EndGrantInput(StrictInput, serializers.Serializer):
    reason = serializers.CharField(required=False, allow_blank=True, max_length=2000)


@extend_schema(request=EndGrantInput, responses=GrantSerializer)
@api_view(["POST"])
@permission_classes([OrganisationMember])
def end_site_grant(request: Request, pk: int, grant_pk: int) -> Response:
    """The owner ends a grant now; the contractor loses the site at once."""
    site = get_object_or_404(sites_visible_to(request.user.organisation_id), pk=pk)
    if not owns_site(request.user.organisation_id, site):
        return Response({"detail": "Only the site's owner manages access."}, status=403)
    grant = get_object_or_404(SiteAccess.objects.filter(site=site), pk=grant_pk)
    data = EndGrantInput(data=request.data)
    data.is_valid(raise_exception=True)
    end_grant(grant=grant, by=request.user, reason=data.validated_data.get("reason", ""))
    grant = SiteAccess.objects.select_related("contractor", "end").get(pk=grant.pk)
    return Response(GrantSerializer(grant).data)


@extend_schema(responses={(200, "application/pdf"): bytes})
@api_view(["GET"])
@permission_classes([OrganisationMember])
def log_book_pdf(request: Request, pk: int) -> HttpResponse:
    """The signed PDF of the site's anchor log book (``?anchor=ID`` for one anchor)."""
    site = get_object_or_404(
        sites_visible_to(request.user.organisation_id).select_related("profile"), pk=pk
    )
    anchor = None
    anchor_id = query_id(request.query_params, "anchor")
    if anchor_id is not None:
        anchor = get_object_or_404(site.anchors.all(), pk=anchor_id)
    pdf, seal = signed_log_book(site, request.user, anchor)
    response = HttpResponse(pdf, content_type="application/pdf")
    response["Content-Disposition"] = f'attachment; filename="anchor-log-{site.pk}-{seal[:12]}.pdf"'
    return response

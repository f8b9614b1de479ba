"""Access grants over HTTP: the site's owner lets a contractor organisation work there for a
period, and ends that grant."""

from typing import Any

from django.shortcuts import get_object_or_404
from drf_spectacular.utils import extend_schema
from rest_framework import serializers, status
from rest_framework.decorators import api_view, permission_classes
from rest_framework.request import Request
from rest_framework.response import Response

from compliance.api.fields import IdField, PlausibleDateField, StrictInput
from compliance.api.permissions import OrganisationMember
from compliance.models import Organisation, SiteGrant
from compliance.registers.services import UNKNOWN_CONTRACTOR, end_grant, give_grant
from compliance.registers.visibility import grantable_contractors, owns_site, sites_visible_to


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
    ended_reason = serializers.CharField(source="end.reason", read_only=True, default=None)
    starts_on = PlausibleDateField()
    ends_on = PlausibleDateField()

    class Meta:
        model = SiteGrant
        fields = [
            "id",
            "site",
            "contractor",
            "contractor_name",
            "starts_on",
            "ends_on",
            "granted_at",
            "ended_at",
            "ended_reason",
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
        grant = give_grant(site=site, by=request.user, **data.validated_data)
        return Response(GrantSerializer(grant).data, status=status.HTTP_201_CREATED)
    grants = (
        SiteGrant.objects.filter(site=site)
        .select_related("contractor", "end")
        .order_by("starts_on", "id")
    )
    return Response(GrantSerializer(grants, many=True).data)


class EndedGrantSerializer(GrantSerializer):
    """A grant just ended, with how many of the contractor's jobs at work at the site stopped
    (a count only: the owner reads none of the contractor's jobs)."""

    work_stopped = serializers.IntegerField(read_only=True)

    class Meta(GrantSerializer.Meta):
        fields = [*GrantSerializer.Meta.fields, "work_stopped"]


class EndGrantInput(StrictInput, serializers.Serializer):
    reason = serializers.CharField(required=False, allow_blank=True, max_length=2000)


@extend_schema(request=EndGrantInput, responses=EndedGrantSerializer)
@api_view(["POST"])
@permission_classes([OrganisationMember])
def end_site_grant(request: Request, pk: int, grant_pk: int) -> Response:
    """The owner ends a grant now; the contractor loses the site at once."""
    site = get_object_or_404(sites_visible_to(request.user.organisation_id), pk=pk)
    if not owns_site(request.user.organisation_id, site):
        return Response({"detail": "Only the site's owner manages access."}, status=403)
    grant = get_object_or_404(SiteGrant.objects.filter(site=site), pk=grant_pk)
    data = EndGrantInput(data=request.data)
    data.is_valid(raise_exception=True)
    ended = end_grant(grant=grant, by=request.user, reason=data.validated_data.get("reason", ""))
    grant = SiteGrant.objects.select_related("contractor", "end").get(pk=grant.pk)
    return Response({**GrantSerializer(grant).data, "work_stopped": ended.work_stopped})

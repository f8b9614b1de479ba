"""Due dates over HTTP: the due list, the person's calendar address, and the feed itself."""

from collections.abc import Mapping

from django.http import Http404, HttpRequest, HttpResponse
from django.urls import reverse
from django.utils import timezone
from drf_spectacular.types import OpenApiTypes
from drf_spectacular.utils import OpenApiParameter, extend_schema, inline_serializer
from rest_framework import serializers, status
from rest_framework.decorators import api_view, permission_classes
from rest_framework.permissions import BasePermission
from rest_framework.request import Request
from rest_framework.response import Response

from compliance.api.permissions import OrganisationMember
from compliance.due.calendar import FEED_DAYS, create_feed, render_feed, revoke_feeds
from compliance.due.selectors import (
    CAUTION,
    DEFAULT_WITHIN_DAYS,
    MAX_WITHIN_DAYS,
    DueItem,
    due_items,
    feed_of,
    live_feed,
)
from compliance.models import User


class DueItemSerializer(serializers.Serializer):
    kind = serializers.ChoiceField(
        choices=["anchor_certificate", "equipment_inspection", "unsigned_day"]
    )
    uid = serializers.CharField()
    subject = serializers.CharField()
    due_on = serializers.DateField()
    days_left = serializers.IntegerField()
    state = serializers.CharField()
    site = serializers.IntegerField(source="site_id", allow_null=True)
    anchor = serializers.IntegerField(source="anchor_id", allow_null=True)
    equipment = serializers.IntegerField(source="equipment_id", allow_null=True)
    job = serializers.IntegerField(source="job_id", allow_null=True)


DueList = inline_serializer(
    "DueList",
    {
        "today": serializers.DateField(),
        "within_days": serializers.IntegerField(),
        "items": DueItemSerializer(many=True),
        "caution": serializers.CharField(),
    },
)


def query_within(params: Mapping[str, str]) -> int:
    """`within` as whole days, 0 to MAX_WITHIN_DAYS; absent or empty is the default, anything
    else a 400 naming it."""
    value = params.get("within")
    if not value:
        return DEFAULT_WITHIN_DAYS
    whole = value.isascii() and value.isdigit() and len(value) <= 3
    if not whole or int(value) > MAX_WITHIN_DAYS:
        raise serializers.ValidationError({"within": [f"Whole days from 0 to {MAX_WITHIN_DAYS}."]})
    return int(value)


@extend_schema(
    parameters=[
        OpenApiParameter(
            "within",
            OpenApiTypes.INT,
            description=f"Days ahead, 0 to {MAX_WITHIN_DAYS} (default {DEFAULT_WITHIN_DAYS}).",
        )
    ],
    responses=DueList,
)
@api_view(["GET"])
@permission_classes([OrganisationMember])
def due_list(request: Request) -> Response:
    """What falls due for your organisation within the window, overdue first, by date."""
    within = query_within(request.query_params)
    today = timezone.localdate()
    items: list[DueItem] = due_items(request.user.organisation_id, today=today, within_days=within)
    return Response(
        {
            "today": today,
            "within_days": within,
            "items": DueItemSerializer(items, many=True).data,
            "caution": CAUTION,
        }
    )


class PersonalSetting(BasePermission):
    """Any member, auditors too: a calendar address changes nothing but who reads one's own
    organisation's dates."""

    message = "You need to sign in as a member of an organisation."

    def has_permission(self, request: Request, view: object) -> bool:
        user = request.user
        return isinstance(user, User) and user.is_authenticated and bool(user.organisation_id)


class CalendarStateSerializer(serializers.Serializer):
    live = serializers.BooleanField()
    created_at = serializers.DateTimeField(allow_null=True)


@extend_schema(
    request=None,
    responses={
        200: CalendarStateSerializer,
        201: inline_serializer("CalendarAddress", {"url": serializers.URLField()}),
        204: None,
    },
)
@api_view(["GET", "POST", "DELETE"])
@permission_classes([PersonalSetting])
def my_calendar(request: Request) -> Response:
    """GET: whether you have a live calendar address and since when (never the address: only
    its digest is kept). POST: a new secret calendar address (shown this once), revoking the
    old one. DELETE: revoke it. Whoever holds the address reads your organisation's due dates."""
    if request.method == "GET":
        feed = feed_of(request.user.pk)
        return Response({"live": feed is not None, "created_at": feed.created_at if feed else None})
    if request.method == "DELETE":
        revoke_feeds(user=request.user)
        return Response(status=status.HTTP_204_NO_CONTENT)
    _, token = create_feed(user=request.user)
    url = request.build_absolute_uri(reverse("calendar-feed", args=[token]))
    return Response({"url": url}, status=status.HTTP_201_CREATED)


def calendar_feed(request: HttpRequest, token: str) -> HttpResponse:
    """The feed a calendar program fetches: no session, the address is the key; an unknown or
    revoked one is a 404 like any missing page."""
    if request.method not in ("GET", "HEAD"):
        return HttpResponse(status=405, headers={"Allow": "GET, HEAD"})
    feed = live_feed(token)
    if feed is None:
        raise Http404("No such calendar.")
    organisation = feed.user.organisation
    assert organisation is not None  # live_feed only returns feeds of people in one
    items = due_items(organisation.pk, today=timezone.localdate(), within_days=FEED_DAYS)
    body = render_feed(
        items, calendar_name=f"Parapet due dates: {organisation.name}", now=timezone.now()
    )
    response = HttpResponse(body, content_type="text/calendar; charset=utf-8")
    response["Cache-Control"] = "private, max-age=900"
    response["Referrer-Policy"] = "no-referrer"
    return response

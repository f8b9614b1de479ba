"""Who may see a site: its owner, and contractors holding a grant that covers the day."""

import datetime as dt

from django.db.models import Exists, OuterRef, Q, QuerySet
from django.utils import timezone

from compliance.models import Anchor, Site, SiteAccess


def _grant(organisation_id: int | None, day: dt.date) -> Exists:
    return Exists(
        SiteAccess.objects.filter(
            site=OuterRef("pk"), contractor_id=organisation_id, starts_on__lte=day, ends_on__gte=day
        )
    )


def sites_visible_to(organisation_id: int | None, day: dt.date | None = None) -> QuerySet[Site]:
    day = day or timezone.localdate()
    return Site.objects.filter(Q(organisation_id=organisation_id) | _grant(organisation_id, day))


def anchors_visible_to(organisation_id: int | None, day: dt.date | None = None) -> QuerySet[Anchor]:
    return Anchor.objects.filter(site__in=sites_visible_to(organisation_id, day))


def can_work_at(organisation_id: int | None, site: Site, day: dt.date) -> bool:
    if site.organisation_id == organisation_id:
        return True
    return SiteAccess.objects.filter(
        site=site, contractor_id=organisation_id, starts_on__lte=day, ends_on__gte=day
    ).exists()

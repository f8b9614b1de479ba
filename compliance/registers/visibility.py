"""Who may see a site: its owner, and contractors holding a grant that covers the day.

Seeing a site is not owning it: only the owner certifies its anchors, signs its anchor log book
and grants access; a contractor under a grant works there and records its own pre-use checks.
"""

import datetime as dt

from django.db.models import Exists, OuterRef, Q, QuerySet
from django.utils import timezone

from compliance.models import Anchor, Organisation, Site, SiteGrant


def live_grants(day: dt.date) -> QuerySet[SiteGrant]:
    """Grants that cover the day and that their owner has not ended."""
    return SiteGrant.objects.filter(starts_on__lte=day, ends_on__gte=day, end__isnull=True)


def _grant(organisation_id: int | None, day: dt.date) -> Exists:
    return Exists(live_grants(day).filter(site=OuterRef("pk"), contractor_id=organisation_id))


def sites_visible_to(organisation_id: int | None, day: dt.date | None = None) -> QuerySet[Site]:
    day = day or timezone.localdate()
    return Site.objects.filter(Q(organisation_id=organisation_id) | _grant(organisation_id, day))


def anchors_visible_to(organisation_id: int | None, day: dt.date | None = None) -> QuerySet[Anchor]:
    return Anchor.objects.filter(site__in=sites_visible_to(organisation_id, day))


def can_work_at(organisation_id: int | None, site: Site, day: dt.date) -> bool:
    if site.organisation_id == organisation_id:
        return True
    return live_grants(day).filter(site=site, contractor_id=organisation_id).exists()


def owns_site(organisation_id: int | None, site: Site) -> bool:
    """The site's own organisation: its owner, or the contractor that registered it."""
    return organisation_id is not None and site.organisation_id == organisation_id


def grantable_contractors(site: Site) -> QuerySet[Organisation]:
    """Who the site's owner may grant access to: contractor organisations other than itself."""
    return Organisation.objects.filter(kind=Organisation.Kind.CONTRACTOR).exclude(
        pk=site.organisation_id
    )

"""Who may see a site: its owner, and contractors holding a grant that covers the day.

Seeing a site is not owning it: only the owner certifies its anchors, signs its anchor log book
and grants access; a contractor under a grant works there and records its own pre-use checks.
"""

import datetime as dt

from django.db.models import Exists, OuterRef, Q, QuerySet
from django.utils import timezone

from compliance.models import Anchor, Drop, Organisation, Site, SiteGrant, SiteGrantEnd


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


def anchors_checkable_by(organisation_id: int | None) -> QuerySet[Anchor]:
    """The anchors a crew may send a check of: those it sees today, and those its own jobs'
    drops hang from, whatever its access now (a crack found before the owner ended its grant,
    sent once back in signal, is kept, with its hold and the owner's log book entry; the
    sheet's own rules still want the anchor on that job's drops)."""
    drops = Drop.objects.filter(job__organisation_id=organisation_id)
    return Anchor.objects.filter(
        Q(site__in=sites_visible_to(organisation_id))
        | Q(pk__in=drops.values("anchor"))
        | Q(pk__in=drops.values("safety_anchor"))
    )


def can_work_at(organisation_id: int | None, site: Site, day: dt.date) -> bool:
    if site.organisation_id == organisation_id:
        return True
    return live_grants(day).filter(site=site, contractor_id=organisation_id).exists()


def access_words(organisation_id: int | None, site: Site, day: dt.date) -> str:
    """Why the organisation may not work at the site on the day, in words: the owner ended a
    grant that covered it (who, when and the reason given, as the day's record keeps them), or
    no grant covers it."""
    ended = (
        SiteGrantEnd.objects.filter(
            grant__site=site,
            grant__contractor_id=organisation_id,
            grant__starts_on__lte=day,
            grant__ends_on__gte=day,
        )
        .select_related("ended_by")
        .order_by("-ended_at", "-pk")
        .first()
    )
    if ended is None:
        return "The building owner's access grant does not cover this day."
    when = timezone.localtime(ended.ended_at)
    reason = ended.reason.strip()
    return (
        f"The building's owner ended access to the site on {when:%Y-%m-%d} at {when:%H:%M}"
        f" ({ended.ended_by.display_name})" + (f": {reason}" if reason else ".")
    )


def owns_site(organisation_id: int | None, site: Site) -> bool:
    """The site's own organisation: its owner, or the contractor that registered it."""
    return organisation_id is not None and site.organisation_id == organisation_id


def grantable_contractors(site: Site) -> QuerySet[Organisation]:
    """Who the site's owner may grant access to: contractor organisations other than itself."""
    return Organisation.objects.filter(kind=Organisation.Kind.CONTRACTOR).exclude(
        pk=site.organisation_id
    )

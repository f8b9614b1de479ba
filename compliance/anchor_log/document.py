"""The printable, signed anchor log book of a site: every entry, and a roof plan drawn from data."""

import json
from typing import Any

from django.conf import settings
from django.utils import timezone

from compliance.anchor_log.pdf import CAUTION, FORMAT, render
from compliance.models import Anchor, AnchorLogEntry, Site, User
from compliance.records.sealing import seal_of, utc
from compliance.records.signing import active_credential, sign_pdf
from compliance.registers.selectors import anchor_status


def build_document(site: Site, by: User, anchor: Anchor | None = None) -> dict[str, Any]:
    anchors = list(
        Anchor.objects.filter(site=site).prefetch_related("certifications", "log").order_by("label")
    )
    if anchor is not None:
        anchors = [a for a in anchors if a.pk == anchor.pk]
    entries = AnchorLogEntry.objects.filter(site=site).order_by("sequence")
    if anchor is not None:
        entries = entries.filter(anchor=anchor)
    interval = int(site.profile.threshold("certification_interval_days"))
    today = timezone.localdate()
    plan = []
    for a in anchors:
        status = anchor_status(a, interval)
        word = (
            "out of service"
            if not status.in_service
            else "inspection overdue"
            if status.overdue_on(today)
            else "no inspection on record"
            if status.last_inspection is None
            else "in service"
        )
        plan.append(
            {
                "id": a.pk,
                "label": a.label,
                "x_m": a.x_m,
                "y_m": a.y_m,
                "status": word,
                "last_inspection": status.last_inspection.isoformat()
                if status.last_inspection
                else None,
                "inspection_due": status.inspection_due.isoformat()
                if status.inspection_due
                else None,
            }
        )
    return {
        "format": FORMAT,
        "site": {
            "id": site.pk,
            "name": site.name,
            "address": site.address,
            "roof_outline": site.roof_outline,
        },
        "scope": "all anchors" if anchor is None else f"anchor {anchor.label}",
        "anchors": plan,
        "entries": [{"seal": e.seal, "entry": json.loads(e.canonical_json)} for e in entries],
        "generated_at": utc(timezone.now()),
        "time_zone": settings.TIME_ZONE,
        "generated_by": {
            "name": by.display_name,
            "role": by.get_role_display(),
            "organisation": by.organisation.name if by.organisation else None,
        },
        "caution": CAUTION,
    }


def signed_anchor_log(site: Site, by: User, anchor: Anchor | None = None) -> tuple[bytes, str]:
    document = build_document(site, by, anchor)
    seal = seal_of(document)
    credential = active_credential(by.organisation_id)
    pdf = sign_pdf(
        render(document, seal),
        credential,
        signer_name=by.display_name,
        reason="Anchor log book as recorded in Parapet",
        location=site.name,
    )
    return pdf, seal

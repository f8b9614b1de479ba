"""An auditor's export of a site-period: the signed PDFs and a signed manifest that verifies
offline.

Each organisation keeps its own chain of records at a site. An export holds, for each chain it
covers, the unbroken run of records from the first to the last that falls in the period, the
seals of every later record up to the chain's signed head (so a verifier sees that nothing at the
end of the period was left out or removed), the head itself and the organisation's signing
certificates. A contractor exports its own chain; the building's owner exports every chain at
its building. The manifest is signed by the exporting organisation's key.
"""

import datetime as dt
import io
import json
import zipfile
from dataclasses import dataclass
from typing import Any

from django.core.exceptions import ValidationError
from django.db.models import Max, Min, Q
from django.utils import timezone
from django.utils.crypto import constant_time_compare, salted_hmac

from compliance.errors import NotPermitted, PdfsPending
from compliance.models import (
    DailyRecord,
    ExportMade,
    Organisation,
    RecordChainHead,
    SigningCredential,
    Site,
    SiteGrant,
    User,
)
from compliance.records.sealing import (
    EXPORT_FORMAT,
    EXPORT_MANIFEST,
    EXPORT_MANIFEST_SIGNATURE,
    canonical_bytes,
    merkle_root,
    utc,
)
from compliance.records.signing import active_credential, sha256_hex, sign_seal

FORMAT, MANIFEST, MANIFEST_SIGNATURE = EXPORT_FORMAT, EXPORT_MANIFEST, EXPORT_MANIFEST_SIGNATURE
MAX_DAYS = 400
"""Longest period one export covers: a file a person can send and a verifier can open."""


@dataclass(frozen=True)
class ExportScope:
    """Which chains at a site an organisation may export."""

    site: Site
    organisation_ids: tuple[int, ...]


def export_scope(*, user: User, site_id: int) -> ExportScope:
    """The site's owner exports every chain at it; a contractor that works there (or did) its
    own. Anyone else gets the same answer as for a site that does not exist."""
    org = user.organisation_id
    site = Site.objects.filter(pk=site_id).select_related("organisation").first()
    if site is None or org is None:
        raise NotPermitted("Unknown site.")
    if site.organisation_id == org:
        chains = RecordChainHead.objects.filter(site=site).values_list("organisation_id", flat=True)
        return ExportScope(site, tuple(sorted({org, *chains})))
    works_there = (
        SiteGrant.objects.filter(site=site, contractor_id=org).exists()
        or DailyRecord.objects.filter(site=site, organisation_id=org).exists()
    )
    if not works_there:
        raise NotPermitted("Unknown site.")
    return ExportScope(site, (org,))


def export_filename(record: DailyRecord) -> str:
    return (
        f"records/{record.organisation_id}/{record.sequence:05d}-{record.kind}"
        f"-{record.seal[:12]}.pdf"
    )


Slice = tuple[list[DailyRecord], list[DailyRecord], RecordChainHead | None]


def _slices(
    organisation_ids: list[int], site: Site, start: dt.date, end: dt.date
) -> dict[int, Slice]:
    """For each organisation, the run of its chain from the first to the last record of the
    period, the records after it, and its chain head: in three queries whatever the number of
    contractors that signed days at the building."""
    ranges = {
        row["organisation_id"]: (row["first"], row["last"])
        for row in DailyRecord.objects.filter(
            site=site,
            organisation_id__in=organisation_ids,
            job__date__gte=start,
            job__date__lte=end,
        )
        .values("organisation_id")
        .annotate(first=Min("sequence"), last=Max("sequence"))
    }
    heads = {
        head.organisation_id: head
        for head in RecordChainHead.objects.filter(
            site=site, organisation_id__in=list(ranges)
        ).select_related("credential")
    }
    wanted = [org for org in ranges if org in heads]
    slices: dict[int, Slice] = {org: ([], [], None) for org in organisation_ids}
    if not wanted:
        return slices
    from_first = Q()
    for org in wanted:
        from_first |= Q(organisation_id=org, sequence__gte=ranges[org][0])
    rows = (
        DailyRecord.objects.filter(from_first, site=site)
        .select_related("job", "credential", "site", "pdf")
        .order_by("organisation_id", "sequence")
    )
    for org in wanted:
        slices[org] = ([], [], heads[org])
    for record in rows:
        records, after, _ = slices[record.organisation_id]
        last = ranges[record.organisation_id][1]
        (records if record.sequence <= last else after).append(record)
    return slices


def _chain(
    archive: zipfile.ZipFile,
    organisation: Organisation,
    records: list[DailyRecord],
    after: list[DailyRecord],
    head: RecordChainHead,
    certificates_of: dict[int, list[str]],
) -> dict[str, Any]:
    entries = []
    for record in records:
        with record.pdf.file.open("rb") as handle:
            data = handle.read()
        archive.writestr(export_filename(record), data)
        entries.append(
            {
                "sequence": record.sequence,
                "kind": record.kind,
                "date": record.job.date.isoformat(),
                "seal": record.seal,
                "previous_seal": record.previous_seal,
                "file": export_filename(record),
                "file_sha256": sha256_hex(data),
                "signer": record.signer_name,
                "meaning": record.meaning,
            }
        )
    certificates = sorted(certificates_of.get(organisation.pk, []))
    return {
        "organisation": {"id": organisation.pk, "name": organisation.name},
        "records": entries,
        "after_period": [
            {
                "sequence": record.sequence,
                "kind": record.kind,
                "date": record.job.date.isoformat(),
                "seal": record.seal,
                "previous_seal": record.previous_seal,
            }
            for record in after
        ],
        "head": {
            "statement": head.statement,
            "signature": head.signature,
            "certificate_sha256": head.credential.fingerprint_sha256 if head.credential else "",
        },
        "certificates": certificates,
    }


def build_export(*, scope: ExportScope, by: User, start: dt.date, end: dt.date) -> bytes:
    """All records of the scope's chains in a site-period, signed PDFs plus a signed manifest.

    Raises PdfsPending when a record's PDF is not rendered yet (nothing is drawn in the request)
    and ValidationError naming `end` for a period that ends before it starts or is longer than
    MAX_DAYS.
    """
    if end < start:
        raise ValidationError({"end": ["Must not be before start."]})
    if (end - start).days > MAX_DAYS:
        raise ValidationError({"end": [f"An export covers at most {MAX_DAYS} days."]})
    site = scope.site
    made = timezone.now()
    exporter = Organisation.objects.get(pk=by.organisation_id)
    organisations = list(Organisation.objects.filter(pk__in=scope.organisation_ids).order_by("pk"))
    by_org = _slices([o.pk for o in organisations], site, start, end)
    slices = [(org, *by_org[org.pk]) for org in organisations]
    pending = [r.pk for _, records, _, _ in slices for r in records if not hasattr(r, "pdf")]
    if pending:
        raise PdfsPending(pending)
    buffer = io.BytesIO()
    certificates_of: dict[int, list[str]] = {}
    for org_id, pem in SigningCredential.objects.filter(
        organisation_id__in=[org.pk for org, *_ in slices]
    ).values_list("organisation_id", "certificate_pem"):
        certificates_of.setdefault(org_id, []).append(pem)
    with zipfile.ZipFile(buffer, "w", zipfile.ZIP_DEFLATED) as archive:
        chains = [
            _chain(archive, org, records, after, head, certificates_of)
            for org, records, after, head in slices
            if head is not None
        ]
        seals = [bytes.fromhex(e["seal"]) for c in chains for e in c["records"]]
        manifest = {
            "format": FORMAT,
            "exported_by": {"id": exporter.pk, "name": exporter.name},
            "site": {"id": site.pk, "name": site.name},
            "period": {"start": start.isoformat(), "end": end.isoformat()},
            "exported_at": utc(made),
            "chains": chains,
            "merkle_root": merkle_root(seals),
            "how_to_verify": (
                "python manage.py verify-record THIS.zip --trust FILE, FILE holding the"
                " organisations' certificate fingerprints or CA (no database needed)"
            ),
        }
        raw = canonical_bytes(manifest)
        _keep(raw, exporter=exporter, site=site, by=by, made=made)
        credential = active_credential(exporter.pk)
        archive.writestr(MANIFEST, raw)
        archive.writestr(
            MANIFEST_SIGNATURE,
            json.dumps(
                {
                    "signs": f"SHA-256 of {MANIFEST}, RSA-PSS",
                    "signature": sign_seal(sha256_hex(raw), credential),
                    "certificate_pem": credential.certificate_pem,
                },
                indent=2,
            ),
        )
    return buffer.getvalue()


def _export_mac(manifest_sha256: str, made: dt.datetime) -> str:
    return salted_hmac(
        "parapet.export-made", f"{manifest_sha256}:{utc(made)}", algorithm="sha256"
    ).hexdigest()


def _keep(
    raw: bytes, *, exporter: Organisation, site: Site, by: User, made: dt.datetime
) -> ExportMade:
    """The server's own note of an export it made (see ExportMade)."""
    digest = sha256_hex(raw)
    return ExportMade.objects.create(
        manifest_sha256=digest,
        organisation=exporter,
        site=site,
        made_by=by,
        made_at=made,
        mac=_export_mac(digest, made),
    )


def made_at(manifest_sha256: str) -> dt.datetime | None:
    """When this server made the export whose manifest hashes so, if it did and its note's
    HMAC holds (a row written by someone without the server's key is not its word)."""
    row = ExportMade.objects.filter(manifest_sha256=manifest_sha256).first()
    if row is None or not constant_time_compare(row.mac, _export_mac(manifest_sha256, row.made_at)):
        return None
    return row.made_at

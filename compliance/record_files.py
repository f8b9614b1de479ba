"""Rendering and signing a record's PDF, and building an auditor's export of a site-period."""

import datetime as dt
import io
import json
import logging
import zipfile
from typing import Any

import rfc8785
from django.core.files.base import ContentFile
from django.core.files.storage import Storage
from django.db import IntegrityError, transaction

from checklists.models import Photo
from compliance.models import DailyRecord, RecordPdf, SigningCredential, Site
from compliance.record_pdf import render
from compliance.signing import active_credential, sha256_hex, sign_pdf, sign_seal
from compliance.verification import MANIFEST, MANIFEST_SIGNATURE, merkle_root

logger = logging.getLogger(__name__)

RECORD_FILES_DIR = "records"


def _photo_bytes(record: DailyRecord, document: dict[str, Any]) -> dict[str, bytes]:
    """The stored bytes of the record's sealed photos, read through the storage API (never
    ``.path``), so a record renders from object storage too.

    A photo whose file is gone, or whose bytes are not the ones sealed, is left out (its box
    stays empty) and logged; any other storage error propagates so the render is retried.
    """
    sealed = {
        p["client_uuid"]: p.get("sha256") for p in (document.get("record") or {}).get("photos", [])
    }
    if not sealed:
        return {}
    found: dict[str, bytes] = {}
    for photo in Photo.objects.filter(job_id=record.job_id, client_uuid__in=list(sealed)):
        key = str(photo.client_uuid)
        try:
            with photo.image.storage.open(photo.image.name, "rb") as handle:
                data = handle.read()
        except FileNotFoundError:
            logger.error(
                "record %s: photo %s has no stored file; drawn as an empty box", record.pk, key
            )
            continue
        if sha256_hex(data) != sealed[key]:
            logger.error(
                "record %s: photo %s is not the photo sealed; drawn as an empty box", record.pk, key
            )
            continue
        found[key] = data
    return found


def render_signed_pdf(record: DailyRecord) -> bytes:
    document = json.loads(record.canonical_json)
    pdf = render(document, record.seal, _photo_bytes(record, document))
    return sign_pdf(
        pdf,
        record.credential,
        signer_name=record.signer_name,
        reason=record.meaning,
        location=record.site.name,
    )


def ensure_pdf(record: DailyRecord) -> RecordPdf:
    """Render and sign the record's PDF once; a second call returns the stored one."""
    existing = RecordPdf.objects.filter(record=record).first()
    if existing is not None:
        return existing
    data = render_signed_pdf(record)
    pdf = RecordPdf(record=record, sha256=sha256_hex(data), size_bytes=len(data))
    try:
        with transaction.atomic():
            pdf.file.save(
                f"record-{record.site_id}-{record.sequence}-{record.seal[:12]}.pdf",
                ContentFile(data),
                save=False,
            )
            pdf.save()
    except BaseException as exc:
        # A crash between storing the file and its row leaves no orphan file behind.
        if pdf.file.name:
            pdf.file.storage.delete(pdf.file.name)
        if isinstance(exc, IntegrityError):
            return RecordPdf.objects.get(record=record)
        raise
    return pdf


def _stored_pdfs(storage: Storage, directory: str) -> list[str]:
    try:
        subdirs, files = storage.listdir(directory)
    except FileNotFoundError:
        return []
    names = [f"{directory}/{f}" for f in files if f.endswith(".pdf")]
    for sub in subdirs:
        names.extend(_stored_pdfs(storage, f"{directory}/{sub}"))
    return names


def sweep_orphan_pdfs(*, older_than: dt.timedelta, now: dt.datetime) -> list[str]:
    """Delete stored record PDFs that no row names, left by a worker killed mid-save.

    A render stores its file, then commits its row; a process killed between the two
    (SIGKILL, power loss) runs no clean-up, so the file stays with nothing pointing at
    it while the retried task stores its own. Only files older than ``older_than``
    go, so a render still between the two steps keeps its file. The record itself
    is the sealed row in the database; a PDF with no row is not part of any record.
    """
    storage = RecordPdf._meta.get_field("file").storage
    named = set(RecordPdf.objects.values_list("file", flat=True))
    removed = []
    for name in _stored_pdfs(storage, RECORD_FILES_DIR):
        if name in named or now - storage.get_modified_time(name) < older_than:
            continue
        storage.delete(name)
        removed.append(name)
        logger.warning("removed %s: a record PDF no row names (an interrupted render)", name)
    return removed


def export_filename(record: DailyRecord) -> str:
    return f"records/{record.sequence:05d}-{record.kind}-{record.seal[:12]}.pdf"


def build_export(site: Site, start: dt.date, end: dt.date) -> bytes:
    """All records of a site-period as signed PDFs plus a manifest that verifies offline."""
    records = list(
        DailyRecord.objects.filter(site=site, job__date__gte=start, job__date__lte=end)
        .select_related("credential", "site", "site__organisation")
        .order_by("sequence")
    )
    buffer = io.BytesIO()
    with zipfile.ZipFile(buffer, "w", zipfile.ZIP_DEFLATED) as archive:
        entries = []
        for record in records:
            pdf = ensure_pdf(record)
            with pdf.file.open("rb") as handle:
                data = handle.read()
            archive.writestr(export_filename(record), data)
            entries.append(
                {
                    "sequence": record.sequence,
                    "kind": record.kind,
                    "date": json.loads(record.canonical_json)
                    .get("record", {})
                    .get("job", {})
                    .get("date"),
                    "seal": record.seal,
                    "previous_seal": record.previous_seal,
                    "file": export_filename(record),
                    "file_sha256": sha256_hex(data),
                    "signer": record.signer_name,
                    "meaning": record.meaning,
                }
            )
        certs = sorted(
            set(
                SigningCredential.objects.filter(
                    organisation_id__in={
                        site.organisation_id,
                        *(r.organisation_id for r in records),
                    }
                ).values_list("certificate_pem", flat=True)
            )
        )
        manifest = {
            "format": "parapet.export/2",
            "organisation": {"id": site.organisation_id, "name": site.organisation.name},
            "site": {"id": site.pk, "name": site.name},
            "period": {"start": start.isoformat(), "end": end.isoformat()},
            "records": entries,
            "merkle_root": merkle_root([bytes.fromhex(e["seal"]) for e in entries]),
            "certificates": certs,
            "how_to_verify": (
                "python manage.py verify-record THIS.zip --trust FILE, FILE holding the"
                " organisation's certificate fingerprints or CA (no database needed)"
            ),
        }
        raw = rfc8785.dumps(manifest)
        credential = active_credential(site.organisation_id)
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

"""Rendering and signing a record's PDF once, and sweeping files no record names."""

import datetime as dt
import json
import logging
from typing import Any

from django.core.files.base import ContentFile
from django.core.files.storage import Storage
from django.db import IntegrityError, transaction

from checklists.models import Photo
from compliance.models import DailyRecord, RecordPdf
from compliance.records.checks import StoredPageChecks
from compliance.records.pdf import render
from compliance.records.signing import sha256_hex, sign_pdf

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
            # The pages of the file just drawn are by construction what the renderer draws
            # from the sealed document: its first check on the server need not draw them again.
            StoredPageChecks().remember(pdf.sha256, record.seal)
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

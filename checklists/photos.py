"""Photos from the roof: checked, re-encoded on the server (dropping metadata), stored once."""

import hashlib
import io
import uuid

from django.core.exceptions import ValidationError
from django.core.files.base import ContentFile
from django.core.files.uploadedfile import UploadedFile
from django.db import IntegrityError, transaction
from PIL import Image, UnidentifiedImageError

from checklists.models import CheckSheet, Photo
from compliance import clock
from compliance.jobs.holds import locked
from compliance.jobs.selectors import photo_item_keys
from compliance.models import DailyRecord, Job, User

MAX_BYTES = 12 * 1024 * 1024
MAX_SIDE_PX = 2048
MAX_PIXELS = 50_000_000
"""A phone camera's largest photos are about 48 megapixels; a small file declaring more is a
decompression bomb (an 88-megapixel PNG of 30 KB took 370 MB to decode)."""
ACCEPTED = {"JPEG", "MPO", "PNG", "WEBP"}
"""MPO is a JPEG holding more than one picture (some phone cameras write it); its first picture
is stored."""


def _check_place(*, job: Job, sheet_uuid: uuid.UUID | None, item_key: str) -> None:
    """A photo joins a day whose record is not sealed yet (sealed, a later row would read as
    tampering), for a sheet of that job and an item of its checklist, or on the job's day. One
    sent without a sheet belongs to the job: it names a photo item of a checklist the job's
    requirements use, or none (the signed record prints the key under the photo).

    A photo carries no time of its own: one taken for a sheet belongs where its sheet does,
    whose day was settled when the sheet was accepted (the phone sends its sheets before
    their photos: a pass made on its day, sent the next morning, keeps its photo; a failure
    kept after its job's day, counted as made when received, keeps the photo of the damage).
    One for no sheet is taken on the day it is received, which must be the job's."""
    if DailyRecord.objects.filter(job=job, kind=DailyRecord.Kind.RECORD).exists():
        raise ValidationError(
            {"job": "This day's record is signed: a photo can no longer be added to it."}
        )
    sheet = None
    if sheet_uuid is not None:
        sheet = (
            CheckSheet.objects.filter(job=job, client_uuid=sheet_uuid)
            .select_related("version")
            .first()
        )
        if sheet is None:
            raise ValidationError({"sheet_uuid": "This job has no sheet with this id."})
    received = clock.today()
    if sheet is None and received != job.date:
        raise ValidationError(
            {
                "job": f"This job is for {job.date.isoformat()}: its photos are taken on its"
                f" day, and this one was made on {received.isoformat()}."
            }
        )
    if sheet is not None and item_key and item_key not in {i["key"] for i in sheet.version.items}:
        raise ValidationError({"item_key": "This sheet's checklist has no item with this key."})
    if sheet is None and item_key and item_key not in photo_item_keys(job):
        raise ValidationError(
            {"item_key": "No checklist this job uses has a photo item with this key."}
        )


REUSED_PHOTO_ID = (
    "This photo id is already used for another photo: a photo sent again keeps its own id,"
    " job, sheet, item and image."
)


def _encoded(image: UploadedFile) -> tuple[Image.Image, bytes]:
    """The photo as stored: checked, at most MAX_SIDE_PX a side, JPEG (a 400 naming `image`
    for anything else)."""
    if image.size is None or image.size > MAX_BYTES:
        raise ValidationError({"image": f"A photo is at most {MAX_BYTES // (1024 * 1024)} MB."})
    try:
        with Image.open(image) as source:
            if source.format not in ACCEPTED:
                raise ValidationError({"image": "A photo is a JPEG, PNG or WebP image."})
            width, height = source.size
            if width * height > MAX_PIXELS:
                raise ValidationError(
                    {"image": f"A photo is at most {MAX_PIXELS // 1_000_000} megapixels."}
                )
            source.load()
            picture = source.convert("RGB")
    except (UnidentifiedImageError, OSError, Image.DecompressionBombError):
        raise ValidationError({"image": "This file is not an image Parapet can read."}) from None
    picture.thumbnail((MAX_SIDE_PX, MAX_SIDE_PX))
    out = io.BytesIO()
    picture.save(out, format="JPEG", quality=85, optimize=True)
    return picture, out.getvalue()


def _stored(client_uuid: uuid.UUID) -> Photo | None:
    return Photo.objects.filter(client_uuid=client_uuid).first()


def store_photo(
    *,
    by: User,
    job: Job,
    image: UploadedFile,
    client_uuid: uuid.UUID,
    sheet_uuid: uuid.UUID | None = None,
    item_key: str = "",
) -> tuple[Photo, bool]:
    """Store a photo once per client uuid; return (photo, created). A photo sent again (the
    same job, sheet, item and image) is answered as stored; another photo under a used id is
    refused, naming `client_uuid`. A new one is checked against its job, sheet and item
    (_check_place) and nothing is stored when it is refused."""
    if not by.can_write:
        raise ValidationError({"job": "Auditors have read-only access."})
    existing = _stored(client_uuid)
    if existing is not None:
        _same_place(existing, by=by, job=job, sheet_uuid=sheet_uuid, item_key=item_key)
    else:
        if job.organisation_id != by.organisation_id:
            raise ValidationError({"job": "Unknown job."})
        # Refused early without reading the image; checked again under the job's lock below.
        _check_place(job=job, sheet_uuid=sheet_uuid, item_key=item_key)
    picture, data = _encoded(image)
    digest = hashlib.sha256(data).hexdigest()
    if existing is not None:
        return _sent_again(existing, digest), False
    try:
        with transaction.atomic():
            # Signing locks the job's row too: a photo lands before the seal, or is refused.
            job = locked(job)
            _check_place(job=job, sheet_uuid=sheet_uuid, item_key=item_key)
            photo = Photo(
                client_uuid=client_uuid,
                organisation_id=by.organisation_id,
                job=job,
                sheet_uuid=sheet_uuid,
                item_key=item_key[:80],
                uploaded_by=by,
                sha256=digest,
                width=picture.width,
                height=picture.height,
            )
            photo.image.save(f"{client_uuid}.jpg", ContentFile(data), save=False)
            try:
                photo.save()
            except BaseException:
                # Whatever stops the row (its id taken meanwhile, a database error, the worker
                # stopped), the file does not stay without one; the failure goes on as it was.
                photo.image.storage.delete(photo.image.name)
                raise
    except IntegrityError:
        # Another request under the same id stored its photo first: this one is compared with
        # it as a photo sent again is.
        existing = Photo.objects.get(client_uuid=client_uuid)
        _same_place(existing, by=by, job=job, sheet_uuid=sheet_uuid, item_key=item_key)
        return _sent_again(existing, digest), False
    return photo, True


def _sent_again(existing: Photo, digest: str) -> Photo:
    """The same photo sent again (its answer lost) is the one stored; another image under its
    id was answered as stored, and the new one silently dropped: it is refused."""
    if digest != existing.sha256:
        raise ValidationError({"client_uuid": [REUSED_PHOTO_ID]})
    return existing


def _same_place(
    existing: Photo, *, by: User, job: Job, sheet_uuid: uuid.UUID | None, item_key: str
) -> None:
    """A photo sent again under its id names its own organisation, job, sheet and item."""
    if existing.organisation_id != by.organisation_id:
        raise ValidationError({"client_uuid": "Already used."})
    if (existing.job_id, existing.sheet_uuid, existing.item_key) != (
        job.pk,
        sheet_uuid,
        item_key[:80],
    ):
        raise ValidationError({"client_uuid": [REUSED_PHOTO_ID]})

"""Photos from the roof: checked, re-encoded on the server (dropping metadata), stored once."""

import hashlib
import io
import uuid

from django.core.exceptions import ValidationError
from django.core.files.base import ContentFile
from django.core.files.uploadedfile import UploadedFile
from django.db import IntegrityError, transaction
from PIL import Image, UnidentifiedImageError

from checklists.models import Photo
from compliance.models import Job, User

MAX_BYTES = 12 * 1024 * 1024
MAX_SIDE_PX = 2048
MAX_PIXELS = 50_000_000
"""A phone camera's largest photos are about 48 megapixels; a small file declaring more is a
decompression bomb (an 88-megapixel PNG of 30 KB took 370 MB to decode)."""
ACCEPTED = {"JPEG", "PNG", "WEBP"}


def store_photo(
    *,
    by: User,
    job: Job,
    image: UploadedFile,
    client_uuid: uuid.UUID,
    sheet_uuid: uuid.UUID | None = None,
    item_key: str = "",
) -> tuple[Photo, bool]:
    """Store a photo once per client uuid; return (photo, created)."""
    if not by.can_write:
        raise ValidationError({"job": "Auditors have read-only access."})
    existing = Photo.objects.filter(client_uuid=client_uuid).first()
    if existing is not None:
        if existing.organisation_id != by.organisation_id:
            raise ValidationError({"client_uuid": "Already used."})
        return existing, False
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
    data = out.getvalue()
    try:
        with transaction.atomic():
            photo = Photo(
                client_uuid=client_uuid,
                organisation_id=by.organisation_id,
                job=job,
                sheet_uuid=sheet_uuid,
                item_key=item_key[:80],
                uploaded_by=by,
                sha256=hashlib.sha256(data).hexdigest(),
                width=picture.width,
                height=picture.height,
            )
            photo.image.save(f"{client_uuid}.jpg", ContentFile(data), save=False)
            photo.save()
    except IntegrityError:
        return Photo.objects.get(client_uuid=client_uuid), False
    return photo, True

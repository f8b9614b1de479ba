"""A certificate's file kept as evidence: checked for what it claims to be (a PDF, a PNG or a
JPEG, by its bytes, never by its name or the browser's word), stored once under its SHA-256
through Django's storage API, so it can live on object storage, and never changed after."""

import hashlib
import io
from dataclasses import dataclass
from typing import IO

from django.core.exceptions import ValidationError
from django.core.files.base import ContentFile
from PIL import Image, UnidentifiedImageError

MAX_BYTES = 10 * 1024 * 1024
MAX_PIXELS = 60_000_000
TYPES = {"pdf": "application/pdf", "png": "image/png", "jpg": "image/jpeg"}
REFUSED = "A PDF, PNG or JPEG file of the certificate, at most 10 MB."


@dataclass(frozen=True)
class CheckedDocument:
    content: ContentFile
    sha256: str
    extension: str

    @property
    def name(self) -> str:
        return f"{self.sha256}.{self.extension}"


def _looks_like_pdf(data: bytes) -> bool:
    # A PDF starts with its header and ends with an end-of-file marker near the end.
    return data.startswith(b"%PDF-") and b"%%EOF" in data[-2048:]


def _image_kind(data: bytes) -> str | None:
    Image.MAX_IMAGE_PIXELS = MAX_PIXELS
    try:
        with Image.open(io.BytesIO(data)) as image:
            kind = image.format
            if image.width * image.height > MAX_PIXELS:
                return None
            image.verify()
    except (UnidentifiedImageError, OSError, SyntaxError, ValueError, Image.DecompressionBombError):
        return None
    # MPO: a JPEG holding more than one picture, as some phone cameras write it.
    return {"PNG": "png", "JPEG": "jpg", "MPO": "jpg"}.get(kind or "")


def check_document(upload: IO[bytes]) -> CheckedDocument:
    """The file as evidence, or a ValidationError naming the ``document`` field."""
    data = upload.read(MAX_BYTES + 1)
    if not data or len(data) > MAX_BYTES:
        raise ValidationError({"document": [REFUSED]})
    extension = "pdf" if _looks_like_pdf(data) else _image_kind(data)
    if extension is None:
        raise ValidationError({"document": [REFUSED]})
    sha256 = hashlib.sha256(data).hexdigest()
    return CheckedDocument(content=ContentFile(data), sha256=sha256, extension=extension)


def content_type(name: str) -> str:
    return TYPES.get(name.rsplit(".", 1)[-1], "application/octet-stream")

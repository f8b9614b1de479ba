"""A form's parts are read as they are sent: a part that says it is encoded (a
Content-Transfer-Encoding header) is refused by name, and nothing is stored.

RFC 7578 §4.7: senders of multipart/form-data do not use Content-Transfer-Encoding. Django's
parser still decodes a part marked base64, so the bytes a person or a log sees were not the
bytes stored: a certification's capacity sent as ``MTI=`` was stored as 12 kN.

The bodies are written by hand: Django's test encoder writes only its own part headers.
"""

import base64
import datetime as dt
import io
import quopri
import uuid
from collections.abc import Callable

import pytest
from django.core.files.uploadhandler import MemoryFileUploadHandler, TemporaryFileUploadHandler
from django.http import QueryDict
from django.http.multipartparser import MultiPartParser
from django.urls import reverse
from django.utils import timezone
from PIL import Image

from checklists.models import Photo
from compliance.models import AnchorCertification
from tests.conftest import client_for

pytestmark = pytest.mark.django_db

BOUNDARY = "parapet-form-parts"
PDF = b"%PDF-1.7\n1 0 obj <<>> endobj\ntrailer <<>>\n%%EOF\n"
ENCODINGS: dict[str, Callable[[bytes], bytes]] = {
    "base64": base64.b64encode,
    "quoted-printable": quopri.encodestring,
    "BASE64": base64.b64encode,  # RFC 2045 §6.1: the value is read without regard to case
}


@pytest.fixture(autouse=True)
def _media(settings, tmp_path):
    settings.MEDIA_ROOT = tmp_path


def png() -> bytes:
    out = io.BytesIO()
    Image.new("RGB", (16, 12), (200, 30, 30)).save(out, format="PNG")
    return out.getvalue()


def part(name: str, content: bytes, *headers: str, filename: str | None = None) -> bytes:
    disposition = f'Content-Disposition: form-data; name="{name}"'
    if filename is not None:
        disposition += f'; filename="{filename}"'
    head = "\r\n".join([f"--{BOUNDARY}", disposition, *filter(None, headers)])
    return head.encode() + b"\r\n\r\n" + content + b"\r\n"


def form(*parts: bytes) -> bytes:
    return b"".join(parts) + f"--{BOUNDARY}--\r\n".encode()


def send(user, url: str, body: bytes):
    return client_for(user).post(
        url, body, content_type=f"multipart/form-data; boundary={BOUNDARY}"
    )


def refusal(name: str) -> dict[str, list[str]]:
    which = f"The part {name!r}" if name != "body" else "A part with no name"
    return {
        name: [
            f"{which} says it is encoded (Content-Transfer-Encoding): a form's parts are sent"
            " as they are (RFC 7578 §4.7)."
        ]
    }


def stored(tmp_path) -> tuple[int, int, list[str]]:
    files = sorted(str(p) for p in tmp_path.rglob("*") if p.is_file())
    return AnchorCertification.objects.count(), Photo.objects.count(), files


def build(
    texts: dict[str, bytes],
    files: dict[str, tuple[str, str, bytes]],
    encoded: str,
    header: str,
    encode: Callable[[bytes], bytes],
) -> bytes:
    """A form of text parts and file parts (name: file name, content type, bytes); the part
    named ``encoded`` is sent through ``encode``, with ``header``."""
    parts = []
    for name, value in texts.items():
        own = name == encoded
        parts.append(part(name, encode(value) if own else value, header if own else ""))
    for name, (filename, content_type, value) in files.items():
        own = name == encoded
        headers = [f"Content-Type: {content_type}", header if own else ""]
        parts.append(part(name, encode(value) if own else value, *headers, filename=filename))
    return form(*parts)


def certificate_form(encoded: str, header: str, encode: Callable[[bytes], bytes]) -> bytes:
    """A certification (12 kN) with its PDF."""
    today = timezone.localdate()
    texts = {
        "certifier": b"A. Honest",
        "rated_capacity_kn": b"12",
        "certified_on": (today - dt.timedelta(days=30)).isoformat().encode(),
        "valid_until": (today + dt.timedelta(days=330)).isoformat().encode(),
    }
    files = {"document": ("cert.pdf", "application/pdf", PDF)}
    return build(texts, files, encoded, header, encode)


def photo_form(job, encoded: str, header: str, encode: Callable[[bytes], bytes]) -> bytes:
    """A loose photo of the job."""
    texts = {"client_uuid": str(uuid.uuid4()).encode(), "job": str(job.pk).encode()}
    files = {"image": ("roof.png", "image/png", png())}
    return build(texts, files, encoded, header, encode)


@pytest.mark.parametrize("encoding", sorted(ENCODINGS))
@pytest.mark.parametrize("encoded", ["rated_capacity_kn", "document"])
def test_an_encoded_part_of_a_certification_is_refused_by_name(
    job, supervisor, tmp_path, encoded, encoding
):
    """``rated_capacity_kn`` sent as ``MTI=`` (base64) was stored as 12 kN; a certificate's
    PDF sent in base64 was stored decoded."""
    anchor = job.drops.first().anchor
    body = certificate_form(encoded, f"Content-Transfer-Encoding: {encoding}", ENCODINGS[encoding])
    before = stored(tmp_path)
    response = send(supervisor, reverse("anchor-certifications", args=[anchor.pk]), body)
    assert response.status_code == 400, response.content[:300]
    assert response.json() == refusal(encoded)
    assert stored(tmp_path) == before


@pytest.mark.parametrize("encoding", sorted(ENCODINGS))
@pytest.mark.parametrize("encoded", ["job", "image"])
def test_an_encoded_part_of_a_photo_is_refused_by_name(job, operator, tmp_path, encoded, encoding):
    """The job's id sent as ``MQ==`` (base64) was read as job 1; a photo sent in base64 was
    stored decoded."""
    body = photo_form(job, encoded, f"Content-Transfer-Encoding: {encoding}", ENCODINGS[encoding])
    before = stored(tmp_path)
    response = send(operator, reverse("photos"), body)
    assert response.status_code == 400, response.content[:300]
    assert response.json() == refusal(encoded)
    assert stored(tmp_path) == before


@pytest.mark.parametrize(
    "header",
    [
        "Content-Transfer-Encoding: base64\r\nContent-Transfer-Encoding: binary",
        "Content-Transfer-Encoding: binary\r\nContent-Transfer-Encoding: base64",
        "Content-Transfer-Encoding : base64",
        "content-transfer-encoding:base64",
        "Content-Transfer-Encoding: binary; base64",
        "Content-Transfer-Encoding:",
        # Django strips a line that starts with a space or a tab and reads it as a header of its
        # own; a reader that joined it to the line before let "MTI=" through as 12 kN.
        "X-Note: roof\r\n Content-Transfer-Encoding: base64",
        "X-Note: roof\r\n\tContent-Transfer-Encoding: base64",
    ],
    ids=[
        "base64-then-binary",
        "binary-then-base64",
        "space",
        "lower",
        "parameter",
        "empty",
        "after-a-space",
        "after-a-tab",
    ],
)
def test_a_part_saying_it_is_encoded_in_any_spelling_is_refused(job, operator, tmp_path, header):
    """Django reads the last header of a name and only "base64" exactly; another reader may
    take the first, or the value without regard to case (RFC 2045 §6.1). What the part says is
    refused whichever way it is read."""
    before = stored(tmp_path)
    response = send(operator, reverse("photos"), photo_form(job, "job", header, bytes))
    assert response.status_code == 400, response.content[:300]
    assert response.json() == refusal("job")
    assert stored(tmp_path) == before


def django_reads(body: bytes) -> QueryDict:
    """The text parts Django's own parser reads from the body."""
    meta = {
        "CONTENT_TYPE": f"multipart/form-data; boundary={BOUNDARY}",
        "CONTENT_LENGTH": str(len(body)),
    }
    handlers = [MemoryFileUploadHandler(), TemporaryFileUploadHandler()]
    data, _ = MultiPartParser(meta, io.BytesIO(body), handlers, "utf-8").parse()
    return data


def test_an_encoded_part_hidden_in_a_nameless_part_is_refused(job, operator, tmp_path):
    """Django skips a part with no name without reading it, and reads what is left of it past
    its first 64 KB as a part of its own: one written there, base64 and all, was read as the
    job's id. The check walks the parts as Django's parser does."""
    opening = f"--{BOUNDARY}\r\nContent-Disposition: form-data\r\n\r\n".encode()
    hidden = (
        b'Content-Disposition: form-data; name="job"\r\nContent-Transfer-Encoding: base64\r\n\r\n'
        + base64.b64encode(str(job.pk).encode())
    )
    others = form(
        part("client_uuid", str(uuid.uuid4()).encode()),
        part("image", png(), "Content-Type: image/png", filename="roof.png"),
    )
    # Django reads the body 64 KB at a time; the skipped part ends its reading at the first
    # chunk's end less the boundary line's length and 6 (multipartparser.BoundaryIter).
    filler = 64 * 1024 - (len(f"--{BOUNDARY}") + 6) - len(opening)
    body = opening + b"a" * filler + hidden + b"\r\n" + others
    assert django_reads(body)["job"] == str(job.pk)  # the hidden part is read, decoded
    before = stored(tmp_path)
    response = send(operator, reverse("photos"), body)
    assert response.status_code == 400, response.content[:300]
    assert response.json() == refusal("job")
    assert stored(tmp_path) == before


def test_an_encoded_part_with_no_name_is_refused_too(job, operator, tmp_path):
    """Django reads no part without a name; another reader may, so one that says it is
    encoded is refused all the same, under ``body``."""
    nameless = (
        f"--{BOUNDARY}\r\nContent-Disposition: form-data\r\n"
        "Content-Transfer-Encoding: base64\r\n\r\nMTI=\r\n"
    ).encode()
    before = stored(tmp_path)
    response = send(operator, reverse("photos"), nameless + photo_form(job, "", "", bytes))
    assert response.status_code == 400, response.content[:300]
    assert response.json() == refusal("body")
    assert stored(tmp_path) == before


def test_a_part_header_too_long_is_still_a_400(job, operator, tmp_path):
    """Django's parser reads a part's header within 8 KB; past that the form is refused as it
    was before the parts were checked, as a parse error and not a 500."""
    long_header = "X-Note: " + "a" * 9000
    before = stored(tmp_path)
    response = send(operator, reverse("photos"), photo_form(job, "job", long_header, bytes))
    assert response.status_code == 400
    assert response.json() == {
        "detail": "Multipart form parse error - Request max total header size exceeded."
    }
    assert stored(tmp_path) == before


@pytest.mark.parametrize("header", ["", "7bit", "8bit", "binary", "Binary"])
def test_a_part_sent_as_it_is_is_read(job, supervisor, operator, header):
    """No header, or one saying the part is sent as it is (RFC 2045 §6.2's identity
    encodings): read as before."""
    headers = f"Content-Transfer-Encoding: {header}" if header else ""
    anchor = job.drops.first().anchor
    url = reverse("anchor-certifications", args=[anchor.pk])
    response = send(supervisor, url, certificate_form("rated_capacity_kn", headers, bytes))
    assert response.status_code == 201, response.content[:300]
    assert response.json()["rated_capacity_kn"] == 12
    assert response.json()["document_sha256"]
    response = send(operator, reverse("photos"), photo_form(job, "image", headers, bytes))
    assert response.status_code == 201, response.content[:300]

"""A request body has a size limit, checked on its declared length before any of it is read:
beyond it the answer is 413 and nothing is read or stored; a body sent without a length is
refused (411), not read as empty; nothing past a declared length is ever read.

The limits (docs/limits.md) fit the largest request the app sends: a form with the largest
file an endpoint takes (the verify page's 50 MB export), and a sync batch of 200 records of
the longest sheets."""

import io
import json
import uuid

import pytest
from django.conf import settings
from django.urls import reverse

from checklists.models import CheckSheet, Photo
from checklists.photos import MAX_BYTES as PHOTO_MAX_BYTES
from compliance.api.records import MAX_UPLOAD as VERIFY_MAX_BYTES
from compliance.jobs.services import start_job
from compliance.jobs.sync import MAX_BATCH
from compliance.models import AnchorCertification, JobState, JobTransition, SyncReceipt
from compliance.registers.documents import MAX_BYTES as CERTIFICATE_MAX_BYTES
from tests.api.test_sync import site_record
from tests.conftest import PASSING, client_for, fill_all

pytestmark = pytest.mark.django_db

MiB = 1024 * 1024
BODY_LIMIT = 16 * MiB
"""Any body but a form with a file."""
FORM_LIMIT = 64 * MiB
"""A multipart/form-data body (the endpoints that take a file)."""
BOUNDARY = "parapet-body-limits"


@pytest.fixture(autouse=True)
def _media(settings, tmp_path):
    settings.MEDIA_ROOT = tmp_path


class Streamed(io.RawIOBase):
    """A body of ``size`` bytes (``head``, filler, ``tail``) made as it is read, never held
    whole, counting what was read: the server's side of a socket."""

    def __init__(self, head: bytes, size: int, tail: bytes = b"", fill: bytes = b" ") -> None:
        self.head, self.tail, self.fill, self.size = head, tail, fill, size
        self.taken = 0

    def readable(self) -> bool:
        return True

    def _byte_range(self, start: int, end: int) -> bytes:
        tail_at = self.size - len(self.tail)
        out = self.head[start:end]
        gap = max(0, min(end, tail_at) - max(start, len(self.head)))
        out += self.fill * gap
        if end > tail_at:
            out += self.tail[max(0, start - tail_at) : end - tail_at]
        return out

    def read(self, n: int | None = -1) -> bytes:
        left = self.size - self.taken
        n = left if n is None or n < 0 else min(n, left)
        data = self._byte_range(self.taken, self.taken + n)
        self.taken += len(data)
        return data


def post_streamed(user, url: str, body: Streamed, content_type: str, **meta: str):
    """POST ``body`` as a WSGI server hands it on: its declared length is the body's own
    unless ``meta`` says otherwise (CONTENT_LENGTH, or none with a Transfer-Encoding)."""
    environ = {"wsgi.input": body, "CONTENT_LENGTH": str(body.size), **meta}
    if environ["CONTENT_LENGTH"] is None:
        del environ["CONTENT_LENGTH"]
    return client_for(user).generic("POST", url, "", content_type=content_type, **environ)


def json_padded(size: int) -> Streamed:
    """A JSON object of ``size`` bytes whose one field is padding text."""
    return Streamed(b'{"records": [], "padding": "', size, b'"}', fill=b"a")


def photo_form_padded(job, size: int) -> Streamed:
    """A photo form of ``size`` bytes: its image part is ``size`` bytes of zeros, near enough."""
    head = (
        f"--{BOUNDARY}\r\n"
        'Content-Disposition: form-data; name="client_uuid"\r\n\r\n'
        f"{uuid.uuid4()}\r\n"
        f"--{BOUNDARY}\r\n"
        'Content-Disposition: form-data; name="job"\r\n\r\n'
        f"{job.pk}\r\n"
        f"--{BOUNDARY}\r\n"
        'Content-Disposition: form-data; name="image"; filename="roof.png"\r\n'
        "Content-Type: image/png\r\n\r\n"
    ).encode()
    return Streamed(head, size, f"\r\n--{BOUNDARY}--\r\n".encode(), fill=b"\0")


FORM = f"multipart/form-data; boundary={BOUNDARY}"


def stored(tmp_path) -> tuple:
    files = [p for p in tmp_path.rglob("*") if p.is_file()]
    return (
        CheckSheet.objects.count(),
        SyncReceipt.objects.count(),
        Photo.objects.count(),
        AnchorCertification.objects.count(),
        JobTransition.objects.count(),
        files,
    )


def test_a_json_body_over_the_limit_is_refused_before_it_is_read(job, operator, tmp_path):
    """A 16 MB body was read whole into memory and parsed, whatever it held: any signed-in
    person could make a worker hold as much as they sent."""
    before = stored(tmp_path)
    body = json_padded(BODY_LIMIT + 1)

    response = post_streamed(operator, reverse("sync"), body, "application/json")

    assert response.status_code == 413
    assert response.json() == {
        "detail": f"A request body is at most 16 MB ({BODY_LIMIT} bytes); this one is"
        f" {BODY_LIMIT + 1} bytes."
    }
    assert body.taken == 0
    assert stored(tmp_path) == before


def test_a_form_over_the_limit_is_refused_before_it_is_read(job, operator, tmp_path):
    """A photo form was copied whole to disk to read its part headers, then written out again
    by Django's parser, before the photo's own 12 MB limit refused it."""
    before = stored(tmp_path)
    body = photo_form_padded(job, FORM_LIMIT + 1)

    response = post_streamed(operator, reverse("photos"), body, FORM)

    assert response.status_code == 413
    assert response.json() == {
        "detail": f"A form with a file is at most 64 MB ({FORM_LIMIT} bytes); this one is"
        f" {FORM_LIMIT + 1} bytes."
    }
    assert body.taken == 0
    assert stored(tmp_path) == before


def test_a_body_declaring_more_than_the_limit_is_refused_whatever_it_holds(job, operator):
    body = Streamed(b'{"records": []}', 15)

    response = post_streamed(
        operator, reverse("sync"), body, "application/json", CONTENT_LENGTH=str(10**12)
    )

    assert response.status_code == 413
    assert body.taken == 0


@pytest.mark.parametrize("length", ["-1", "12abc", " ", "\u0661\u0662"])
def test_a_length_that_is_not_a_number_of_bytes_is_refused(job, operator, length):
    body = Streamed(b'{"records": []}', 15)

    response = post_streamed(
        operator, reverse("sync"), body, "application/json", CONTENT_LENGTH=length
    )

    assert response.status_code == 400
    assert response.json() == {"detail": "Content-Length is a whole number of bytes."}
    assert body.taken == 0


@pytest.fixture
def working(job, simple_checklists, operator):
    fill_all(job, simple_checklists, operator)
    start_job(job=job, by=operator)
    job.refresh_from_db()
    return job


def test_a_body_sent_without_its_length_is_refused_not_read_as_empty(working, operator):
    """Django reads no body without a Content-Length: a pause sent chunked, with its reason,
    paused the job with no reason at all."""
    content = json.dumps({"reason": "Gusts over the limit at the roof"}).encode()
    body = Streamed(content, len(content))
    transitions = JobTransition.objects.filter(job=working).count()

    response = post_streamed(
        operator,
        reverse("job-pause", args=[working.pk]),
        body,
        "application/json",
        CONTENT_LENGTH=None,
        HTTP_TRANSFER_ENCODING="chunked",
    )

    assert response.status_code == 411
    assert response.json() == {
        "detail": "A request body is sent with its length (Content-Length); this one was not."
    }
    working.refresh_from_db()
    assert working.state == JobState.WORKING
    assert JobTransition.objects.filter(job=working).count() == transitions


def test_nothing_past_a_declared_length_is_read(job, simple_checklists, operator):
    """A body longer than it says (a length that lies small) is read to its length alone:
    what follows it is never parsed, so the limit on the declared length bounds every read."""
    record = site_record(job, simple_checklists)
    content = json.dumps({"records": [record]}).encode()
    body = Streamed(content, len(content) + 10 * MiB, fill=b"x")

    response = post_streamed(
        operator, reverse("sync"), body, "application/json", CONTENT_LENGTH=str(len(content))
    )

    assert response.status_code == 200, response.json()
    assert response.json()["results"][0]["status"] == "applied"
    assert body.taken == len(content)


def test_a_body_at_the_limit_is_read(job, operator):
    response = post_streamed(
        operator,
        reverse("sync"),
        Streamed(b'{"records": []}', BODY_LIMIT),
        "application/json",
    )

    assert response.status_code == 200, response.json()
    assert response.json()["results"] == []


def test_the_limits_are_the_documented_ones():
    assert (settings.PARAPET_MAX_BODY_BYTES, settings.PARAPET_MAX_FORM_BYTES) == (
        BODY_LIMIT,
        FORM_LIMIT,
    )


def test_the_form_limit_fits_the_largest_file_each_endpoint_takes_with_its_form():
    """The verify page's export (50 MB) is the largest; a form's other parts and headers are
    a few hundred bytes (a megabyte is left for them)."""
    largest = max(PHOTO_MAX_BYTES, CERTIFICATE_MAX_BYTES, VERIFY_MAX_BYTES)
    assert largest == VERIFY_MAX_BYTES == 50 * MiB
    assert largest + MiB <= FORM_LIMIT


def test_the_body_limit_fits_the_longest_batch_the_phone_sends(job, simple_checklists):
    """200 records (the phone's batch and the server's MAX_BATCH), each a sheet with the
    longest remarks (4,000 characters) and a note at its longest (8,000), written in four-byte
    characters, and a vacuum decay series read every second for ten minutes: a batch as heavy
    as the checks let a phone's be, about 11 MB, under the limit with a quarter to spare."""
    longest = "\U0001f9f1"  # four bytes in UTF-8
    record = site_record(job, simple_checklists)
    record["data"]["remarks"] = longest * 4000
    record["data"]["entries"] = {
        **PASSING["site"],
        "notes": {"value": longest * 8000},
        "decay_series": {"value": [[t, 80.0 - t / 1000] for t in range(600)], "unit": "kPa"},
    }
    batch = {"records": [record] * MAX_BATCH, "sent_at": "2026-12-05T07:05:00+01:00"}
    size = len(json.dumps(batch, ensure_ascii=False).encode())
    assert 9 * MiB < size < BODY_LIMIT * 3 // 4


def test_a_form_s_text_parts_over_the_body_limit_are_refused_in_the_api_s_words(
    job, operator, tmp_path
):
    """Within the form's limit, a text part longer than any body but a form's: Django's parser
    stops at the body limit, and its refusal was an HTML page (Bad Request), not the API's."""
    before = stored(tmp_path)
    head = (
        f"--{BOUNDARY}\r\n"
        'Content-Disposition: form-data; name="job"\r\n\r\n'
        f"{job.pk}\r\n"
        f"--{BOUNDARY}\r\n"
        'Content-Disposition: form-data; name="item_key"\r\n\r\n'
    ).encode()
    body = Streamed(head, BODY_LIMIT + 1024, f"\r\n--{BOUNDARY}--\r\n".encode(), fill=b"k")

    response = post_streamed(operator, reverse("photos"), body, FORM)

    assert response.status_code == 413
    assert response.json() == {
        "detail": f"A form's text parts are at most 16 MB ({BODY_LIMIT} bytes) together."
    }
    assert stored(tmp_path) == before


def many_parts(count: int, *, files: bool = False) -> bytes:
    """A multipart form of `count` small parts (text fields, or files)."""
    parts = []
    for n in range(count):
        if files:
            disposition = f'name="f{n}"; filename="f{n}.txt"\r\nContent-Type: text/plain'
        else:
            disposition = f'name="f{n}"'
        parts.append(f"--{BOUNDARY}\r\nContent-Disposition: form-data; {disposition}\r\n\r\nx\r\n")
    return ("".join(parts) + f"--{BOUNDARY}--\r\n").encode()


@pytest.mark.parametrize("files", [False, True], ids=["fields", "files"])
def test_a_form_of_more_parts_than_the_server_reads_is_refused_in_the_api_s_words(
    job, operator, tmp_path, files
):
    """Django stops reading a form past DATA_UPLOAD_MAX_NUMBER_FIELDS fields (or
    DATA_UPLOAD_MAX_NUMBER_FILES files); its refusal was an HTML page, not the API's."""
    limit = (
        settings.DATA_UPLOAD_MAX_NUMBER_FILES if files else settings.DATA_UPLOAD_MAX_NUMBER_FIELDS
    )
    before = stored(tmp_path)

    response = client_for(operator).post(
        reverse("photos"), data=many_parts(limit + 1, files=files), content_type=FORM
    )

    assert response.status_code == 400
    kind = "files" if files else "fields"
    assert response.json() == {
        "detail": f"A form holds at most {limit} {kind}; this one holds more."
    }
    assert stored(tmp_path) == before


def test_a_urlencoded_body_of_too_many_fields_is_refused_in_the_api_s_words(job, operator):
    """The API reads no urlencoded form: its count of fields is never reached."""
    limit = settings.DATA_UPLOAD_MAX_NUMBER_FIELDS
    body = "&".join(f"f{n}=x" for n in range(limit + 1))

    response = client_for(operator).post(
        reverse("sheet-list"), data=body, content_type="application/x-www-form-urlencoded"
    )

    assert response.status_code == 415
    assert response.json() == {
        "detail": 'Unsupported media type "application/x-www-form-urlencoded" in request.'
    }

"""Rendering is a function of the sealed document, the seal and the photo bytes alone."""

import io
import json
import uuid
from pathlib import Path

import pytest
from django.core.files.uploadedfile import SimpleUploadedFile
from PIL import Image
from pypdf import PdfReader

from checklists.models import Photo
from checklists.photos import store_photo
from compliance import clock
from compliance.records.checks import verify_pdf
from compliance.records.files import _photo_bytes, render_signed_pdf
from compliance.records.pdf import render
from compliance.records.services import sign_daily_record
from tests.factories import PASSWORD
from tests.records.object_storage import use_object_storage

pytestmark = pytest.mark.django_db


def _jpeg(width: int, height: int, colour: str) -> SimpleUploadedFile:
    data = io.BytesIO()
    Image.new("RGB", (width, height), colour).save(data, format="JPEG")
    return SimpleUploadedFile("p.jpg", data.getvalue(), content_type="image/jpeg")


@pytest.fixture
def photographed(closed_job, operator, supervisor, settings, tmp_path):
    """The closed day with a tall and a wide photo on its first sheet, then signed."""
    settings.MEDIA_ROOT = tmp_path
    sheet = closed_job.sheets.order_by("id").first()
    for size, colour in (((60, 120), "red"), ((200, 50), "blue")):
        with clock.replaying(closed_job.date):  # sent on the day, as its sheet was
            store_photo(
                by=operator,
                job=closed_job,
                image=_jpeg(*size, colour),
                client_uuid=uuid.uuid4(),
                sheet_uuid=sheet.client_uuid,
                item_key="sound",
            )
    return sign_daily_record(
        job=closed_job, by=supervisor, password=PASSWORD, meaning="reviewed_safe"
    )


def _images(pdf: bytes) -> int:
    return sum(len(page.images) for page in PdfReader(io.BytesIO(pdf)).pages)


def _layout(pdf: bytes) -> list[list[tuple[str, float, float]]]:
    """Every text run of every page with where it is drawn."""
    pages = []
    for page in PdfReader(io.BytesIO(pdf)).pages:
        runs: list[tuple[str, float, float]] = []

        def visit(text, cm, tm, font, size, runs=runs):
            if text.strip():
                runs.append((text, round(cm[4] + tm[4], 2), round(cm[5] + tm[5], 2)))

        page.extract_text(visitor_text=visit)
        pages.append(runs)
    return pages


def test_the_same_record_renders_to_the_same_bytes(photographed):
    document = json.loads(photographed.canonical_json)
    photos = _photo_bytes(photographed, document)
    assert len(photos) == 2
    first = render(document, photographed.seal, photos)
    assert render(document, photographed.seal, photos) == first
    assert render(document, photographed.seal) == render(document, photographed.seal)


def test_photos_render_from_a_storage_with_no_local_path(
    closed_job, operator, supervisor, settings
):
    use_object_storage(settings)
    sheet = closed_job.sheets.order_by("id").first()
    with clock.replaying(closed_job.date):
        store_photo(
            by=operator,
            job=closed_job,
            image=_jpeg(80, 60, "green"),
            client_uuid=uuid.uuid4(),
            sheet_uuid=sheet.client_uuid,
            item_key="sound",
        )
    photo = Photo.objects.get()
    with pytest.raises(NotImplementedError):
        photo.image.path  # noqa: B018 - object storage has no local file
    record = sign_daily_record(
        job=closed_job, by=supervisor, password=PASSWORD, meaning="reviewed_safe"
    )
    pdf = render_signed_pdf(record)
    assert _images(pdf) == 1
    assert verify_pdf(pdf, name="record.pdf").ok


def test_a_photo_lays_out_the_same_without_its_bytes(photographed, settings, tmp_path):
    """Boxes are sized from the sealed width and height: a re-render from the sealed JSON
    alone puts every line of text where the signed PDF has it."""
    settings.MEDIA_ROOT = tmp_path
    document = json.loads(photographed.canonical_json)
    with_bytes = render(document, photographed.seal, _photo_bytes(photographed, document))
    without = render(document, photographed.seal)
    assert _images(with_bytes) == 2 and _images(without) == 0
    assert _layout(with_bytes) == _layout(without)


def test_a_photo_whose_stored_bytes_are_not_the_sealed_ones_is_left_out(
    photographed,
):
    photo = Photo.objects.order_by("id").first()
    storage, name = photo.image.storage, photo.image.name
    storage.delete(name)
    storage.save(name, _jpeg(60, 120, "black"))
    document = json.loads(photographed.canonical_json)
    assert set(_photo_bytes(photographed, document)) == {
        str(p.client_uuid) for p in Photo.objects.exclude(pk=photo.pk)
    }


def test_another_process_renders_the_same_bytes(photographed, tmp_path):
    """No set order, hash seed or clock reaches the file: a fresh interpreter with another
    hash seed draws the same bytes from the same sealed JSON."""
    import hashlib
    import os
    import subprocess
    import sys

    document = json.loads(photographed.canonical_json)
    path = tmp_path / "record.json"
    path.write_text(json.dumps({"document": document, "seal": photographed.seal}))
    script = (
        "import hashlib, json, sys\n"
        "from compliance.records.pdf import render\n"
        "given = json.load(open(sys.argv[1]))\n"
        "print(hashlib.sha256(render(given['document'], given['seal'])).hexdigest())\n"
    )
    done = subprocess.run(
        [sys.executable, "-c", script, str(path)],
        capture_output=True,
        text=True,
        timeout=120,
        check=True,
        env={**os.environ, "PYTHONHASHSEED": "12345"},
        cwd=Path(__file__).resolve().parents[2],
    )
    assert done.stdout.strip() == hashlib.sha256(render(document, photographed.seal)).hexdigest()

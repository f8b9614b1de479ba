"""Whatever validation lets into a record renders: long series, long notes, long remarks."""

import io
import time

import pytest
from django.urls import reverse
from pypdf import PdfReader

from compliance.models import DailyRecord, RecordPdf
from compliance.records.files import render_signed_pdf
from compliance.records.pdf import CAUTION
from tests.conftest import client_for
from tests.factories import PASSWORD
from tests.records.long_day import (
    NOTE_CHARS,
    SERIES_SAMPLES,
    decay_samples,
    long_day,
    long_note,
)

pytestmark = pytest.mark.django_db

LONG_REMARKS = ("Second drop stopped for rain at 14:10; resumed 14:40. " * 80)[:4000]


def _pages_text(pdf: bytes) -> list[str]:
    return [page.extract_text() or "" for page in PdfReader(io.BytesIO(pdf)).pages]


@pytest.mark.parametrize("spaced", [True, False], ids=["words", "one-long-word"])
def test_a_601_reading_series_and_a_6500_character_note_sign_and_render(
    job,
    simple_checklists,
    operator,
    supervisor,
    credential,
    tmp_path,
    settings,
    django_capture_on_commit_callbacks,
    spaced,
):
    settings.MEDIA_ROOT = tmp_path
    long_day(job, simple_checklists, operator, note=long_note(NOTE_CHARS, spaced=spaced))
    with django_capture_on_commit_callbacks(execute=True):
        response = client_for(supervisor).post(
            reverse("job-sign", args=[job.pk]),
            {"password": PASSWORD, "meaning": "reviewed_safe", "remarks": LONG_REMARKS},
            format="json",
        )
    assert response.status_code == 201, response.content[:500]
    record = DailyRecord.objects.get(pk=response.json()["id"])
    assert RecordPdf.objects.filter(record=record).count() == 1
    started = time.perf_counter()
    pages = _pages_text(render_signed_pdf(record))
    print(f"{len(pages)} pages in {time.perf_counter() - started:.2f} s")
    assert all(CAUTION[:60] in text for text in pages)
    text = "".join(pages).replace("\n", "")
    for t, v in (decay_samples()[0], decay_samples()[-1]):  # every reading is in the table
        assert f"{t:g}" in text and f"{v:g}" in text
    assert "hold limit 40 kPa" in text  # the plot's limit line, from the decay test's input
    assert f"{SERIES_SAMPLES} readings over 3000 s" in text
    note = long_note(NOTE_CHARS, spaced=spaced)
    assert note[-200:].replace(" ", "") in text.replace(" ", "")  # the note's end is printed

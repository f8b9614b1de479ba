"""The printed record says why a failed calculation failed, under the item in its sheet's table,
in the calculation's own words (its `reason`), not only in the list of failed items up front."""

import io
import json

import pytest
from pypdf import PdfReader

from compliance.demo import load_demo
from compliance.engineering.working import whole_pct
from compliance.models import DailyRecord
from compliance.records.pdf import render

pytestmark = pytest.mark.django_db

# 24 s: the demo's split cup, to the least vacuum at the robot's 15 m/s stop-work gust (33 s
# when the hold took the 5.5 m/s reading's wind).
REASON = "With the pump off the grip lasts about 24 s; 300 s are needed."


def _text(pdf: bytes) -> str:
    pages = PdfReader(io.BytesIO(pdf)).pages
    return " ".join(" ".join((page.extract_text() or "").split()) for page in pages)


def test_a_failed_calculation_prints_its_reason_under_the_item(tmp_path, settings):
    settings.MEDIA_ROOT = tmp_path
    load_demo()
    held_day = next(
        r
        for r in DailyRecord.objects.order_by("pk")
        if any(
            e["item"] == "decay_test" and e["verdict"] == "fail"
            for sheet in json.loads(r.canonical_json)["record"]["sheets"]
            for e in sheet["entries"]
        )
    )
    document = json.loads(held_day.canonical_json)
    decay = next(
        e
        for sheet in document["record"]["sheets"]
        for e in sheet["entries"]
        if e["item"] == "decay_test" and e["verdict"] == "fail"
    )
    assert decay["working"]["reason"] == REASON
    text = _text(render(document, held_day.seal))
    # The section's heading, then its first sheet ("#12 Vacuum hold ..."), not the cover's row.
    up_front, _, sheets = text.partition("Check sheets #")
    assert sheets, "the record has its check sheets section"
    assert REASON in up_front  # the failed items' list already said it
    assert sheets.count(REASON) == 1
    # Under the item's own row: its label (the checklist's words), then the reason, then its
    # entry.
    margin = whole_pct(decay["margin"], passed=False)
    assert decay["label"] == "Time the grip lasts with the pump isolated"
    assert f"{decay['label']} (blocking) {REASON} computed fail {margin}" in sheets


def test_a_passing_calculation_prints_no_reason_line(tmp_path, settings):
    settings.MEDIA_ROOT = tmp_path
    load_demo()
    record = DailyRecord.objects.order_by("pk").first()
    document = json.loads(record.canonical_json)
    entries = [e for sheet in document["record"]["sheets"] for e in sheet["entries"]]
    assert all(e["verdict"] != "fail" for e in entries)
    text = _text(render(document, record.seal))
    assert "Time the grip lasts with the pump isolated (blocking) computed pass" in text

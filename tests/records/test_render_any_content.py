"""Whatever text and readings validation lets into a record, the record renders."""

import copy
import io
import json

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from pypdf import PdfReader

from compliance.records.pdf import CAUTION, render

pytestmark = pytest.mark.django_db

CHARACTERS = st.characters(exclude_categories=["Cs"])  # JSON cannot carry a lone surrogate
TEXTS = st.one_of(
    st.text(CHARACTERS, max_size=400),
    st.builds(
        lambda c, n: c * n, st.text(CHARACTERS, min_size=1, max_size=3), st.integers(1, 2500)
    ),
)
TIMES = st.lists(
    st.floats(0, 1.7e308, allow_nan=False, allow_infinity=False),
    min_size=2,
    max_size=700,
    unique=True,
).map(sorted)
READINGS = st.floats(allow_nan=False, allow_infinity=False)


def _entry(item, kind, value, unit="kPa", verdict="recorded", message=""):
    return {
        "item": item,
        "kind": kind,
        "blocking": True,
        "value": value,
        "unit": unit,
        "verdict": verdict,
        "margin": None,
        "message": message,
        "working": {},
    }


@settings(
    max_examples=12,
    deadline=None,
    suppress_health_check=[HealthCheck.function_scoped_fixture, HealthCheck.too_slow],
)
@given(text=TEXTS, times=TIMES, data=st.data())
def test_any_text_and_any_series_render(signed, text, times, data):
    document = copy.deepcopy(json.loads(signed.canonical_json))
    readings = data.draw(st.lists(READINGS, min_size=len(times), max_size=len(times)))
    record = document["record"]
    document["remarks"] = text
    sheet = record["sheets"][0]
    sheet["remarks"] = text
    sheet["entries"] += [
        _entry("crew_note", "note", text),
        _entry("decay_series", "series", [[t, v] for t, v in zip(times, readings, strict=True)]),
        _entry(text[:80] or "x", "tick", "fail", verdict="fail", message=text),
    ]
    record["holds"].append(
        {
            "id": 1,
            "requirement": "x",
            "item": "x",
            "reason": text,
            "sheet": sheet["id"],
            "opened_at": "2026-01-01T00:00:00Z",
            "cleared_at": None,
            "cleared_by_sheet": None,
        }
    )
    record["transitions"][-1]["reason"] = text
    pdf = render(document, signed.seal)
    pages = PdfReader(io.BytesIO(pdf)).pages
    assert "Page 1 of" in pages[0].extract_text()
    assert CAUTION[:40] in pages[-1].extract_text()

"""The pages of every record format stay what they were signed with.

The verifier proves that a signed record's pages say what was sealed by drawing the sealed
document again and comparing page by page (`compliance/records/page_check.py`). So any change
to the drawing code that changes one byte of a page of an existing format (a new padding, a
font, a faster table, a reportlab upgrade) makes every record already signed in that format
fail its verification. These tests pin the page prints of a fixed document of each format: a
change that breaks them must instead become a new record format, drawn by a new layout, with
the old formats drawn exactly as before.

`layouts/documents.json` holds the fixed documents: a day's record with a failed item, an open
and a cleared hold, a clock note, a photo (drawn as its empty box), series, calculations and
a drop plan, a series of 300 readings whose table runs over pages and a remark split over
rows, once in each record format; and an addendum.
"""

import hashlib
import io
import json
from pathlib import Path

import pytest
from pypdf import PdfReader

from compliance.records.page_check import page_prints
from compliance.records.pdf import document_of, read_attachment, render
from compliance.records.sealing import canonical_bytes

FIXTURES = json.loads((Path(__file__).parent / "layouts" / "documents.json").read_text())

PINNED = {
    "record-2": "1af3565704aac78ca024d232ceb61faf09995cb56e74a9b603999b088e764c69",
    "record-3": "1bf403c39c6803fef925baf34c1bf626e8056d675464caa8066fc1c8d1672ced",
    "addendum": "331918f152612e551496d4f4acf005eae23ad3ec2cc0be17e9a2a3ddb56f6cd0",
}


def prints_digest(pdf: bytes) -> str:
    prints = page_prints(PdfReader(io.BytesIO(pdf)))
    return hashlib.sha256(json.dumps(prints, sort_keys=True).encode()).hexdigest()


@pytest.mark.parametrize("name", sorted(PINNED))
def test_the_pages_of_each_format_are_drawn_as_they_were_signed(name):
    pdf = render(FIXTURES["documents"][name], FIXTURES["seal"])

    assert prints_digest(pdf) == PINNED[name]


@pytest.mark.parametrize("name", sorted(PINNED))
def test_the_file_carries_the_canonical_document(name):
    document = FIXTURES["documents"][name]

    pdf = render(document, FIXTURES["seal"])

    assert read_attachment(pdf) == canonical_bytes(document)
    assert document_of(pdf) == document

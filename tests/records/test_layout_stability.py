"""The pages of every record format stay what they were signed with.

The verifier proves that a signed record's pages say what was sealed by drawing the sealed
document again and comparing page by page (`compliance/records/page_check.py`). So any change
to the drawing code that changes one byte of a page of an existing format (a new padding, a
font, a faster table, a reportlab upgrade) makes every record already signed in that format
fail its verification. These tests pin the page prints of a fixed document of each format: a
change that breaks them must instead become a new record format, drawn by a new layout, with
the old formats drawn exactly as before.

`layouts/documents.json` holds the fixed documents (and a site's anchor log book, whose pages
the verifier checks in the same way): a day's record with a failed item, an open
and a cleared hold, a clock note, a photo (drawn as its empty box), series, calculations and
a drop plan, a series of 300 readings whose table runs over pages and a remark split over
rows, drawn in each record format (the formats differ in how they are drawn, and from /7 in
the figures each check was judged on); and an addendum.
"""

import hashlib
import io
import json
from pathlib import Path

import pytest
from pypdf import PdfReader
from reportlab.lib.units import mm

from compliance.records.page_check import page_prints
from compliance.records.pdf import _fits, _styles, document_of, read_attachment, render
from compliance.records.sealing import canonical_bytes

FIXTURES = json.loads((Path(__file__).parent / "layouts" / "documents.json").read_text())
NOTED = {
    **FIXTURES["record"]["record"],
    "job": {
        **FIXTURES["record"]["record"]["job"],
        "notes": "Scaffold on the east side until 14:00.",
    },
}


def _found_late(record):
    """The noted document with its open hold opened by sheet 1, made on a phone offline since
    05:01 and received at 08:01: /6 prints when the check was made beside the opening."""
    record = json.loads(json.dumps(record))
    record["holds"][0]["sheet"] = 1
    record["sheets"][0]["device_time"] = "2026-03-04T05:01:00Z"
    record["sheets"][0]["phone_clock_offset_s"] = 0
    return record


FOUND_LATE = _found_late(NOTED)


def _judged(record):
    """The found-late document with the figures its checks were judged on (/7) and a remark in
    two scripts: the anchor's
    sheet on a capacity of 30 kN where the record's certificate reads 22.2 kN at signing, the
    robot's sheet on two drops, one of them no longer in the plan."""
    record = json.loads(json.dumps(record))
    for sheet in record["sheets"]:
        sheet["judged_on"] = {"1": {}}
    record["sheets"][0]["judged_on"] = {
        "1": {
            "anchor.rated_capacity_kn": 30,
            "drop.length_m": 100,
            "profile.min_anchor_capacity_kn": 12,
        }
    }
    # A remark the fonts cannot draw all of: /7 prints the code point where /6 drew a box.
    record["sheets"][0]["remarks"] = "Weld crack seen by 李 Wei; photo sent."
    # Worked from 07:30 to 09:40 under a profile asking for the wind every 60 min, and no
    # weather check made: the first page says so.
    record["profile"]["thresholds"]["weather_recheck_min"] = {
        "source": "layout test",
        "unit": "min",
        "value": 60,
    }
    record["transitions"] += [
        {
            "at": "2026-03-04T08:30:00Z",
            "by": None,
            "by_id": None,
            "from": "held",
            "reason": "Held item cleared.",
            "to": "working",
        },
        {
            "at": "2026-03-04T09:40:00Z",
            "by": None,
            "by_id": None,
            "from": "working",
            "reason": "Done.",
            "to": "closed",
        },
    ]
    record["sheets"][2]["judged_on"] = {
        "1": {"equipment.max_wind_ms": 12, "profile.max_wind_ms": 14, "hose.kg_per_m": 0.15},
        "99": {"equipment.mass_kg": 60, "drop.facade_zone": "edge"},
    }
    return record


JUDGED = _judged(FOUND_LATE)
DOCUMENTS = {
    **{
        f"record-{n}": {**FIXTURES["record"], "format": f"parapet.daily-record/{n}"}
        for n in (2, 3, 4)
    },
    # /5 prints the job's notes: the fixed document with notes written.
    "record-5": {**FIXTURES["record"], "record": NOTED, "format": "parapet.daily-record/5"},
    # /6 prints when a hold's check was made, where it reached the server well after.
    "record-6": {**FIXTURES["record"], "record": FOUND_LATE, "format": "parapet.daily-record/6"},
    # /7 prints the figures each check was judged on, and those changed by signing.
    "record-7": {**FIXTURES["record"], "record": JUDGED, "format": "parapet.daily-record/7"},
    "addendum": FIXTURES["addendum"],
    # addendum/3 prints a character the fonts cannot draw as its code point.
    "addendum-3": {
        **FIXTURES["addendum"],
        "format": "parapet.daily-record-addendum/3",
        "text": FIXTURES["addendum"]["text"] + " Inspected by 李 Wei.",
    },
}

PINNED = {
    "record-2": "1af3565704aac78ca024d232ceb61faf09995cb56e74a9b603999b088e764c69",
    "record-3": "1bf403c39c6803fef925baf34c1bf626e8056d675464caa8066fc1c8d1672ced",
    "record-4": "332a19adf82a43818d73067040eac864800488143d65d5a3f8cade8ca160876f",
    "record-5": "38933f2fa38e8cef9320424e4e9ea1ea3a127ac866877112f248b8913d054c64",
    "record-6": "7850817f8884c7f9dfbdbe148b1d49f8704d0cffc6e4d7ffa3f7082bb3969ab1",
    "record-7": "51f16ed5063b66f89ee39009c6001e8f218d03256fbc41c59ff58b9156e61844",
    "addendum": "331918f152612e551496d4f4acf005eae23ad3ec2cc0be17e9a2a3ddb56f6cd0",
    "addendum-3": "d5e81ae7625f748097eeb51e1e16043ea4951d6bb0491148dcaafd160454c5a5",
}


def prints_digest(pdf: bytes) -> str:
    prints = page_prints(PdfReader(io.BytesIO(pdf)))
    return hashlib.sha256(json.dumps(prints, sort_keys=True).encode()).hexdigest()


LOG_BOOKS = {
    "log-book-1": FIXTURES["log_book"],
    # /2 prints its times in the document's zone.
    "log-book-2": {
        **FIXTURES["log_book"],
        "format": "parapet.anchor-log-book/2",
        "time_zone": "Europe/Lisbon",
    },
    # /3 prints a character the fonts cannot draw as its code point.
    "log-book-3": {
        **FIXTURES["log_book"],
        "format": "parapet.anchor-log-book/3",
        "time_zone": "Europe/Lisbon",
        "generated_by": {**FIXTURES["log_book"]["generated_by"], "name": "Owner 李 Wei"},
    },
}


LOG_BOOK_PINNED = {
    "log-book-1": "187c9e0b742fe7a0b2d67c832ceeef46d94d35cc1da46bf1f4c06baf12cedf90",
    "log-book-2": "953917ed71b1cdc53a33df30b82be5c13e48e66148de3d8d3e30d757fb1c5313",
    "log-book-3": "3a887e5ff5baf01884cea4b8df76fd4f37e93a1148cd47680548f31cfbf64267",
}


@pytest.mark.parametrize("name", sorted(LOG_BOOK_PINNED))
def test_the_pages_of_each_log_book_format_are_drawn_as_they_were_signed(name):
    from compliance.anchor_log.pdf import render as render_log_book

    pdf = render_log_book(LOG_BOOKS[name], FIXTURES["seal"])

    assert prints_digest(pdf) == LOG_BOOK_PINNED[name]


@pytest.mark.parametrize("name", sorted(PINNED))
def test_the_pages_of_each_format_are_drawn_as_they_were_signed(name):
    pdf = render(DOCUMENTS[name], FIXTURES["seal"])

    assert prints_digest(pdf) == PINNED[name]


@pytest.mark.parametrize("name", sorted(PINNED))
def test_the_file_carries_the_canonical_document(name):
    document = DOCUMENTS[name]

    pdf = render(document, FIXTURES["seal"])

    assert read_attachment(pdf) == canonical_bytes(document)
    assert document_of(pdf) == document


@pytest.mark.parametrize(
    ("text", "fits"),
    [
        ("pass", True),
        ("anchor visual check 1 (blocking)", True),
        ("a\ttab", False),
        ("two\nlines", False),
        ("a control \x07 character", False),
        ("word " * 40, False),
        ("", True),
    ],
)
def test_a_cell_is_drawn_plain_only_when_it_fits_on_one_line(text, fits):
    """From /4 a plain cell is one text operation: it must never run past its column or hide
    a line break; anything else is set as a paragraph, which wraps."""
    assert _fits(text, 60 * mm, _styles()["small"]) is fits


def test_a_long_cell_in_the_plain_layout_wraps_and_keeps_every_word():
    document = json.loads(json.dumps(DOCUMENTS["record-4"]))
    label = " ".join(f"word{n}" for n in range(80))
    document["record"]["sheets"][0]["entries"][0]["label"] = label

    text = "".join(
        page.extract_text() for page in PdfReader(io.BytesIO(render(document, "5e" * 32))).pages
    )

    assert all(f"word{n}" in text for n in range(80))


@pytest.mark.parametrize("name", ["record-2", "record-3"])
@pytest.mark.parametrize("kind", ["JPEG", "PNG"])
def test_records_drawn_with_ascii85_streams_compare_equal(name, kind):
    """Records signed before streams dropped ASCII85 (with reportlab's default on) are compared
    with drawings made without it: the page check compares decoded streams, photos included."""
    from PIL import Image
    from reportlab import rl_config

    document = DOCUMENTS[name]
    image = io.BytesIO()
    Image.new("RGB", (120, 90), "teal").save(image, format=kind)
    photos = {document["record"]["photos"][0]["client_uuid"]: image.getvalue()}
    rl_config.useA85 = 1
    try:
        before = render(document, FIXTURES["seal"], photos)
    finally:
        rl_config.useA85 = 0
    now = render(document, FIXTURES["seal"], photos)

    assert before != now
    assert page_prints(PdfReader(io.BytesIO(before))) == page_prints(PdfReader(io.BytesIO(now)))


def test_the_plain_layout_s_qr_code_holds_the_seal_as_the_graphics_one_does():
    """From /4 the seal's QR code is drawn straight on the canvas: the same modules as
    reportlab's QR widget makes for the same text, so a phone reads the same seal."""
    from reportlab.graphics.barcode.qr import QrCodeWidget

    from compliance.records.pdf import _CanvasQr

    seal = FIXTURES["seal"]
    widget = QrCodeWidget(f"parapet-seal:{seal}")
    widget.qr.make()

    assert _CanvasQr(seal).modules == [[bool(m) for m in row] for row in widget.qr.modules]


FONT_SHA256 = {
    # DejaVu Sans 2.37 (Debian's fonts-dejavu-core 2.37-6), the files every record so far was
    # drawn with; the digests are of the files as shipped.
    "DejaVuSans.ttf": "abdc775b21b1bc470d50c97e790d276f2054b7504e56e5bd3e64f48d68582322",
    "DejaVuSans-Bold.ttf": "0d977336a6d5fba34eab8e3199eb218327161b5143749f802982c2bc34df0c96",
}


def test_records_are_drawn_with_the_project_s_own_font_files():
    """The page check compares every embedded font, so a record must draw with the same font
    file on the auditor's machine as on the server that signed it, whatever fonts the machine
    has installed (or none)."""
    from compliance.records.pdf import FONT_FILES

    root = Path(__file__).resolve().parents[2]
    assert {path.name for path in FONT_FILES} == set(FONT_SHA256)
    for path in FONT_FILES:
        assert path.resolve().is_relative_to(root / "compliance"), path
        assert hashlib.sha256(path.read_bytes()).hexdigest() == FONT_SHA256[path.name]


def test_a_machine_without_the_system_fonts_draws_the_same_pages(tmp_path):
    """As an auditor's laptop with no DejaVu installed: the pinned pages come out the same."""
    import subprocess
    import sys

    script = tmp_path / "draw.py"
    script.write_text(
        "import hashlib, io, json, pathlib, sys\n"
        "real_exists = pathlib.Path.exists\n"
        "pathlib.Path.exists = lambda self, *a, **k: (\n"
        "    not str(self).startswith('/usr/share/fonts') and real_exists(self, *a, **k))\n"
        "import builtins\n"
        "real_open = builtins.open\n"
        "def guarded(file, *a, **k):\n"
        "    if str(file).startswith('/usr/share/fonts'):\n"
        "        raise FileNotFoundError(file)\n"
        "    return real_open(file, *a, **k)\n"
        "builtins.open = guarded\n"
        "from pypdf import PdfReader\n"
        "from compliance.records.page_check import page_prints\n"
        "from compliance.records.pdf import render\n"
        "document, seal = json.loads(sys.stdin.read())\n"
        "prints = page_prints(PdfReader(io.BytesIO(render(document, seal))))\n"
        "print(hashlib.sha256(json.dumps(prints, sort_keys=True).encode()).hexdigest())\n"
    )
    root = Path(__file__).resolve().parents[2]
    drawn = subprocess.run(
        [sys.executable, str(script)],
        input=json.dumps([DOCUMENTS["record-4"], FIXTURES["seal"]]),
        capture_output=True,
        text=True,
        cwd=root,
        env={"PYTHONPATH": str(root), "PATH": "/usr/bin:/bin"},
        timeout=120,
    )
    assert drawn.returncode == 0, drawn.stderr[-2000:]
    assert drawn.stdout.strip() == PINNED["record-4"]


def test_from_6_a_hold_says_when_its_check_was_made_and_before_it_did_not():
    """A failure found offline at 05:01 read "opened 08:01" alone, as if found three hours
    later; the time zone of the fixture is Europe/Lisbon (UTC+0 in March)."""

    def text(document):
        pdf = render(document, FIXTURES["seal"])
        return " ".join(p.extract_text() for p in PdfReader(io.BytesIO(pdf)).pages)

    assert "check was made 2026-03-04 05:01:00" in " ".join(text(DOCUMENTS["record-6"]).split())
    as_five = {**DOCUMENTS["record-6"], "format": "parapet.daily-record/5"}
    assert "check was made" not in " ".join(text(as_five).split())


def test_from_7_each_check_prints_the_figures_it_was_judged_on_and_before_it_did_not():
    def text(document):
        pdf = render(document, FIXTURES["seal"])
        return " ".join(
            " ".join(p.extract_text() for p in PdfReader(io.BytesIO(pdf)).pages).split()
        )

    seven = text(DOCUMENTS["record-7"])
    assert "Figures changed between a check and signing" in seven
    assert "anchor R0-0 rated capacity 30 kN (the register read 22.2 kN at signing)" in seven
    assert "Judged on, for drop #99 (no longer in the plan): drop #99 (no longer" in seven
    assert "hose hose-0 0.15 kg/m" in seven
    assert (
        "It was not read in time from 2026-03-04 08:30:00 to 2026-03-04 09:40:00"
        " (Europe/Lisbon)." in seven
    )
    as_six = text({**DOCUMENTS["record-7"], "format": "parapet.daily-record/6"})
    assert "Judged on" not in as_six and "Figures changed" not in as_six
    assert "without a recent wind reading" not in as_six


def test_from_7_a_character_the_fonts_cannot_draw_prints_as_its_code_point():
    """DejaVu Sans has no Han glyphs: the remark's name printed as an empty box, so the page
    a person reads did not say what was sealed. The attachment keeps the text as written."""
    document = DOCUMENTS["record-7"]
    pdf = render(document, FIXTURES["seal"])
    text = " ".join(" ".join(p.extract_text() for p in PdfReader(io.BytesIO(pdf)).pages).split())

    assert "Weld crack seen by [U+674E] Wei; photo sent." in text
    assert "each prints as its code point, such as [U+4E2D]" in text
    assert document_of(pdf) == document
    assert "李" in read_attachment(pdf).decode()
    as_six = render({**document, "format": "parapet.daily-record/6"}, FIXTURES["seal"])
    six = " ".join(p.extract_text() for p in PdfReader(io.BytesIO(as_six)).pages)
    assert "[U+674E]" not in six and "code point" not in six


@pytest.mark.parametrize(
    ("name", "spelled", "as_before"),
    [
        ("addendum-3", "Inspected by [U+674E] Wei.", "parapet.daily-record-addendum/2"),
        ("log-book-3", "Owner [U+674E] Wei", "parapet.anchor-log-book/2"),
    ],
)
def test_an_addendum_and_a_log_book_spell_what_the_fonts_cannot_draw(name, spelled, as_before):
    from compliance.anchor_log.pdf import render as render_log_book

    document = {**DOCUMENTS, **LOG_BOOKS}[name]
    draw = render_log_book if name.startswith("log-book") else render

    def text(doc):
        pdf = draw(doc, FIXTURES["seal"])
        return pdf, " ".join(
            " ".join(p.extract_text() for p in PdfReader(io.BytesIO(pdf)).pages).split()
        )

    pdf, now = text(document)
    assert spelled in now and "such as [U+4E2D]" in now
    assert document_of(pdf) == document
    _, before = text({**document, "format": as_before})
    assert "[U+674E]" not in before and "code point" not in before


@pytest.mark.parametrize(
    ("text", "drawn"),
    [
        # A right-to-left override: screens that honour it show "NOT VERIFIED".
        ("\u202eDEIFIREV TON\u202c", "[U+202E]DEIFIREV TON[U+202C]"),
        ("pass\u200bed", "pass[U+200B]ed"),  # a zero-width space
        ("soft\u00adhyphen", "soft[U+00AD]hyphen"),
        ("grip \U0001f600", "grip [U+1F600]"),  # past U+FFFF: the page's text map goes wrong
        ("line\u2028break", "line[U+2028]break"),
        # ASCII controls: a carriage return printed as a space, backspaces as boxes.
        ("All fine\rNOT: wind 20 m/s\x08", "All fine[U+000D]NOT: wind 20 m/s[U+0008]"),
        ("\x01\x7f", "[U+0001][U+007F]"),
        ("two\nlines\tand a tab", "two\nlines\tand a tab"),
    ],
)
def test_characters_a_page_would_not_show_truthfully_are_spelled(text, drawn):
    from compliance.records.pdf import _spelled

    assert _spelled(text) == drawn


def test_a_document_whose_only_odd_character_is_an_ascii_control_is_spelled():
    from compliance.records.pdf import spelled_for_drawing

    document = {"remarks": "All fine\rNOT: wind 20 m/s", "n": 1}

    assert spelled_for_drawing(document)["remarks"] == "All fine[U+000D]NOT: wind 20 m/s"
    assert spelled_for_drawing({"remarks": "two\nlines"}) == {"remarks": "two\nlines"}


def test_text_the_fonts_draw_whole_is_not_spelled():
    from compliance.records.pdf import _spelled

    words = {"remark": ["Ré-serrage à 25 N·m, ±2 %, Ø 12 mm, λ 0.8, Ж"], "n": 5}
    assert _spelled(words) == words


def test_a_register_change_s_hold_names_the_kit_it_concerns():
    """A hold a register change opens names the kit or anchor itself ("equipment:5"): its page
    said it concerned "the job"."""
    from compliance.records.pdf import _concerns

    subjects = {"equipment:5": "safety line S-1", "anchor:2": "anchor R2"}
    assert _concerns({"requirement": "equipment:5"}, subjects) == "safety line S-1"
    assert _concerns({"requirement": "anchor-pre-use@anchor:2"}, subjects) == "anchor R2"
    assert _concerns({"requirement": "weather@site"}, subjects) == "the site"
    # Access the owner withdrew concerns the job's site.
    from compliance.registers.selectors import GRANT_REQUIREMENT

    assert _concerns({"requirement": GRANT_REQUIREMENT}, subjects) == "the site"

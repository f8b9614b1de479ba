"""Renders a sealed daily record (its canonical JSON) to PDF with reportlab.

Failed items and holds come first; every page carries the seal, page numbers and the caution.
The canonical JSON is attached to the PDF so an auditor can check the seal from the file alone.
The output is a function of the document, the seal and the photo bytes alone (no clock, no
randomness), and where a photo sits depends only on its sealed size, so a render without the
photo bytes lays out every page the same way.
"""

import datetime as dt
import io
import itertools
import json
import math
import re
import unicodedata
from collections.abc import Mapping
from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path
from typing import Any
from xml.sax.saxutils import escape
from zoneinfo import ZoneInfo, ZoneInfoNotFoundError

from pypdf import PdfReader
from reportlab import rl_config
from reportlab.graphics.barcode import qrencoder
from reportlab.graphics.barcode.qr import QrCodeWidget
from reportlab.graphics.shapes import Circle, Drawing, Line, PolyLine, Rect, String
from reportlab.lib import colors
from reportlab.lib.pagesizes import A4
from reportlab.lib.styles import ParagraphStyle, getSampleStyleSheet
from reportlab.lib.units import mm
from reportlab.lib.utils import ImageReader
from reportlab.pdfbase import pdfdoc, pdfmetrics
from reportlab.pdfbase.ttfonts import TTFont
from reportlab.pdfgen import canvas as rl_canvas
from reportlab.platypus import (
    Flowable,
    KeepTogether,
    PageBreak,
    Paragraph,
    SimpleDocTemplate,
    Spacer,
    Table,
    TableStyle,
)

from compliance.engineering.working import same_figure, told_apart, whole_pct
from compliance.records.sealing import canonical_bytes
from compliance.timeline import WEATHER_CHECKLIST, interval_words, reading_time, weather_gaps
from compliance.timeline import moment as _moment

ATTACHMENT_NAME = "daily-record.json"
SEAL_LABEL = "Seal (SHA-256 of the attached canonical JSON):"
CAUTION = (
    "Parapet records and computes; it does not replace local regulations, the equipment "
    "maker's manual or a licensed engineer's certification."
)
FONT_FILES = (
    Path(__file__).parent / "fonts" / "DejaVuSans.ttf",
    Path(__file__).parent / "fonts" / "DejaVuSans-Bold.ttf",
)
"""The project's own copies (fonts/README.md): the pages, embedded fonts included, must draw
the same on any machine, whatever fonts it has installed."""

# Streams are Flate-compressed only. reportlab's default adds ASCII85 on top, which makes every
# page's stream a quarter larger and costs an encoding at each render and a (pure Python)
# decoding at each check. The page check compares decoded streams, so records drawn with it
# still compare equal.
rl_config.useA85 = 0

CELL_MAX_HEIGHT = 160.0
"""The tallest a table cell is drawn, in points (a fifth of a page): longer text goes on in
the next row, so no row is ever taller than a page."""
CELL_PADDING = 3.0
PHOTO_BOX = (40 * mm, 30 * mm)
PHOTOS_PER_ROW = 4
READINGS_PER_ROW = 8
MARKED_SAMPLES = 120
READING_CHARS = 6
"""A reading longer than this would spill out of its column; it wraps instead."""
PLOT_SIZE = (180 * mm, 62 * mm)
FRAME_WIDTH = A4[0] - 30 * mm
UNLIMITED = 1e9
SHORT_TEXT = 40
"""A plain string cell longer than this is set as a paragraph, so it wraps and splits."""
PLAIN_SLACK = 1.0
"""Points kept free at the right of a plain cell, so rounding never lets text touch the rule."""


def _register_fonts() -> tuple[str, str]:
    if "ParapetSans" in pdfmetrics.getRegisteredFontNames():
        return "ParapetSans", "ParapetSans-Bold"
    regular, bold = FONT_FILES
    pdfmetrics.registerFont(TTFont("ParapetSans", str(regular)))
    pdfmetrics.registerFont(TTFont("ParapetSans-Bold", str(bold)))
    return "ParapetSans", "ParapetSans-Bold"


@lru_cache(maxsize=1)
def _styles() -> dict[str, ParagraphStyle]:
    regular, bold = _register_fonts()
    base = getSampleStyleSheet()
    return {
        "title": ParagraphStyle("t", parent=base["Title"], fontName=bold, fontSize=18, leading=22),
        "h2": ParagraphStyle(
            "h2", parent=base["Heading2"], fontName=bold, fontSize=13, spaceBefore=8
        ),
        "h3": ParagraphStyle("h3", parent=base["Heading3"], fontName=bold, fontSize=10.5),
        "body": ParagraphStyle(
            "b", parent=base["BodyText"], fontName=regular, fontSize=9, leading=11.5
        ),
        "small": ParagraphStyle(
            "s", parent=base["BodyText"], fontName=regular, fontSize=7.5, leading=9.5
        ),
        "mono": ParagraphStyle(
            "m", parent=base["BodyText"], fontName=regular, fontSize=7.5, leading=9.5
        ),
        "cell": ParagraphStyle(
            "c", parent=base["BodyText"], fontName=regular, fontSize=8, leading=9.6
        ),
        "head": ParagraphStyle(
            "hd", parent=base["BodyText"], fontName=bold, fontSize=8, leading=9.6
        ),
        "readings": ParagraphStyle(
            "r",
            parent=base["BodyText"],
            fontName=regular,
            fontSize=6.5,
            leading=7.5,
            alignment=2,
        ),
        "stop": ParagraphStyle(
            "stop",
            parent=base["BodyText"],
            fontName=bold,
            fontSize=10,
            textColor=colors.HexColor("#9b1111"),
        ),
    }


class _Para(Paragraph):
    """A paragraph that breaks its lines once per width.

    A cell's paragraph is wrapped at the same width when its row is cut to CELL_MAX_HEIGHT, when
    its table measures its rows and again when the table draws them; reportlab's line breaking
    depends on the width and the style alone, so the lines of the first are kept and handed out
    again. The pages come out byte for byte the same (tests/records/test_layout_stability.py).
    """

    _kept: tuple[float, ParagraphStyle, Any, float] | None = None

    def wrap(self, availWidth: float, availHeight: float) -> tuple[float, float]:
        kept = self._kept
        if kept is not None and kept[0] == availWidth and kept[1] is self.style:
            self.width, self.blPara, self.height = availWidth, kept[2], kept[3]
            return availWidth, kept[3]
        width, height = super().wrap(availWidth, availHeight)
        if hasattr(self, "blPara") and width == availWidth:
            self._kept = (availWidth, self.style, self.blPara, height)
        return width, height


def _p(text: Any, style: ParagraphStyle) -> Paragraph:
    return _Para(escape("" if text is None else str(text)).replace("\n", "<br/>"), style)


def _is_number(value: Any) -> bool:
    return (
        isinstance(value, int | float)
        and not isinstance(value, bool)
        and math.isfinite(float(value))
    )


def _samples(value: Any) -> list[tuple[float, float]] | None:
    """A series value as (seconds, reading) pairs, or None when it is not one."""
    if not isinstance(value, list) or not value:
        return None
    pairs = []
    for pair in value:
        if not (isinstance(pair, list) and len(pair) == 2 and all(map(_is_number, pair))):
            return None
        pairs.append((float(pair[0]), float(pair[1])))
    return pairs


def _fmt(value: Any) -> str:
    if isinstance(value, float):
        return f"{value:.4g}"
    if isinstance(value, list):
        samples = _samples(value)
        if samples is not None and len(samples) > 1:
            return _series_summary(samples, "")
        if value and isinstance(value[0], list):
            return "; ".join(_fmt(v) for v in value)
        return ", ".join(str(v) for v in value) or "—"
    if isinstance(value, dict):
        return ", ".join(f"{k} {_fmt(value[k])}" for k in sorted(value)[:6])
    return "—" if value in (None, "") else str(value)


def _split_paragraph(cell: Paragraph, width: float, limit: float) -> list[Paragraph]:
    """`cell` cut into parts no taller than `limit` at `width`, at reportlab's own line breaks.

    Halving (at a multiple of `limit`) rather than peeling one part at a time keeps a text of
    thousands of lines from being broken into lines thousands of times over.
    """
    _, height = cell.wrap(width, UNLIMITED)
    if height <= limit:
        return [cell]
    pieces = cell.split(width, limit * max(1, math.floor(height / limit / 2)))
    if len(pieces) < 2:
        return [cell]
    return _split_paragraph(pieces[0], width, limit) + _split_paragraph(pieces[1], width, limit)


def _paras(text: Any, style: ParagraphStyle) -> list[Paragraph]:
    """A text outside a table, as paragraphs no taller than a fifth of a page, which the
    pages then break between; the parts after the first follow without a gap."""
    first, *rest = _split_paragraph(_p(text, style), FRAME_WIDTH, CELL_MAX_HEIGHT)
    for part in rest:
        part.style = _continued(style)
    return [first, *rest]


@lru_cache(maxsize=16)
def _continued(style: ParagraphStyle) -> ParagraphStyle:
    return ParagraphStyle(f"{style.name}-continued", parent=style, spaceBefore=0)


def _fit_rows(
    rows: list[list[Any]], widths: list[float], highlight: set[int], header: bool
) -> tuple[list[list[Any]], list[int]]:
    """Rows whose paragraphs are taller than CELL_MAX_HEIGHT go on over the following rows;
    returns the new rows and which of them are highlighted (a highlighted row's parts are)."""
    out: list[list[Any]] = []
    marked: list[int] = []
    for index, row in enumerate(rows):
        if header and index == 0:
            out.append(row)
            continue
        columns = []
        for cell, width in zip(row, widths, strict=False):
            if isinstance(cell, Paragraph):
                columns.append(_split_paragraph(cell, width - 2 * CELL_PADDING, CELL_MAX_HEIGHT))
            else:
                columns.append([cell])
        for n in range(max(len(c) for c in columns)):
            if index in highlight:
                marked.append(len(out))
            out.append([c[n] if n < len(c) else "" for c in columns])
    return out, marked


def _fits(text: str, width: float, style: ParagraphStyle) -> bool:
    """Whether `text` can be drawn plain on one line of a cell `width` wide: printable
    characters only (no line breaks, tabs or controls) and narrower than the cell's inside."""
    return text.isprintable() and (
        pdfmetrics.stringWidth(text, style.fontName, style.fontSize)
        <= width - 2 * CELL_PADDING - PLAIN_SLACK
    )


def _plain_cell(cell: Any, width: float, heading: bool) -> Any:
    """A cell of the plain layout: a string stays plain text when it fits on one line (a
    heading: when it is short), else it becomes a paragraph; anything else is kept."""
    if not isinstance(cell, str):
        return cell
    s = _styles()
    if heading:
        return cell if len(cell) <= SHORT_TEXT and "\n" not in cell else _p(cell, s["head"])
    return cell if _fits(cell, width, s["small"]) else _p(cell, s["small"])


def _table(
    rows: list[list[Any]],
    widths: list[float],
    header: bool = True,
    highlight: list[int] | None = None,
    plain: bool = False,
) -> Table:
    """A grid of cells; long text wraps, and a cell too tall for a page goes on in new rows.

    `plain` (the layouts from /4): the body is set in the small style, and a string cell that
    fits on one line stays plain text; any other string cell becomes a paragraph.
    """
    regular, bold = _register_fonts()
    s = _styles()
    if plain:
        cells = [
            [
                _plain_cell(cell, width, header and r == 0)
                for cell, width in zip(row, widths, strict=False)
            ]
            for r, row in enumerate(rows)
        ]
    else:
        cells = [
            [
                _p(cell, s["head"] if header and r == 0 else s["cell"])
                if isinstance(cell, str) and (len(cell) > SHORT_TEXT or "\n" in cell)
                else cell
                for cell in row
            ]
            for r, row in enumerate(rows)
        ]
    cells, marked = _fit_rows(cells, widths, set(highlight or []), header)
    table = Table(cells, colWidths=widths, repeatRows=1 if header else 0)
    style = [
        ("FONT", (0, 0), (-1, -1), regular, 8),
        *([("FONT", (0, 1 if header else 0), (-1, -1), regular, 7.5, 9.5)] if plain else []),
        ("VALIGN", (0, 0), (-1, -1), "TOP"),
        ("GRID", (0, 0), (-1, -1), 0.3, colors.HexColor("#777777")),
        ("LEFTPADDING", (0, 0), (-1, -1), CELL_PADDING),
        ("RIGHTPADDING", (0, 0), (-1, -1), CELL_PADDING),
    ]
    if header:
        style += [
            ("FONT", (0, 0), (-1, 0), bold, 8),
            ("BACKGROUND", (0, 0), (-1, 0), colors.HexColor("#e4e4e4")),
        ]
    for row in marked:
        style.append(("BACKGROUND", (0, row), (-1, row), colors.HexColor("#fbe3e3")))
    table.setStyle(TableStyle(style))
    return table


QR_SIZE = 32 * mm
QR_BORDER = 4
"""Modules of white space around the code, as a reader needs."""


def _qr(seal: str) -> Drawing:
    """The seal as a QR code, as reportlab graphics (the layouts up to /3)."""
    widget = QrCodeWidget(f"parapet-seal:{seal}")
    x1, y1, x2, y2 = widget.getBounds()
    # getBounds() drew the code once, working out its modules; drawing it again on the page
    # would work them out again, to the same modules (a tenth of a record's drawing).
    widget.qr.make = lambda: None
    drawing = Drawing(
        QR_SIZE, QR_SIZE, transform=[QR_SIZE / (x2 - x1), 0, 0, QR_SIZE / (y2 - y1), 0, 0]
    )
    drawing.add(widget)
    return drawing


class _CanvasQr(Flowable):
    """The seal as a QR code drawn straight on the canvas (the layouts from /4): its modules
    worked out once, every run of dark modules a rectangle of one filled path."""

    def __init__(self, seal: str) -> None:
        super().__init__()
        self.width = self.height = QR_SIZE
        code = qrencoder.QRCode(None, qrencoder.QRErrorCorrectLevel.L)
        code.addData(f"parapet-seal:{seal}")
        code.make()
        self.modules = [[bool(m) for m in row] for row in code.modules]

    def wrap(self, avail_width: float, avail_height: float) -> tuple[float, float]:
        return self.width, self.height

    def draw(self) -> None:
        count = len(self.modules)
        box = QR_SIZE / (count + 2 * QR_BORDER)
        c = self.canv
        c.saveState()
        c.setFillColor(colors.black)
        path = c.beginPath()
        for r, row in enumerate(self.modules):
            column = 0
            for dark, run in itertools.groupby(row):
                length = len(list(run))
                if dark:
                    path.rect(
                        (column + QR_BORDER) * box,
                        QR_SIZE - (r + QR_BORDER + 1) * box,
                        length * box,
                        box,
                    )
                column += length
        c.drawPath(path, stroke=0, fill=1)
        c.restoreState()


class _NumberedCanvas(rl_canvas.Canvas):
    """Two-pass canvas: 'page n of m', the seal and the caution in every footer."""

    seal = ""
    attachment: bytes | None = None
    """The canonical JSON to embed as ATTACHMENT_NAME (None: a file with no attachment)."""

    def __init__(self, *args: Any, **kwargs: Any) -> None:
        super().__init__(*args, **kwargs)
        self._saved: list[dict[str, Any]] = []

    def showPage(self) -> None:
        self._saved.append(dict(self.__dict__))
        self._startPage()

    def save(self) -> None:
        total = len(self._saved)
        for state in self._saved:
            self.__dict__.update(state)
            self._footer(total)
            super().showPage()
        if self.attachment is not None:
            self._embed(self.attachment)
        super().save()

    def _embed(self, data: bytes) -> None:
        """The document's one embedded file, written by reportlab with the pages (the name
        tree, its file specification and the compressed stream), rather than by parsing the
        finished file and writing it all out again. Nothing on a page refers to it."""
        doc = self._doc
        stream = pdfdoc.PDFStream(
            pdfdoc.PDFDictionary(
                {
                    "Type": pdfdoc.PDFName("EmbeddedFile"),
                    "Params": pdfdoc.PDFDictionary({"Size": len(data)}),
                }
            ),
            content=data,
            filters=[pdfdoc.PDFZCompress],
        )
        name = pdfdoc.PDFString(ATTACHMENT_NAME)
        spec = pdfdoc.PDFDictionary(
            {
                "Type": pdfdoc.PDFName("Filespec"),
                "F": name,
                "UF": name,
                "EF": pdfdoc.PDFDictionary({"F": doc.Reference(stream)}),
            }
        )
        tree = pdfdoc.PDFDictionary({"Names": pdfdoc.PDFArray([name, doc.Reference(spec)])})
        doc.Catalog.Names = pdfdoc.PDFDictionary({"EmbeddedFiles": tree})

    def _footer(self, total: int) -> None:
        regular, _ = _register_fonts()
        self.setFont(regular, 6.5)
        width, _ = A4
        self.drawString(15 * mm, 12 * mm, f"Seal {self.seal}")
        self.drawString(15 * mm, 8.5 * mm, CAUTION)
        self.drawRightString(width - 15 * mm, 12 * mm, f"Page {self._pageNumber} of {total}")


def _canvas_for(seal: str, attachment: bytes | None) -> type[_NumberedCanvas]:
    """A canvas class of its own per render, so two renders at once never share a seal."""
    return type("_SealedCanvas", (_NumberedCanvas,), {"seal": seal, "attachment": attachment})


class _PhotoBox(Flowable):
    """A photo in a fixed box, scaled to fit from its sealed size; the box and the image's
    place are the same whether or not the photo's bytes are given."""

    def __init__(self, width_px: Any, height_px: Any, data: bytes | None) -> None:
        super().__init__()
        self.width, self.height = PHOTO_BOX
        self.width_px = float(width_px) if _is_number(width_px) and width_px > 0 else 0.0
        self.height_px = float(height_px) if _is_number(height_px) and height_px > 0 else 0.0
        self.data = data

    def wrap(self, avail_width: float, avail_height: float) -> tuple[float, float]:
        return self.width, self.height

    def _place(self) -> tuple[float, float, float, float]:
        if not (self.width_px and self.height_px):
            return 0.0, 0.0, self.width, self.height
        scale = min(self.width / self.width_px, self.height / self.height_px)
        w, h = self.width_px * scale, self.height_px * scale
        return (self.width - w) / 2, (self.height - h) / 2, w, h

    def draw(self) -> None:
        x, y, w, h = self._place()
        if self.data:
            self.canv.drawImage(ImageReader(io.BytesIO(self.data)), x, y, w, h)
        self.canv.setStrokeColor(colors.HexColor("#999999"))
        self.canv.setLineWidth(0.3)
        self.canv.rect(x, y, w, h)


FIRST_LAYOUT = "parapet.daily-record/2"
"""Records sealed in this format keep the pages they were signed with (item keys, UTC times
as stored), so that the verifier, which draws a record again to compare its pages, still
finds them equal. Later formats get the readable layout."""
READABLE_LAYOUT = "parapet.daily-record/3"
WITHOUT_NOTES = (FIRST_LAYOUT, READABLE_LAYOUT, "parapet.daily-record/4")
"""The formats whose pages leave the job's notes out (they are drawn as they were signed)."""
WITHOUT_FOUND = (*WITHOUT_NOTES, "parapet.daily-record/5")
"""The formats whose holds print only when the server opened them (drawn as signed)."""
UNSPELLED_ADDENDA = ("parapet.daily-record-addendum/2",)
"""The addendum formats drawn with an empty box for a character the fonts cannot draw (as
signed); from addendum/3 it prints as its code point, as records do from /7."""
WITHOUT_JUDGED_ON = (*WITHOUT_FOUND, "parapet.daily-record/6")
"""The formats sealed before each check's figures were (drawn as signed, without them)."""
"""Records sealed in this format keep the readable layout with every table cell set as a
paragraph and the plots drawn as reportlab graphics. Later formats draw the same pages with
plain cells and plots drawn on the canvas, which is what makes them quick to draw and check."""


@dataclass(frozen=True)
class _Look:
    """How a record's pages print what the document holds, chosen by the document's format."""

    readable: bool
    zone: ZoneInfo | None
    plain: bool = False
    """From /4: a table cell that fits on one line is drawn as plain text (one text operation,
    no paragraph to parse and break into lines), and a plot straight on the canvas."""
    notes: bool = False
    """From /5: the job's notes (sealed since /2, written when the day was planned) print on
    the first page with the remarks; until then a person reading the pages never saw them."""

    found: bool = False
    """From /6: a hold opened by a check that reached the server well after it was made (a
    phone offline on the roof) also prints when the check was made: "opened 10:31" alone read
    as if the failure was found hours after it was."""

    judged: bool = False
    """From /7: each check prints the register, profile and plan figures it was judged on, and
    the first page lists every one the record's register read otherwise at signing (a line
    re-rated after its check printed only its new rating, beside a verdict made on the old).
    From /7 too, a character the record's font has no glyph for prints as its code point
    ("[U+4E2D]") where it printed as an empty box, which a person could not read back."""

    @classmethod
    def of(cls, document: dict[str, Any]) -> "_Look":
        record = document.get("record") or {}
        if document.get("format") == FIRST_LAYOUT or not record:
            return cls(readable=False, zone=None)
        try:
            zone = ZoneInfo(str(record.get("time_zone") or "UTC"))
        except (ZoneInfoNotFoundError, ValueError):
            zone = ZoneInfo("UTC")
        return cls(
            readable=True,
            zone=zone,
            plain=document.get("format") != READABLE_LAYOUT,
            notes=document.get("format") not in WITHOUT_NOTES,
            found=document.get("format") not in WITHOUT_FOUND,
            judged=document.get("format") not in WITHOUT_JUDGED_ON,
        )

    def cell(self, text: Any, style: ParagraphStyle) -> Any:
        """A table cell of `text`: plain (`_table(..., plain=True)` decides whether it fits on
        one line) from /4, a paragraph in `style` before."""
        if self.plain:
            return "" if text is None else str(text)
        return _p(text, style)

    @property
    def zone_name(self) -> str:
        return str(self.zone) if self.zone is not None else "UTC"

    def when(self, stamp: Any) -> str:
        """A stored UTC time in the site's zone to the second (the first layout: as stored)."""
        if not self.readable or not isinstance(stamp, str):
            return str(stamp) if stamp is not None else ""
        moment = _moment(stamp)
        if moment is None:
            return stamp
        return moment.astimezone(self.zone).strftime("%Y-%m-%d %H:%M:%S")

    def zone_heading(self, word: str) -> str:
        return f"{word} ({self.zone_name})" if self.readable else f"{word} (UTC)"

    def item(self, entry: dict[str, Any]) -> str:
        """An entry's item in the checklist's words (the first layout: its key)."""
        if self.readable and isinstance(entry.get("label"), str) and entry["label"].strip():
            return str(entry["label"])
        return str(entry.get("item", ""))


def render(
    document: dict[str, Any],
    seal: str,
    photos: Mapping[str, bytes] | None = None,
    *,
    attach: bool = True,
) -> bytes:
    """Draw the record; attach its canonical JSON; return unsigned PDF bytes.

    `photos` maps a photo's client uuid to its stored bytes; a photo not given is drawn as its
    empty box. The same arguments give the same bytes on every run. `attach=False` leaves the
    attachment out, for a drawing made only to compare pages with (the pages are the same).
    """
    s = _styles()
    photos = photos or {}
    look = _Look.of(document)
    sealed = document
    addendum = document.get("record") is None
    if document.get("format") not in UNSPELLED_ADDENDA if addendum else look.judged:
        document = spelled_for_drawing(document)
    spelled = document is not sealed and document != sealed
    record = document.get("record")
    story: list[Any] = []
    sig = document["signature"]
    if record is None:
        story += _addendum_story(document, s)
    else:
        story += _cover(document, record, seal, s, look)
        if look.readable:
            story += _drop_plan(record, s)
        story += _failures(record, s, look)
        story += _sheets(record, s, photos, look)
        story += _log(record, s, look)
    signed_at = (
        f"{look.when(sig['signed_at'])} {look.zone_name}" if look.readable else sig["signed_at"]
    )
    if spelled:
        story += [Spacer(1, 4 * mm), *_paras(SPELLED_NOTE, s["small"])]
    story += [
        Spacer(1, 6 * mm),
        _p(SEAL_LABEL, s["h3"]),
        _p(seal, s["mono"]),
        _p(f"Signed by {sig['name']} ({sig['role']}) at {signed_at}: {sig['meaning']}", s["small"]),
    ]
    buffer = io.BytesIO()
    doc = SimpleDocTemplate(
        buffer,
        pagesize=A4,
        leftMargin=15 * mm,
        rightMargin=15 * mm,
        topMargin=15 * mm,
        bottomMargin=20 * mm,
        title=_title(sealed),
        author=sealed["signature"]["name"],
        subject=f"Seal {seal}",
        creator="Parapet",
        producer="Parapet",
        invariant=1,
    )
    attachment = canonical_bytes(sealed) if attach else None
    doc.build(story, canvasmaker=_canvas_for(seal, attachment))
    return buffer.getvalue()


SPELLED_NOTE = (
    "Some text in this record holds characters the record's font cannot draw, or that a page"
    " would not show (such as a right-to-left override or a zero-width space): each prints as"
    " its code point, such as [U+4E2D]. The sealed document attached to this file holds the"
    " text as it was written."
)


@lru_cache(maxsize=1)
def _drawable() -> frozenset[int]:
    """The code points both of the record's fonts have a glyph for."""
    regular, bold = _register_fonts()
    return frozenset(pdfmetrics.getFont(regular).face.charToGlyph) & frozenset(
        pdfmetrics.getFont(bold).face.charToGlyph
    )


UNSHOWN = frozenset(("Cc", "Cf", "Co", "Cs", "Zl", "Zp"))
"""Unicode categories a page would not show truthfully: controls and format characters (a
right-to-left override turns "NOT VERIFIED" round on screens that honour it, while the page
prints it as sent; a zero-width space hides between letters) and private use. Characters
unassigned in this Python's Unicode tables are not named here: the fonts (the project's own
files) have no glyph for them, so they are spelled the same wherever the record is drawn."""


def _shown(ch: str, drawable: frozenset[int]) -> bool:
    code = ord(ch)
    if code < 0x80:
        return ch in "\n\t" or 0x20 <= code < 0x7F
    # Past U+FFFF reportlab writes the text map of the page wrong (copy and search find other
    # characters), though the font may draw it.
    return code <= 0xFFFF and code in drawable and unicodedata.category(ch) not in UNSHOWN


def _spelled_text(text: str) -> str:
    if text.isascii() and not ASCII_CONTROLS.search(text):
        return text
    drawable = _drawable()
    return "".join(ch if _shown(ch, drawable) else f"[U+{ord(ch):04X}]" for ch in text)


ASCII_CONTROLS = re.compile("[\x00-\x08\x0b-\x1f\x7f]")
"""The ASCII controls a page would draw as boxes or as nothing (a carriage return, a
backspace), spelled too; a line break and a tab are text's own."""
ESCAPED_CONTROLS = re.compile(r"\\u00[01][0-9a-fA-F]|\\[rbf]|\x7f")
"""How json.dumps writes such a control (a line break and a tab excepted, as \\n and \\t)."""


def spelled_for_drawing(document: dict[str, Any]) -> dict[str, Any]:
    """The document to draw: itself when every character is drawable (checked on its JSON,
    quick), else a copy with each character the fonts cannot draw spelled as its code point."""
    dumped = json.dumps(document, ensure_ascii=False)
    if dumped.isascii() and not ESCAPED_CONTROLS.search(dumped):
        return document
    return _spelled(document)  # type: ignore[no-any-return]


def _spelled(value: Any) -> Any:
    """`value` with every character the fonts cannot draw spelled as its code point (from
    /7, drawn only: the attachment and the seal keep the text as written)."""
    if isinstance(value, str):
        return _spelled_text(value)
    if isinstance(value, dict):
        return {key: _spelled(inner) for key, inner in value.items()}
    if isinstance(value, list):
        return [_spelled(inner) for inner in value]
    return value


def _title(document: dict[str, Any]) -> str:
    record = document.get("record")
    if record is None:
        return f"Addendum {document['sequence']} to record {document['amends']['sequence']}"
    return f"Daily record — {record['site']['name']} — {record['job']['date']}"


def _cover(
    document: dict[str, Any],
    record: dict[str, Any],
    seal: str,
    s: dict[str, ParagraphStyle],
    look: _Look,
) -> list[Any]:
    site, job, sig = record["site"], record["job"], document["signature"]
    sheets = record["sheets"]
    failed = sum(1 for sh in sheets if sh["verdict"] == "fail")
    open_holds = [h for h in record["holds"] if h["cleared_at"] is None]
    summary = [
        ["Site", f"{site['name']}, {site['address']} ({site['height_m']:g} m)"],
        ["Date", job["date"]],
        ["Job state at signing", job["state"]],
        ["Check sheets", f"{len(sheets)} recorded, {failed} with a failed item"],
        ["Holds (stop work)", f"{len(record['holds'])} opened, {len(open_holds)} still open"],
        ["Drops done", str(len(record["drops_done"]))],
        ["Profile", f"{record['profile']['name']} ({record['profile']['key']})"],
        [
            "Chain",
            f"record {document['sequence']} of this site; previous seal "
            f"{document['previous_seal'] or '(first record)'}",
        ],
    ]
    signature = [
        ["Signed by", f"{sig['name']} — {sig['role']}"],
        ["Meaning", sig["meaning"]],
        (
            ["Signed at", f"{look.when(sig['signed_at'])} ({look.zone_name})"]
            if look.readable
            else ["Signed at (UTC)", sig["signed_at"]]
        ),
        ["How", sig["method"]],
        ["Certificate", f"SHA-256 {sig['certificate_sha256']}"],
    ]
    story: list[Any] = [_p(_title(document), s["title"])]
    if open_holds:
        story.append(_p(f"STOP WORK: {len(open_holds)} hold(s) were open at signing.", s["stop"]))
    story += [
        _table(
            [[_p(k, s["body"]), _p(v, s["body"])] for k, v in summary],
            [45 * mm, 135 * mm],
            header=False,
        ),
        Spacer(1, 4 * mm),
        _p("Signature", s["h2"]),
        Table(
            [
                [
                    _table(
                        [[_p(k, s["body"]), _p(v, s["body"])] for k, v in signature],
                        [32 * mm, 110 * mm],
                        header=False,
                    ),
                    _CanvasQr(seal) if look.plain else _qr(seal),
                ]
            ],
            colWidths=[145 * mm, 35 * mm],
        ),
        Spacer(1, 3 * mm),
        _p(SEAL_LABEL, s["h3"]),
        _p(seal, s["mono"]),
    ]
    if document.get("remarks"):
        story += [_p("Remarks", s["h3"]), *_paras(document["remarks"], s["body"])]
    story += _changed_since_checked(record, s, look)
    story += _unread_wind(record, s, look)
    job_notes = (record.get("job") or {}).get("notes")
    if look.notes and isinstance(job_notes, str) and job_notes.strip():
        story += [
            _p("Job notes (written when the day was planned)", s["h3"]),
            *_paras(job_notes, s["body"]),
        ]
    story += [
        Spacer(1, 3 * mm),
        _p("Cautions", s["h3"]),
        *_paras(record["profile"]["cautions"], s["small"]),
    ]
    return story


def _subjects(record: dict[str, Any]) -> dict[str, str]:
    """What a reference such as "anchor:12" names, in words: "anchor R1", "robot RB-2"."""
    subjects = {f"anchor:{a['id']}": f"anchor {a['label']}" for a in record["anchors"]}
    subjects |= {
        f"equipment:{e['id']}": f"{e['kind'].replace('_', ' ')} {e['label']}"
        for e in record["equipment"]
    }
    return subjects


_KIT = ("robot", "tether", "safety_line", "hose")
_UNIT_WORDS = {
    "kn": "kN",
    "n": "N",
    "kg": "kg",
    "m": "m",
    "m2": "m²",
    "mm": "mm",
    "ms": "m/s",
    "s": "s",
    "h": "h",
    "d": "d",
    "kpa": "kPa",
    "l": "L",
}
_UNKNOWN: Any = object()
"""A figure the record's own snapshot does not hold (a facade zone), so cannot compare."""


@dataclass(frozen=True)
class _Figure:
    """One figure a check was judged on, as printed: whose it is, what, the value it was judged
    on and the value the record's register held at signing (_UNKNOWN where it holds none)."""

    drop: str
    words: str
    judged: Any
    at_signing: Any
    unit: str

    def value(self, value: Any, text: str | None = None) -> str:
        if value is None:
            return "none on record"
        text = _fmt(value) if text is None else text
        return f"{text} {self.unit}" if self.unit and _is_number(value) else text

    @property
    def changed(self) -> bool:
        return self.at_signing is not _UNKNOWN and not same_figure(self.judged, self.at_signing)

    def both(self) -> tuple[str, str]:
        """The figure judged on and the one at signing, told apart where they differ."""
        if _is_number(self.judged) and _is_number(self.at_signing):
            then, now = told_apart(self.judged, self.at_signing, ".4g")
            return self.value(self.judged, then), self.value(self.at_signing, now)
        return self.value(self.judged), self.value(self.at_signing)

    def line(self) -> str:
        if not self.changed:
            return f"{self.words} {self.value(self.judged)}"
        then, now = self.both()
        return f"{self.words} {then} (the register read {now} at signing)"


def _figure_words(ref: str) -> tuple[str, str]:
    """A register or profile name as words and the unit its suffix names: "mbs_kn" is
    ("mbs", "kN"), "cleaning_rate_m2_per_h" ("cleaning rate", "m²/h")."""
    words = ref.split("_")
    if len(words) >= 3 and words[-2] == "per" and {words[-3], words[-1]} <= _UNIT_WORDS.keys():
        return " ".join(words[:-3]), f"{_UNIT_WORDS[words[-3]]}/{_UNIT_WORDS[words[-1]]}"
    if len(words) > 1 and words[-1] in _UNIT_WORDS:
        return " ".join(words[:-1]), _UNIT_WORDS[words[-1]]
    return " ".join(words), ""


def _judged_figures(
    record: dict[str, Any], sheet: dict[str, Any], subjects: dict[str, str]
) -> list[_Figure]:
    """The figures a /7 sheet was judged on (its sealed `judged_on`, drop by drop), each with
    what the record's own register snapshot held at signing."""
    judged = sheet.get("judged_on")
    if not isinstance(judged, dict):
        return []
    drops = {str(d.get("id")): d for d in record.get("drops") or [] if isinstance(d, dict)}
    kit = {e.get("id"): e for e in record.get("equipment") or [] if isinstance(e, dict)}
    anchors = {a.get("id"): a for a in record.get("anchors") or [] if isinstance(a, dict)}
    profile = record.get("profile") or {}
    thresholds = profile.get("thresholds") if isinstance(profile, dict) else None
    thresholds = thresholds if isinstance(thresholds, dict) else {}
    site = record.get("site") if isinstance(record.get("site"), dict) else {}
    figures: list[_Figure] = []
    for key in sorted(judged, key=str):
        names = judged[key]
        if not isinstance(names, dict):
            continue
        drop = drops.get(str(key)) if key != "" else None
        where = (
            f"drop {drop.get('label')}"
            if drop is not None
            else ("the site" if key == "" else f"drop #{key} (no longer in the plan)")
        )
        for name in sorted(names, key=str):
            kind, _, ref = str(name).partition(".")
            words, unit = _figure_words(ref)
            at: Any = _UNKNOWN
            if kind == "profile":
                threshold = thresholds.get(ref, _UNKNOWN)
                if isinstance(threshold, dict):
                    unit = str(threshold.get("unit") or "")
                    at = threshold.get("value")
                owner = "profile"
            elif kind == "equipment" or kind in _KIT:
                item_id = sheet.get("equipment") if kind == "equipment" else (drop or {}).get(kind)
                item = kit.get(item_id)
                ratings = item.get("ratings") if item is not None else None
                if isinstance(ratings, dict) and (kind == "equipment" or drop is not None):
                    at = ratings.get(ref)
                owner = subjects.get(f"equipment:{item_id}", kind.replace("_", " "))
            elif kind == "anchor":
                anchor_id = sheet.get("anchor") or (drop or {}).get("safety_anchor")
                anchor = anchors.get(anchor_id)
                if anchor is not None and ref == "rated_capacity_kn":
                    cert = anchor.get("certification")
                    at = cert.get("rated_capacity_kn") if isinstance(cert, dict) else None
                owner = subjects.get(f"anchor:{anchor_id}", "anchor")
            elif kind == "drop" and ref in ("height_m", "terrain"):
                at, owner = site.get(ref, _UNKNOWN), "site"
            elif kind == "drop":
                if drop is not None and ref == "length_m":
                    at = drop.get("length_m")
                owner = where
            else:
                owner = kind
            words = f"{owner} {words}".strip()
            figures.append(_Figure(where, words, names[name], at, unit))
    return figures


def _judged_on(
    record: dict[str, Any], sheet: dict[str, Any], subjects: dict[str, str], s: Any
) -> list[Any]:
    """A /7 sheet's figures, one paragraph per drop, under its table."""
    figures = _judged_figures(record, sheet, subjects)
    if not figures:
        return []
    by_drop: dict[str, list[str]] = {}
    for figure in figures:
        by_drop.setdefault(figure.drop, []).append(figure.line())
    return [
        p
        for where, lines in by_drop.items()
        for p in _paras(f"Judged on, for {where}: " + "; ".join(lines) + ".", s["small"])
    ]


def _changed_since_checked(
    record: dict[str, Any], s: dict[str, ParagraphStyle], look: _Look
) -> list[Any]:
    """On the first page of a /7 record: every figure a check was judged on that the register
    read otherwise when the record was signed."""
    if not look.judged:
        return []
    subjects = _subjects(record)
    rows = [["Check", "Figure", "Judged on", "At signing"]]
    for sheet in record.get("sheets") or []:
        for figure in _judged_figures(record, sheet, subjects):
            if figure.changed:
                then, now = figure.both()
                rows.append(
                    [
                        look.cell(f"#{sheet.get('id')} {sheet.get('title', '')}", s["small"]),
                        look.cell(f"{figure.words} ({figure.drop})", s["small"]),
                        look.cell(then, s["small"]),
                        look.cell(now, s["small"]),
                    ]
                )
    if len(rows) == 1:
        return []
    return [
        _p("Figures changed between a check and signing", s["h3"]),
        *_paras(
            "These checks were judged on the figures they read when they were made; when this"
            " record was signed the register or profile read otherwise. Each verdict holds for"
            " the figures it was judged on only: whether the rig was safe on the new figures"
            " was not checked by these checks.",
            s["small"],
        ),
        _table(rows, [50 * mm, 70 * mm, 30 * mm, 30 * mm], plain=look.plain),
    ]


def _read_at(sheet: dict[str, Any], look: _Look) -> str:
    """From /7, beside a weather check received a minute or more after it counts as read:
    when that was (the time its gaps are reckoned from, compliance.timeline.reading_time)."""
    if not look.judged or sheet.get("checklist") != WEATHER_CHECKLIST:
        return ""
    received = _moment(sheet.get("received_at"))
    offset = sheet.get("phone_clock_offset_s")
    if received is None:
        return ""
    read = reading_time(
        _moment(sheet.get("device_time")),
        offset if isinstance(offset, int) and not isinstance(offset, bool) else None,
        received,
    )
    if received - read < LATE:
        return ""
    return f", counted as read {look.when(read.isoformat())}"


def _unread_wind(record: dict[str, Any], s: dict[str, ParagraphStyle], look: _Look) -> list[Any]:
    """On the first page of a /7 record: when work went on with the newest weather check older
    than the profile allows (compliance.timeline.weather_gaps, from the sealed record)."""
    if not look.judged:
        return []
    gaps = weather_gaps(record)
    if not gaps:
        return []
    every = interval_words(record) or "the profile's time"
    spans = "; ".join(f"{look.when(a.isoformat())} to {look.when(b.isoformat())}" for a, b in gaps)
    return [
        _p("Work went on without a recent wind reading", s["h3"]),
        *_paras(
            "The profile asks for the wind to be read again while work goes on, each reading"
            f" counting for the time in force when it was read ({every}). It was not read in"
            f" time from {spans} ({look.zone_name}).",
            s["small"],
        ),
    ]


def _concerns(hold: dict[str, Any], subjects: dict[str, str]) -> str:
    # A check's hold names "checklist@anchor:12"; a register change's names "anchor:12" itself
    # (which printed "the job" for "S-1 is out of service").
    requirement = str(hold.get("requirement") or "")
    _, at, ref = requirement.partition("@")
    ref = ref if at else requirement
    return subjects.get(ref, "the site" if ref == "site" else ref or "the job")


LATE = dt.timedelta(minutes=1)
"""How much later than its check a hold may be opened and still print only its opening."""


def _checks_made(record: dict[str, Any]) -> dict[Any, dt.datetime]:
    """When each failing sheet was made, by id: its phone's time set right by how far the
    phone's clock was off when it sent its batch (as the server orders checks), never after it
    was received; sheets with no time of the phone's own are left out."""
    made: dict[Any, dt.datetime] = {}
    for sheet in record.get("sheets") or []:
        try:
            phone = _moment(sheet.get("device_time"))
            received = _moment(sheet.get("received_at"))
            offset = sheet.get("phone_clock_offset_s")
            if phone is None or received is None or not isinstance(offset, int):
                continue
            if not sheet.get("blocking_failures"):
                # A passing check is not when a failure was found (a hold for a figure changed
                # since names the check it leaves behind).
                continue
            made[sheet.get("id")] = min(phone - dt.timedelta(seconds=offset), received)
        except (OverflowError, TypeError):
            continue
    return made


def _opened(hold: dict[str, Any], made: dict[Any, dt.datetime], look: _Look) -> str:
    """When the hold opened, and, where its check was made well before, when that was."""
    opened = look.when(hold["opened_at"])
    found = made.get(hold.get("sheet"))
    at = _moment(hold.get("opened_at"))
    if found is None or at is None or at - found < LATE:
        return opened
    return f"{opened}; its check was made {look.when(found.isoformat())}"


def _failures(record: dict[str, Any], s: dict[str, ParagraphStyle], look: _Look) -> list[Any]:
    heading = _p("Holds and failed items", s["h2"])
    story: list[Any] = [PageBreak()]
    holds = sorted(record["holds"], key=lambda h: h["cleared_at"] is not None)
    highlight = [i + 1 for i, h in enumerate(holds) if h["cleared_at"] is None]
    if holds and look.readable:
        subjects = _subjects(record)
        made = _checks_made(record) if look.found else {}
        rows = [
            [look.zone_heading("Opened"), "Concerns", "Reason", "Cleared", "By sheet"],
            *[
                [
                    look.cell(_opened(h, made, look), s["small"]),
                    look.cell(_concerns(h, subjects), s["small"]),
                    look.cell(h["reason"], s["small"]),
                    look.cell(
                        look.when(h["cleared_at"]) if h["cleared_at"] else "OPEN", s["small"]
                    ),
                    look.cell(
                        f"#{h['cleared_by_sheet']}" if h["cleared_by_sheet"] else "—", s["small"]
                    ),
                ]
                for h in holds
            ],
        ]
        widths = [28 * mm, 28 * mm, 78 * mm, 28 * mm, 18 * mm]
        # The heading stays with its table; a table longer than a page still splits.
        story.append(
            KeepTogether([heading, _table(rows, widths, highlight=highlight, plain=look.plain)])
        )
    elif holds:
        story.append(heading)
        rows = [["Opened (UTC)", "Reason", "Cleared (UTC)", "By sheet"]]
        rows += [
            [
                _p(h["opened_at"], s["small"]),
                _p(h["reason"], s["small"]),
                _p(h["cleared_at"] or "OPEN", s["small"]),
                _p(h["cleared_by_sheet"] or "—", s["small"]),
            ]
            for h in holds
        ]
        story.append(_table(rows, [32 * mm, 98 * mm, 32 * mm, 18 * mm], highlight=highlight))
    else:
        story += [heading, _p("No holds this day.", s["body"])]
    for note in record.get("clock_notes", []):
        story += _paras(f"Clock: {note}", s["small"])
    failed = [(sh, e) for sh in record["sheets"] for e in sh["entries"] if e["verdict"] == "fail"]
    if failed:
        story.append(Spacer(1, 3 * mm))
        rows = [["Sheet", "Item", "Blocking", "Why"]]
        rows += [
            [
                look.cell(f"#{sh['id']} {sh['title']}", s["small"]),
                look.cell(look.item(e), s["small"]),
                "yes" if e["blocking"] else "no",
                look.cell(e["message"], s["small"]),
            ]
            for sh, e in failed
        ]
        story.append(_table(rows, [55 * mm, 35 * mm, 15 * mm, 75 * mm], plain=look.plain))
    return story


def _sheets(
    record: dict[str, Any],
    s: dict[str, ParagraphStyle],
    photos: Mapping[str, bytes],
    look: _Look,
) -> list[Any]:
    subjects = _subjects(record)
    story: list[Any] = [PageBreak(), _p("Check sheets", s["h2"])]
    order = sorted(record["sheets"], key=lambda sh: (sh["verdict"] != "fail", sh["id"]))
    for sheet in order:
        ref = (
            f"anchor:{sheet['anchor']}"
            if sheet["anchor"]
            else (f"equipment:{sheet['equipment']}" if sheet["equipment"] else "site")
        )
        head = _p(
            f"#{sheet['id']} {sheet['title']} v{sheet['version']} — {subjects.get(ref, 'site')} — "
            f"{sheet['verdict'].upper()} — by {sheet['filled_by']}, "
            f"received {look.when(sheet['received_at'])}" + _read_at(sheet, look),
            s["h3"],
        )
        entries = sorted(
            sheet["entries"], key=lambda e: not (e["verdict"] == "fail" and e["blocking"])
        )
        rows = [["Item", "Entry", "Verdict", "Margin"]]
        working: list[Any] = []
        series: list[Any] = []
        for e in entries:
            value = e["value"] if e["kind"] != "calc" else "computed"
            unit = f" {e['unit']}" if e["unit"] and e["kind"] == "reading" else ""
            samples = _samples(e["value"]) if e["kind"] == "series" else None
            shown = _fmt(value) + unit
            if samples is not None:
                shown = _series_summary(samples, e["unit"] or "") + " (plotted and listed below)"
                series += _series_block(e, samples, sheet["entries"], s, look)
            margin = (
                "—"
                if e["margin"] is None
                else whole_pct(e["margin"], passed=e["verdict"] != "fail")
            )
            label = look.item(e) + (" (blocking)" if e["blocking"] else "")
            reason = (e.get("working") or {}).get("reason") if e["kind"] == "calc" else None
            if e["verdict"] == "fail" and isinstance(reason, str) and reason.strip():
                label += "\n" + reason.strip()  # why it failed, in the calculation's words
            rows.append(
                [look.cell(label, s["small"]), look.cell(shown, s["small"]), e["verdict"], margin]
            )
            steps = (e.get("working") or {}).get("steps")
            if steps:
                working += [_p(f"{look.item(e)}: working", s["small"])]
                working += [p for step in steps for p in _paras("  " + str(step), s["mono"])]
        highlight = [i + 1 for i, e in enumerate(entries) if e["verdict"] == "fail"]
        table = _table(
            rows, [60 * mm, 80 * mm, 20 * mm, 20 * mm], highlight=highlight, plain=look.plain
        )
        block: list[Any] = [head, table]
        if sheet["remarks"]:
            block += _paras(f"Remarks: {sheet['remarks']}", s["small"])
        if look.judged:
            block += _judged_on(record, sheet, subjects, s)
        story += [KeepTogether(block), *series, *working]
        shots = [p for p in record["photos"] if p["sheet_uuid"] == sheet["client_uuid"]]
        if shots:
            story.append(_photo_grid(shots, photos, s))
        story.append(Spacer(1, 3 * mm))
    known = {sheet["client_uuid"] for sheet in record["sheets"]}
    loose = [p for p in record["photos"] if p["sheet_uuid"] not in known]
    if loose:
        story += [_p("Photos not attached to a sheet", s["h3"]), _photo_grid(loose, photos, s)]
    return story


def _drop_plan(record: dict[str, Any], s: dict[str, ParagraphStyle]) -> list[Any]:
    """Which robot, anchors, lines and hose each drop hung from, with the anchors' certificates
    and the equipment's next inspection as the record holds them."""
    anchors = {a["id"]: a for a in record["anchors"]}
    kit = {e["id"]: e for e in record["equipment"]}

    def anchor_line(anchor_id: Any) -> str:
        anchor = anchors.get(anchor_id) or {}
        cert = anchor.get("certification")
        if not cert:
            return f"{anchor.get('label', anchor_id)}: no certificate on record"
        return (
            f"{anchor.get('label', anchor_id)}: rated {_fmt(cert['rated_capacity_kn'])} kN,"
            f" certified {cert['certified_on']} by {cert['certifier']},"
            f" valid until {cert['valid_until']}"
            + ("" if cert.get("valid_on_day", True) else " (NOT valid on the day)")
        )

    def kit_line(item_id: Any) -> str:
        item = kit.get(item_id) or {}
        serial = f" (serial {item['serial']})" if item.get("serial") else ""
        due = item.get("next_inspection_due")
        return f"{item.get('label', item_id)}{serial}, next inspection " + (
            str(due) if due else "not recorded"
        )

    story: list[Any] = [PageBreak(), _p("Drop plan", s["h2"])]
    if not record["drops"]:
        return [*story, _p("No drops were planned.", s["body"])]
    for drop in record["drops"]:
        rows = [
            ["Length worked", f"{_fmt(drop['length_m'])} m"],
            ["Robot", kit_line(drop["robot"])],
            ["Anchor", anchor_line(drop["anchor"])],
            ["Safety anchor", anchor_line(drop["safety_anchor"])],
            ["Tether", kit_line(drop["tether"])],
            ["Safety line", kit_line(drop["safety_line"])],
            ["Hose", kit_line(drop["hose"])],
        ]
        story.append(
            KeepTogether(
                [
                    _p(f"Drop {drop['label']}", s["h3"]),
                    _table(
                        [[_p(k, s["small"]), _p(v, s["small"])] for k, v in rows],
                        [35 * mm, 145 * mm],
                        header=False,
                    ),
                    Spacer(1, 2 * mm),
                ]
            )
        )
    return story


def _reading(value: float) -> str:
    return f"{value:.7g}"


def _series_summary(samples: list[tuple[float, float]], unit: str) -> str:
    values = [v for _, v in samples]
    unit = f" {unit}" if unit else ""
    return (
        f"{len(samples)} readings over {_reading(samples[-1][0] - samples[0][0])} s: "
        f"first {_reading(values[0])}{unit}, last {_reading(values[-1])}{unit}, "
        f"lowest {_reading(min(values))}{unit}, highest {_reading(max(values))}{unit}"
    )


def _series_limits(
    entry: dict[str, Any], entries: list[dict[str, Any]], look: _Look
) -> list[tuple[str, float]]:
    """The limit lines a series is drawn with: its own limits, if its working names any, and
    the hold limit of a vacuum-decay calculation worked from these very readings."""
    found: list[tuple[str, float]] = []
    unit = entry.get("unit") or ""
    limits = (entry.get("working") or {}).get("limits") or {}
    for bound in ("min", "max"):
        value = (limits.get(bound) or {}).get("value") if isinstance(limits, dict) else None
        if _is_number(value):
            found.append((f"{bound} {_reading(value)} {unit}", float(value)))
    for other in entries:
        inputs = (other.get("working") or {}).get("inputs") or {}
        if (
            other.get("kind") == "calc"
            and isinstance(inputs, dict)
            and unit == "kPa"
            and inputs.get("samples") == entry["value"]
            and _is_number(inputs.get("min_vacuum_kpa"))
        ):
            value = float(inputs["min_vacuum_kpa"])
            found.append((f"hold limit {_reading(value)} kPa ({look.item(other)})", value))
    return found


def _ticks(low: float, high: float, count: int = 5) -> list[float]:
    """Round values from `low` to `high` for an axis (the two ends when none are found)."""
    span = high / 2 - low / 2  # halves: never overflows, whatever finite numbers come
    if not (math.isfinite(span) and span > 0):
        return [low] if low == high else [low, high]
    raw = span / count * 2
    magnitude = 10.0 ** math.floor(math.log10(raw))
    step = next(m * magnitude for m in (1.0, 2.0, 5.0, 10.0) if m * magnitude >= raw)
    if not (math.isfinite(step) and step > 0):
        return [low, high]
    ticks: list[float] = []
    value = math.ceil(low / step) * step
    while value <= high and len(ticks) <= count * 2 and math.isfinite(value):
        ticks.append(value)
        value = ticks[0] + len(ticks) * step
    return ticks or [low, high]


def _scale(value: float, low: float, high: float, length: float) -> float:
    """Where `value` falls between `low` and `high` on an axis of `length` points."""
    span = high / 2 - low / 2
    if not span > 0:
        return length / 2
    return (value / 2 - low / 2) / span * length


def _widened(value: float, by: float) -> float:
    moved = value + by
    return moved if math.isfinite(moved) else value


_Part = tuple[Any, ...]
"""One mark of a plot: ("rect", x, y, w, h, colour, width), ("line", x1, y1, x2, y2, colour,
width, dash), ("text", x, y, text, anchor, colour), ("poly", points, colour, width) or
("dot", x, y, radius, colour), in points from the plot's lower left corner."""


def _plot_parts(
    samples: list[tuple[float, float]], unit: str, limits: list[tuple[str, float]]
) -> list[_Part]:
    """The readings as a line (with a dot for each, when there are few) against time, and each
    limit as a dashed red line; axes from the data, with round values where they fit."""
    width, height = PLOT_SIZE
    left, bottom = 18 * mm, 9 * mm
    plot_w, plot_h = width - left - 6 * mm, height - bottom - 9 * mm
    t0, t1 = samples[0][0], samples[-1][0]
    values = [v for _, v in samples] + [v for _, v in limits]
    half_span = max(values) / 2 - min(values) / 2
    v0, v1 = _widened(min(values), -0.16 * half_span), _widened(max(values), 0.16 * half_span)
    grey, ink, red = (colors.HexColor(c) for c in ("#999999", "#1f4e8c", "#9b1111"))

    def at(t: float, v: float) -> tuple[float, float]:
        return left + _scale(t, t0, t1, plot_w), bottom + _scale(v, v0, v1, plot_h)

    parts: list[_Part] = [("rect", left, bottom, plot_w, plot_h, grey, 0.4)]
    for tick in _ticks(v0, v1):
        y = bottom + _scale(tick, v0, v1, plot_h)
        parts.append(("line", left, y, left + plot_w, y, grey, 0.15, None))
        parts.append(("text", left - 1.5 * mm, y - 2, _reading(tick), "end", None))
    for tick in _ticks(t0, t1):
        x = left + _scale(tick, t0, t1, plot_w)
        parts.append(("line", x, bottom, x, bottom - 1 * mm, grey, 0.4, None))
        parts.append(("text", x, bottom - 4 * mm, _reading(tick), "middle", None))
    parts.append(("text", left + plot_w, 0.5 * mm, "s", "end", None))
    parts.append(("text", left - 1.5 * mm, bottom + plot_h + 2 * mm, unit, "end", None))
    parts.append(("poly", [c for t, v in samples for c in at(t, v)], ink, 0.8))
    if len(samples) <= MARKED_SAMPLES:
        parts += [("dot", *at(t, v), 1.1, ink) for t, v in samples]
    for n, (text, value) in enumerate(limits):
        y = bottom + _scale(value, v0, v1, plot_h)
        parts.append(("line", left, y, left + plot_w, y, red, 0.8, [3, 2]))
        parts.append(
            (
                "text",
                left + 2 * mm,
                bottom + plot_h + 2 * mm + n * 3.2 * mm,
                f"- - {text}",
                "start",
                red,
            )
        )
    return parts


def _series_plot(
    samples: list[tuple[float, float]], unit: str, limits: list[tuple[str, float]]
) -> Drawing:
    """The plot as reportlab graphics (the layouts up to /3)."""
    regular, _ = _register_fonts()
    drawing = Drawing(*PLOT_SIZE)
    for part in _plot_parts(samples, unit, limits):
        kind = part[0]
        if kind == "rect":
            _, x, y, w, h, colour, line_width = part
            drawing.add(
                Rect(x, y, w, h, strokeColor=colour, strokeWidth=line_width, fillColor=None)
            )
        elif kind == "line":
            _, x1, y1, x2, y2, colour, line_width, dash = part
            drawing.add(
                Line(x1, y1, x2, y2, strokeColor=colour, strokeWidth=line_width)
                if dash is None
                else Line(
                    x1, y1, x2, y2, strokeColor=colour, strokeWidth=line_width, strokeDashArray=dash
                )
            )
        elif kind == "text":
            _, x, y, text, anchor, colour = part
            drawing.add(
                String(
                    x,
                    y,
                    text,
                    fontName=regular,
                    fontSize=6.5,
                    textAnchor=anchor,
                    fillColor=colour or colors.black,
                )
            )
        elif kind == "poly":
            _, points, colour, line_width = part
            drawing.add(PolyLine(points, strokeColor=colour, strokeWidth=line_width))
        else:
            _, x, y, radius, colour = part
            drawing.add(Circle(x, y, radius, fillColor=colour, strokeColor=None))
    return drawing


class _CanvasPlot(Flowable):
    """The plot drawn straight on the page's canvas (the layouts from /4): the same marks as
    `_series_plot`, without building and walking a graphics tree for them."""

    def __init__(self, parts: list[_Part]) -> None:
        super().__init__()
        self.width, self.height = PLOT_SIZE
        self.parts = parts

    def wrap(self, avail_width: float, avail_height: float) -> tuple[float, float]:
        return self.width, self.height

    def draw(self) -> None:
        regular, _ = _register_fonts()
        c = self.canv
        c.saveState()
        c.setFont(regular, 6.5)
        for part in self.parts:
            kind = part[0]
            if kind == "rect":
                _, x, y, w, h, colour, line_width = part
                c.setStrokeColor(colour)
                c.setLineWidth(line_width)
                c.rect(x, y, w, h, stroke=1, fill=0)
            elif kind == "line":
                _, x1, y1, x2, y2, colour, line_width, dash = part
                c.setStrokeColor(colour)
                c.setLineWidth(line_width)
                c.setDash(dash or [])
                c.line(x1, y1, x2, y2)
            elif kind == "text":
                _, x, y, text, anchor, colour = part
                c.setFillColor(colour or colors.black)
                draw = {
                    "end": c.drawRightString,
                    "middle": c.drawCentredString,
                }.get(anchor, c.drawString)
                draw(x, y, text)
            elif kind == "poly":
                _, points, colour, line_width = part
                c.setStrokeColor(colour)
                c.setLineWidth(line_width)
                c.setDash([])
                path = c.beginPath()
                path.moveTo(points[0], points[1])
                for i in range(2, len(points), 2):
                    path.lineTo(points[i], points[i + 1])
                c.drawPath(path, stroke=1, fill=0)
            else:
                _, x, y, radius, colour = part
                c.setFillColor(colour)
                c.circle(x, y, radius, stroke=0, fill=1)
        c.restoreState()


def _series_table(samples: list[tuple[float, float]], unit: str) -> Table:
    """Every reading, READINGS_PER_ROW to a row, with the number of the row's first reading."""
    regular, bold = _register_fonts()
    pair = (170 * mm) / READINGS_PER_ROW / 2
    style = _styles()["readings"]
    rows: list[list[Any]] = [["#"] + ["s", _p(unit or "value", style)] * READINGS_PER_ROW]
    for first in range(0, len(samples), READINGS_PER_ROW):
        row: list[Any] = [str(first + 1)]
        for t, v in samples[first : first + READINGS_PER_ROW]:
            row += [
                text if len(text) <= READING_CHARS else _p(text, style)
                for text in map(_reading, (t, v))
            ]
        rows.append(row + [""] * (len(rows[0]) - len(row)))
    table = Table(rows, colWidths=[10 * mm] + [pair] * (2 * READINGS_PER_ROW), repeatRows=1)
    table.setStyle(
        TableStyle(
            [
                ("FONT", (0, 0), (-1, -1), regular, 6.5),
                ("FONT", (0, 0), (-1, 0), bold, 6.5),
                ("BACKGROUND", (0, 0), (-1, 0), colors.HexColor("#e4e4e4")),
                ("TEXTCOLOR", (0, 1), (0, -1), colors.HexColor("#666666")),
                ("ALIGN", (1, 0), (-1, -1), "RIGHT"),
                ("GRID", (0, 0), (-1, -1), 0.2, colors.HexColor("#aaaaaa")),
                ("TOPPADDING", (0, 0), (-1, -1), 1),
                ("BOTTOMPADDING", (0, 0), (-1, -1), 1),
                ("LEFTPADDING", (0, 0), (-1, -1), 2),
                ("RIGHTPADDING", (0, 0), (-1, -1), 2),
            ]
        )
    )
    return table


def _series_block(
    entry: dict[str, Any],
    samples: list[tuple[float, float]],
    entries: list[dict[str, Any]],
    s: dict[str, ParagraphStyle],
    look: _Look,
) -> list[Any]:
    unit = entry.get("unit") or ""
    limits = _series_limits(entry, entries, look)
    return [
        Spacer(1, 2 * mm),
        KeepTogether(
            [
                _p(f"{look.item(entry)}: {_series_summary(samples, unit)}", s["small"]),
                _CanvasPlot(_plot_parts(samples, unit, limits))
                if look.plain
                else _series_plot(samples, unit, limits),
            ]
        ),
        _series_table(samples, unit),
    ]


def _photo_grid(
    shots: list[dict[str, Any]], photos: Mapping[str, bytes], s: dict[str, ParagraphStyle]
) -> Table:
    """Every photo of the sealed list in a fixed box, with its item and the start of its hash."""
    cells = [
        [
            _PhotoBox(p.get("width"), p.get("height"), photos.get(p["client_uuid"])),
            _p(f"{p.get('item') or 'photo'} · sha256 {str(p.get('sha256', ''))[:12]}", s["small"]),
        ]
        for p in shots
    ]
    rows = [cells[i : i + PHOTOS_PER_ROW] for i in range(0, len(cells), PHOTOS_PER_ROW)]
    rows[-1] += [""] * (PHOTOS_PER_ROW - len(rows[-1]))
    table = Table(rows, colWidths=[45 * mm] * PHOTOS_PER_ROW)
    table.setStyle(TableStyle([("VALIGN", (0, 0), (-1, -1), "TOP")]))
    return table


def _kept(look: _Look, heading: Any, table: Any) -> list[Any]:
    """A heading and its table; in the readable layout the heading never ends a page alone."""
    return [KeepTogether([heading, table])] if look.readable else [heading, table]


def _log(record: dict[str, Any], s: dict[str, ParagraphStyle], look: _Look) -> list[Any]:
    story: list[Any] = []
    rows = [[look.zone_heading("At"), "From", "To", "By", "Why"]]
    rows += [
        [
            look.cell(look.when(t["at"]), s["small"]),
            t["from"],
            t["to"],
            look.cell(t["by"] or "system", s["small"]),
            look.cell(t["reason"], s["small"]),
        ]
        for t in record["transitions"]
    ]
    story += _kept(
        look,
        _p("Job log", s["h2"]),
        _table(rows, [32 * mm, 17 * mm, 17 * mm, 30 * mm, 84 * mm], plain=look.plain),
    )
    if record["drops_done"]:
        rows = [["Drop", "By", look.zone_heading("Logged"), "Note"]]
        rows += [
            [
                d["drop"],
                d["by"],
                look.cell(look.when(d["received_at"]), s["small"]),
                look.cell(d["note"], s["small"]),
            ]
            for d in record["drops_done"]
        ]
        story += _kept(
            look,
            _p("Drops done", s["h3"]),
            _table(rows, [30 * mm, 35 * mm, 35 * mm, 80 * mm], plain=look.plain),
        )
    people = ", ".join(f"{p['name']} ({p['role']})" for p in record["people"])
    story += [_p("People", s["h3"]), *_paras(people, s["body"])]
    return story


def _addendum_story(document: dict[str, Any], s: dict[str, ParagraphStyle]) -> list[Any]:
    amends, sig = document["amends"], document["signature"]
    return [
        _p(_title(document), s["title"]),
        _table(
            [
                [_p(k, s["body"]), _p(v, s["body"])]
                for k, v in [
                    [
                        "Amends",
                        f"record {amends['sequence']} of {amends['date']} (seal {amends['seal']})",
                    ],
                    ["Signed by", f"{sig['name']} — {sig['role']}"],
                    ["Meaning", sig["meaning"]],
                    ["Signed at (UTC)", sig["signed_at"]],
                ]
            ],
            [40 * mm, 140 * mm],
            header=False,
        ),
        Spacer(1, 4 * mm),
        _p("Text of the addendum", s["h3"]),
        *_paras(document["text"], s["body"]),
        Spacer(1, 4 * mm),
        _p(CAUTION, s["small"]),
    ]


def read_attachment(pdf: bytes) -> bytes | None:
    reader = PdfReader(io.BytesIO(pdf))
    found = reader.attachments.get(ATTACHMENT_NAME)
    return found[0] if found else None


def printed_seal(pdf: bytes) -> str | None:
    """The seal printed on the PDF's pages (read back from the text). Every page's footer
    prints it, so the first page that has it answers (reading text is most of the cost of a
    check whose page comparison was kept)."""
    reader = PdfReader(io.BytesIO(pdf))
    for page in reader.pages[:2]:
        match = re.search(r"Seal ([0-9a-f]{64})", page.extract_text() or "")
        if match:
            return match.group(1)
    return None


def document_of(pdf: bytes) -> dict[str, Any] | None:
    data = read_attachment(pdf)
    return None if data is None else json.loads(data)

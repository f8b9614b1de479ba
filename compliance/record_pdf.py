"""Renders a sealed daily record (its canonical JSON) to PDF with reportlab.

Failed items and holds come first; every page carries the seal, page numbers and the caution.
The canonical JSON is attached to the PDF so an auditor can check the seal from the file alone.
"""

import io
import json
from pathlib import Path
from typing import Any
from xml.sax.saxutils import escape

from pypdf import PdfReader, PdfWriter
from reportlab.graphics.barcode.qr import QrCodeWidget
from reportlab.graphics.shapes import Drawing
from reportlab.lib import colors
from reportlab.lib.pagesizes import A4
from reportlab.lib.styles import ParagraphStyle, getSampleStyleSheet
from reportlab.lib.units import mm
from reportlab.pdfbase import pdfmetrics
from reportlab.pdfbase.ttfonts import TTFont
from reportlab.pdfgen import canvas as rl_canvas
from reportlab.platypus import (
    Image,
    KeepTogether,
    PageBreak,
    Paragraph,
    SimpleDocTemplate,
    Spacer,
    Table,
    TableStyle,
)

from compliance.engineering.working import whole_pct

ATTACHMENT_NAME = "daily-record.json"
SEAL_LABEL = "Seal (SHA-256 of the attached canonical JSON):"
CAUTION = (
    "Parapet records and computes; it does not replace local regulations, the equipment "
    "maker's manual or a licensed engineer's certification."
)
FONT_DIRS = [Path("/usr/share/fonts/truetype/dejavu")]


def _register_fonts() -> tuple[str, str]:
    if "ParapetSans" in pdfmetrics.getRegisteredFontNames():
        return "ParapetSans", "ParapetSans-Bold"
    for folder in FONT_DIRS:
        regular, bold = folder / "DejaVuSans.ttf", folder / "DejaVuSans-Bold.ttf"
        if regular.exists() and bold.exists():
            break
    else:
        import reportlab

        folder = Path(reportlab.__file__).parent / "fonts"
        regular, bold = folder / "Vera.ttf", folder / "VeraBd.ttf"
    pdfmetrics.registerFont(TTFont("ParapetSans", str(regular)))
    pdfmetrics.registerFont(TTFont("ParapetSans-Bold", str(bold)))
    return "ParapetSans", "ParapetSans-Bold"


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
        "stop": ParagraphStyle(
            "stop",
            parent=base["BodyText"],
            fontName=bold,
            fontSize=10,
            textColor=colors.HexColor("#9b1111"),
        ),
    }


def _p(text: Any, style: ParagraphStyle) -> Paragraph:
    return Paragraph(escape("" if text is None else str(text)).replace("\n", "<br/>"), style)


def _fmt(value: Any) -> str:
    if isinstance(value, float):
        return f"{value:.4g}"
    if isinstance(value, list):
        if value and isinstance(value[0], list):
            return "; ".join(f"{t:g} s: {v:g}" for t, v in value)
        return ", ".join(str(v) for v in value) or "—"
    if isinstance(value, dict):
        return ", ".join(f"{k} {_fmt(v)}" for k, v in list(value.items())[:6])
    return "—" if value in (None, "") else str(value)


def _table(
    rows: list[list[Any]],
    widths: list[float],
    header: bool = True,
    highlight: list[int] | None = None,
) -> Table:
    regular, bold = _register_fonts()
    table = Table(rows, colWidths=widths, repeatRows=1 if header else 0)
    style = [
        ("FONT", (0, 0), (-1, -1), regular, 8),
        ("VALIGN", (0, 0), (-1, -1), "TOP"),
        ("GRID", (0, 0), (-1, -1), 0.3, colors.HexColor("#777777")),
        ("LEFTPADDING", (0, 0), (-1, -1), 3),
        ("RIGHTPADDING", (0, 0), (-1, -1), 3),
    ]
    if header:
        style += [
            ("FONT", (0, 0), (-1, 0), bold, 8),
            ("BACKGROUND", (0, 0), (-1, 0), colors.HexColor("#e4e4e4")),
        ]
    for row in highlight or []:
        style.append(("BACKGROUND", (0, row), (-1, row), colors.HexColor("#fbe3e3")))
    table.setStyle(TableStyle(style))
    return table


def _qr(seal: str) -> Drawing:
    widget = QrCodeWidget(f"parapet-seal:{seal}")
    x1, y1, x2, y2 = widget.getBounds()
    size = 32 * mm
    drawing = Drawing(size, size, transform=[size / (x2 - x1), 0, 0, size / (y2 - y1), 0, 0])
    drawing.add(widget)
    return drawing


class _NumberedCanvas(rl_canvas.Canvas):
    """Two-pass canvas: 'page n of m' and the seal in every footer."""

    seal = ""

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
        super().save()

    def _footer(self, total: int) -> None:
        regular, _ = _register_fonts()
        self.setFont(regular, 6.5)
        width, _ = A4
        self.drawString(15 * mm, 12 * mm, f"Seal {self.seal}")
        self.drawString(15 * mm, 8.5 * mm, CAUTION)
        self.drawRightString(width - 15 * mm, 12 * mm, f"Page {self._pageNumber} of {total}")


def render(document: dict[str, Any], seal: str, photos: dict[str, Path] | None = None) -> bytes:
    """Draw the record; attach its canonical JSON; return unsigned PDF bytes."""
    s = _styles()
    photos = photos or {}
    record = document.get("record")
    story: list[Any] = []
    sig = document["signature"]
    if record is None:
        story += _addendum_story(document, s)
    else:
        story += _cover(document, record, seal, s)
        story += _failures(record, s)
        story += _sheets(record, s, photos)
        story += _log(record, s)
    story += [
        Spacer(1, 6 * mm),
        _p(SEAL_LABEL, s["h3"]),
        _p(seal, s["mono"]),
        _p(
            f"Signed by {sig['name']} ({sig['role']}) at {sig['signed_at']}: {sig['meaning']}",
            s["small"],
        ),
    ]
    buffer = io.BytesIO()
    _NumberedCanvas.seal = seal
    doc = SimpleDocTemplate(
        buffer,
        pagesize=A4,
        leftMargin=15 * mm,
        rightMargin=15 * mm,
        topMargin=15 * mm,
        bottomMargin=20 * mm,
        title=_title(document),
        author=sig["name"],
        subject=f"Seal {seal}",
        creator="Parapet",
    )
    doc.build(story, canvasmaker=_NumberedCanvas)
    return _attach(buffer.getvalue(), document)


def _title(document: dict[str, Any]) -> str:
    record = document.get("record")
    if record is None:
        return f"Addendum {document['sequence']} to record {document['amends']['sequence']}"
    return f"Daily record — {record['site']['name']} — {record['job']['date']}"


def _attach(pdf: bytes, document: dict[str, Any]) -> bytes:
    import rfc8785

    writer = PdfWriter(clone_from=PdfReader(io.BytesIO(pdf)))
    writer.add_attachment(ATTACHMENT_NAME, rfc8785.dumps(document))
    out = io.BytesIO()
    writer.write(out)
    return out.getvalue()


def _cover(
    document: dict[str, Any], record: dict[str, Any], seal: str, s: dict[str, ParagraphStyle]
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
        ["Signed at (UTC)", sig["signed_at"]],
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
                    _qr(seal),
                ]
            ],
            colWidths=[145 * mm, 35 * mm],
        ),
        Spacer(1, 3 * mm),
        _p(SEAL_LABEL, s["h3"]),
        _p(seal, s["mono"]),
    ]
    if document.get("remarks"):
        story += [_p("Remarks", s["h3"]), _p(document["remarks"], s["body"])]
    story += [
        Spacer(1, 3 * mm),
        _p("Cautions", s["h3"]),
        _p(record["profile"]["cautions"], s["small"]),
    ]
    return story


def _failures(record: dict[str, Any], s: dict[str, ParagraphStyle]) -> list[Any]:
    story: list[Any] = [PageBreak(), _p("Holds and failed items", s["h2"])]
    holds = sorted(record["holds"], key=lambda h: h["cleared_at"] is not None)
    if holds:
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
        story.append(
            _table(
                rows,
                [32 * mm, 98 * mm, 32 * mm, 18 * mm],
                highlight=[i + 1 for i, h in enumerate(holds) if h["cleared_at"] is None],
            )
        )
    else:
        story.append(_p("No holds this day.", s["body"]))
    for note in record.get("clock_notes", []):
        story.append(_p(f"Clock: {note}", s["small"]))
    failed = [(sh, e) for sh in record["sheets"] for e in sh["entries"] if e["verdict"] == "fail"]
    if failed:
        story.append(Spacer(1, 3 * mm))
        rows = [["Sheet", "Item", "Blocking", "Why"]]
        rows += [
            [
                _p(f"#{sh['id']} {sh['title']}", s["small"]),
                _p(e["item"], s["small"]),
                "yes" if e["blocking"] else "no",
                _p(e["message"], s["small"]),
            ]
            for sh, e in failed
        ]
        story.append(_table(rows, [55 * mm, 35 * mm, 15 * mm, 75 * mm]))
    return story


def _sheets(
    record: dict[str, Any], s: dict[str, ParagraphStyle], photos: dict[str, Path]
) -> list[Any]:
    subjects = {f"anchor:{a['id']}": f"anchor {a['label']}" for a in record["anchors"]}
    subjects |= {
        f"equipment:{e['id']}": f"{e['kind'].replace('_', ' ')} {e['label']}"
        for e in record["equipment"]
    }
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
            f"received {sheet['received_at']}",
            s["h3"],
        )
        entries = sorted(
            sheet["entries"], key=lambda e: not (e["verdict"] == "fail" and e["blocking"])
        )
        rows = [["Item", "Entry", "Verdict", "Margin"]]
        working: list[Any] = []
        for e in entries:
            value = e["value"] if e["kind"] != "calc" else "computed"
            unit = f" {e['unit']}" if e["unit"] and e["kind"] == "reading" else ""
            margin = (
                "—"
                if e["margin"] is None
                else whole_pct(e["margin"], passed=e["verdict"] != "fail")
            )
            label = e["item"] + (" (blocking)" if e["blocking"] else "")
            reason = (e.get("working") or {}).get("reason") if e["kind"] == "calc" else None
            if e["verdict"] == "fail" and isinstance(reason, str) and reason.strip():
                label += "\n" + reason.strip()  # why it failed, in the calculation's words
            rows.append(
                [
                    _p(label, s["small"]),
                    _p(_fmt(value) + unit, s["small"]),
                    e["verdict"],
                    margin,
                ]
            )
            steps = (e.get("working") or {}).get("steps")
            if steps:
                working += [_p(f"{e['item']}: working", s["small"])]
                working += [_p("  " + step, s["mono"]) for step in steps]
        highlight = [i + 1 for i, e in enumerate(entries) if e["verdict"] == "fail"]
        block: list[Any] = [
            head,
            _table(rows, [60 * mm, 80 * mm, 20 * mm, 20 * mm], highlight=highlight),
        ]
        if sheet["remarks"]:
            block.append(_p(f"Remarks: {sheet['remarks']}", s["small"]))
        story += [KeepTogether(block), *working]
        thumbs = [
            photos[p["client_uuid"]]
            for p in record["photos"]
            if p["sheet_uuid"] == sheet["client_uuid"] and p["client_uuid"] in photos
        ]
        if thumbs:
            story.append(
                Table(
                    [
                        [
                            Image(str(t), width=40 * mm, height=30 * mm, kind="proportional")
                            for t in thumbs[:4]
                        ]
                    ]
                )
            )
        story.append(Spacer(1, 3 * mm))
    return story


def _log(record: dict[str, Any], s: dict[str, ParagraphStyle]) -> list[Any]:
    story: list[Any] = [_p("Job log", s["h2"])]
    rows = [["At (UTC)", "From", "To", "By", "Why"]]
    rows += [
        [
            _p(t["at"], s["small"]),
            t["from"],
            t["to"],
            _p(t["by"] or "system", s["small"]),
            _p(t["reason"], s["small"]),
        ]
        for t in record["transitions"]
    ]
    story.append(_table(rows, [32 * mm, 17 * mm, 17 * mm, 30 * mm, 84 * mm]))
    if record["drops_done"]:
        story.append(_p("Drops done", s["h3"]))
        rows = [["Drop", "By", "Logged (UTC)", "Note"]]
        rows += [
            [d["drop"], d["by"], _p(d["received_at"], s["small"]), _p(d["note"], s["small"])]
            for d in record["drops_done"]
        ]
        story.append(_table(rows, [30 * mm, 35 * mm, 35 * mm, 80 * mm]))
    people = ", ".join(f"{p['name']} ({p['role']})" for p in record["people"])
    story += [_p("People", s["h3"]), _p(people, s["body"])]
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
        _p(document["text"], s["body"]),
        Spacer(1, 4 * mm),
        _p(CAUTION, s["small"]),
    ]


def read_attachment(pdf: bytes) -> bytes | None:
    reader = PdfReader(io.BytesIO(pdf))
    found = reader.attachments.get(ATTACHMENT_NAME)
    return found[0] if found else None


def printed_seal(pdf: bytes) -> str | None:
    """The seal printed on the PDF's pages (read back from the text)."""
    import re

    reader = PdfReader(io.BytesIO(pdf))
    text = "".join(page.extract_text() or "" for page in reader.pages[:2])
    match = re.search(r"Seal ([0-9a-f]{64})", text)
    return match.group(1) if match else None


def document_of(pdf: bytes) -> dict[str, Any] | None:
    data = read_attachment(pdf)
    return None if data is None else json.loads(data)

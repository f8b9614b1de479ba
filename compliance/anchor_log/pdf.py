"""Drawing the anchor log book: a pure function of its sealed document (no database), so a
verifier can draw it again and compare the pages with a signed copy."""

import io
from collections.abc import Callable
from typing import Any
from zoneinfo import ZoneInfo, ZoneInfoNotFoundError

from pypdf import PdfReader, PdfWriter
from reportlab.graphics.shapes import Circle, Drawing, Polygon, Rect, String
from reportlab.lib import colors
from reportlab.lib.pagesizes import A4
from reportlab.lib.units import mm
from reportlab.platypus import SimpleDocTemplate, Spacer

from compliance.records.pdf import (
    ATTACHMENT_NAME,
    SEAL_LABEL,
    SPELLED_NOTE,
    _moment,
    _NumberedCanvas,
    _p,
    _styles,
    _table,
    spelled_for_drawing,
)
from compliance.records.sealing import canonical_bytes

FIRST_FORMAT = "parapet.anchor-log-book/1"
"""Log books signed in this format print their times as stored (UTC, to the microsecond): they
are drawn so still, as the verifier draws a log book again to compare its pages."""
ZONED_FORMAT = "parapet.anchor-log-book/2"
"""Prints each time in the document's `time_zone` to the minute, with the zone's name."""
FORMAT = "parapet.anchor-log-book/3"
"""As /2, and a character the fonts cannot draw prints as its code point ("[U+674E]") with a
note saying so, where /1 and /2 drew an empty box: a certifier's name in Han script could not
be read back from the signed pages."""
FORMATS = (FIRST_FORMAT, ZONED_FORMAT, FORMAT)
CAUTION = (
    "This log book records inspections, tests, repairs and checks of the roof anchors. "
    "Certification of anchors is the work of a licensed professional engineer under the local "
    "code; a pre-use check by a crew is not an inspection or a certification."
)


STATUS_COLOURS = {
    "in service": "#1b6e35",
    "out of service": "#9b1111",
    "inspection overdue": "#b07a00",
    "no inspection on record": "#555555",
}


def roof_plan(
    document: dict[str, Any], width: float = 180 * mm, height: float = 110 * mm
) -> Drawing:
    """The roof outline and the anchors at their stored coordinates, each labelled."""
    outline = document["site"]["roof_outline"] or []
    points = outline + [[a["x_m"], a["y_m"]] for a in document["anchors"]]
    xs = [p[0] for p in points] or [0, 1]
    ys = [p[1] for p in points] or [0, 1]
    span_x, span_y = (max(xs) - min(xs)) or 1.0, (max(ys) - min(ys)) or 1.0
    scale = min((width - 20 * mm) / span_x, (height - 20 * mm) / span_y)

    def at(x: float, y: float) -> tuple[float, float]:
        return 10 * mm + (x - min(xs)) * scale, 10 * mm + (y - min(ys)) * scale

    drawing = Drawing(width, height)
    drawing.add(Rect(0, 0, width, height, strokeColor=colors.HexColor("#999999"), fillColor=None))
    if len(outline) >= 3:
        flat = [c for x, y in outline for c in at(x, y)]
        drawing.add(
            Polygon(
                flat,
                strokeColor=colors.black,
                strokeWidth=1.5,
                fillColor=colors.HexColor("#f2f2f2"),
            )
        )
    for a in document["anchors"]:
        x, y = at(a["x_m"], a["y_m"])
        colour = colors.HexColor(STATUS_COLOURS.get(a["status"], "#555555"))
        drawing.add(Circle(x, y, 2.2 * mm, fillColor=colour, strokeColor=colors.black))
        if a["status"] == "out of service":
            drawing.add(
                Polygon(
                    [
                        x - 2 * mm,
                        y - 2 * mm,
                        x + 2 * mm,
                        y + 2 * mm,
                        x + 2.4 * mm,
                        y + 1.6 * mm,
                        x - 1.6 * mm,
                        y - 2.4 * mm,
                    ],
                    fillColor=colors.white,
                    strokeColor=None,
                )
            )
        drawing.add(
            String(x + 3 * mm, y + 1 * mm, a["label"], fontName="ParapetSans-Bold", fontSize=8)
        )
        drawing.add(
            String(x + 3 * mm, y - 2.5 * mm, a["status"], fontName="ParapetSans", fontSize=6.5)
        )
    drawing.add(
        String(
            10 * mm,
            height - 6 * mm,
            "Roof plan (north up is not implied; coordinates in m)",
            fontName="ParapetSans",
            fontSize=7,
        )
    )
    return drawing


def _clock(document: dict[str, Any]) -> Callable[[Any], str]:
    """How the document's stored UTC times print: as stored in the first format, else in its
    zone to the minute ("2026-12-05 23:29 (Pacific/Auckland)")."""
    if document.get("format") == FIRST_FORMAT:
        return str
    try:
        zone = ZoneInfo(str(document.get("time_zone") or "UTC"))
    except (ZoneInfoNotFoundError, ValueError):
        zone = ZoneInfo("UTC")

    def when(stamp: Any) -> str:
        moment = _moment(stamp) if isinstance(stamp, str) else None
        if moment is None:
            return str(stamp)
        return f"{moment.astimezone(zone):%Y-%m-%d %H:%M} ({zone})"

    return when


def render(document: dict[str, Any], seal: str) -> bytes:
    s = _styles()
    sealed = document
    if document.get("format") not in (FIRST_FORMAT, ZONED_FORMAT):
        document = spelled_for_drawing(document)
    when = _clock(document)
    story: list[Any] = [
        _p(f"Anchor log book — {document['site']['name']}", s["title"]),
        _p(
            f"{document['site']['address']} — {document['scope']} — "
            f"generated {when(document['generated_at'])} by {document['generated_by']['name']} "
            f"({document['generated_by']['role']})",
            s["body"],
        ),
        Spacer(1, 3 * mm),
        roof_plan(document),
        Spacer(1, 3 * mm),
        _p("Anchors", s["h2"]),
        _table(
            [["Anchor", "Status", "Last inspection", "Next due"]]
            + [
                [a["label"], a["status"], a["last_inspection"] or "—", a["inspection_due"] or "—"]
                for a in document["anchors"]
            ],
            [25 * mm, 55 * mm, 50 * mm, 50 * mm],
        ),
        _p("Entries", s["h2"]),
    ]
    rows: list[list[Any]] = [["#", "Anchor", "Kind / result", "Done on, by", "Details", "Signed"]]
    for item in document["entries"]:
        e = item["entry"]
        sig = e["signature"]
        rows.append(
            [
                str(e["sequence"]),
                e["anchor"]["label"],
                _p(f"{e['kind'].replace('_', ' ')} / {e['result']}", s["small"]),
                _p(
                    f"{e['performed_on']}, {e['performed_by']} {e['performed_by_company']}",
                    s["small"],
                ),
                _p(e["details"], s["small"]),
                _p(
                    f"{sig['name']} ({sig['role']}), {when(sig['signed_at'])};"
                    f" seal {item['seal'][:16]}…",
                    s["small"],
                ),
            ]
        )
    story.append(_table(rows, [8 * mm, 15 * mm, 30 * mm, 35 * mm, 55 * mm, 37 * mm]))
    if document is not sealed and document != sealed:
        story += [Spacer(1, 3 * mm), _p(SPELLED_NOTE, s["small"])]
    story += [
        Spacer(1, 4 * mm),
        _p("Caution", s["h3"]),
        _p(CAUTION, s["small"]),
        Spacer(1, 3 * mm),
        _p(SEAL_LABEL, s["h3"]),
        _p(seal, s["mono"]),
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
        title=f"Anchor log book — {sealed['site']['name']}",
        creator="Parapet",
        invariant=1,
    )
    doc.build(story, canvasmaker=_NumberedCanvas)
    writer = PdfWriter(clone_from=PdfReader(io.BytesIO(buffer.getvalue())))
    writer.add_attachment(ATTACHMENT_NAME, canonical_bytes(sealed))
    out = io.BytesIO()
    writer.write(out)
    return out.getvalue()

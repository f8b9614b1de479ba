"""Do the pages a person reads say what the sealed record says?

A record's PDF is drawn by a deterministic renderer from the sealed document alone (plus the
photos it seals by SHA-256). The check draws the attached document again and compares, page by
page, everything that decides what a reader sees: the page's drawing instructions, every font,
image and other resource they use (by the SHA-256 of its decoded bytes), the page size and
rotation, and any annotation. The only thing the signed file may add is the signature's own
field, and that must be invisible. Photos are taken from the signed file itself: each image in
it whose bytes hash to a photo the record seals is used, so a swapped photo changes the drawing
and fails the check.

This holds for the record layouts this verifier knows; a record drawn by a layout it does not
know is reported as not checked rather than passed.
"""

import hashlib
import io
from collections.abc import Callable, Mapping
from typing import Any

from pypdf import PdfReader
from pypdf.generic import (
    ArrayObject,
    DictionaryObject,
    IndirectObject,
    StreamObject,
)

SKIPPED_KEYS = {"/Parent", "/P", "/Length", "/Filter", "/DecodeParms"}
MAX_DEPTH = 24
MAX_PAGES = 2000


class PagesUnreadable(Exception):
    """The signed file's pages cannot be walked (malformed, too deep, too many)."""


def _canon(value: Any, depth: int = 0, seen: dict[tuple[int, int], Any] | None = None) -> Any:
    """A plain, comparable form of a PDF object: object numbers left out, streams by the hash
    of their decoded bytes.

    `seen` keeps the form of each indirect object already walked in this file, so the fonts
    every page shares are decoded and hashed once, not once per page. An object's form does
    not depend on the path it was reached by; it is kept only once fully walked, so a cycle
    still runs into the depth limit.
    """
    if depth > MAX_DEPTH:
        raise PagesUnreadable("objects nested too deep")
    key = None
    if isinstance(value, IndirectObject):
        key = (value.idnum, value.generation)
        if seen is not None and key in seen:
            return seen[key]
        value = value.get_object()
    if isinstance(value, StreamObject):
        form: Any = {
            "stream": hashlib.sha256(value.get_data()).hexdigest(),
            "dict": {
                str(k): _canon(v, depth + 1, seen)
                for k, v in value.items()
                if k not in SKIPPED_KEYS
            },
        }
    elif isinstance(value, DictionaryObject):
        form = {
            str(k): _canon(v, depth + 1, seen) for k, v in value.items() if k not in SKIPPED_KEYS
        }
    elif isinstance(value, ArrayObject | list):
        form = [_canon(v, depth + 1, seen) for v in value]
    else:
        form = f"{type(value).__name__}:{value}"
    if key is not None and seen is not None:
        seen[key] = form
    return form


def _is_signature_widget(annotation: DictionaryObject) -> bool:
    field = annotation
    for _ in range(4):
        if field.get("/FT") == "/Sig":
            return True
        parent = field.get("/Parent")
        if parent is None:
            return False
        field = parent.get_object()
    return False


def _invisible(annotation: DictionaryObject) -> bool:
    rect = [float(x) for x in annotation.get("/Rect", [0, 0, 0, 0])]
    return len(rect) == 4 and (rect[2] - rect[0]) * (rect[3] - rect[1]) == 0


def page_prints(reader: PdfReader) -> list[dict[str, Any]]:
    """What decides each page's look, in a form two files can be compared by."""
    pages = []
    if len(reader.pages) > MAX_PAGES:
        raise PagesUnreadable(f"more than {MAX_PAGES} pages")
    seen: dict[tuple[int, int], Any] = {}
    for page in reader.pages:
        contents = page.get_contents()
        annotations = []
        for ref in page.get("/Annots") or []:
            annotation = ref.get_object()
            if _is_signature_widget(annotation):
                if not _invisible(annotation):
                    annotations.append({"visible signature appearance": _canon(annotation)})
                continue
            annotations.append(_canon(annotation))
        pages.append(
            {
                "contents": hashlib.sha256(
                    b"" if contents is None else contents.get_data()
                ).hexdigest(),
                "resources": _canon(page.get("/Resources") or {}, seen=seen),
                "box": [float(x) for x in page.mediabox],
                "rotate": int(page.get("/Rotate", 0) or 0),
                "annotations": annotations,
            }
        )
    return pages


def image_bytes(reader: PdfReader) -> dict[str, bytes]:
    """Every image drawn on the pages, by the SHA-256 of its encoded bytes (a JPEG as stored)."""
    found: dict[str, bytes] = {}
    for page in reader.pages:
        objects = (page.get("/Resources") or {}).get("/XObject") or {}
        for ref in objects.values():
            stream = ref.get_object()
            if stream.get("/Subtype") == "/Image":
                data = stream.get_data()
                found[hashlib.sha256(data).hexdigest()] = data
    return found


Renderer = Callable[[dict[str, Any], str, Mapping[str, bytes]], bytes]


def differing_pages(
    signed: bytes, document: dict[str, Any], seal: str, renderer: Renderer
) -> list[str]:
    """Draw the sealed document again and list, in words, where the signed pages differ
    (empty when every page matches)."""
    reader = PdfReader(io.BytesIO(signed))
    images = image_bytes(reader)
    photos = {
        p["client_uuid"]: images[p["sha256"]]
        for p in (document.get("record") or {}).get("photos") or []
        if p.get("sha256") in images
    }
    expected = page_prints(PdfReader(io.BytesIO(renderer(document, seal, photos))))
    actual = page_prints(reader)
    if len(actual) != len(expected):
        return [f"the file has {len(actual)} pages where the record draws {len(expected)}"]
    problems = []
    for number, (have, want) in enumerate(zip(actual, expected, strict=True), start=1):
        for part in ("contents", "resources", "box", "rotate", "annotations"):
            if have[part] != want[part]:
                problems.append(f"page {number} ({_part_words[part]})")
    return problems


_part_words = {
    "contents": "its text and drawing",
    "resources": "its fonts or images",
    "box": "its size",
    "rotate": "its rotation",
    "annotations": "something laid over it",
}

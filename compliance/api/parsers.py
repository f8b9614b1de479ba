"""Request parsers: DRF's JSON parser, with JSON nested too deeply answered as a 400 and a
NaN or Infinity token answered as a 400 naming where it is; DRF's multipart parser, with a name
given twice or a part that says it is encoded answered as a 400 naming it."""

import codecs
import json
import shutil
import tempfile
from typing import IO, Any

from django.conf import settings

# Django's parser's own pieces (three of them left out of django-stubs): the walk below reads
# each part's header with them, exactly as Django's parse() does.
from django.http.multipartparser import (  # type: ignore[attr-defined]
    FIELD_TYPES,
    FILE,
    MAX_TOTAL_HEADER_SIZE,
    ChunkIter,
    InterBoundaryIter,
    LazyStream,
    MultiPartParserError,
    exhaust,
    parse_boundary_stream,
)
from django.http.multipartparser import MultiPartParser as DjangoMultiPartParser
from django.utils.encoding import force_str
from rest_framework import parsers
from rest_framework.exceptions import ParseError, UnsupportedMediaType, ValidationError
from rest_framework.utils.json import strict_constant

NOT_FINITE = "must be a finite number"


class _Constant(float):
    """A NaN or Infinity token, kept only to find where it was."""


def _first_constant(value: Any, path: str) -> str | None:
    if isinstance(value, _Constant):
        return path
    if isinstance(value, dict):
        items: Any = ((f"{path}.{key}" if path else str(key), v) for key, v in value.items())
    elif isinstance(value, list):
        items = ((f"{path}[{i}]", v) for i, v in enumerate(value))
    else:
        return None
    for where, inner in items:
        found = _first_constant(inner, where)
        if found is not None:
            return found
    return None


class _DuplicateKey(ValueError):
    pass


def _unique_keys(pairs: list[tuple[str, Any]]) -> dict[str, Any]:
    """An object whose keys are each given once. RFC 8259 §4 leaves repeated names to the
    reader; Python's decoder keeps the last, so `{"value": "fail", "value": "pass"}` read as a
    pass where another reader (or a person) sees a fail."""
    out: dict[str, Any] = {}
    for key, value in pairs:
        if key in out:
            raise _DuplicateKey(f"the name {key!r} appears twice in one object")
        out[key] = value
    return out


class JSONParser(parsers.JSONParser):
    """Python's json decoder raises RecursionError, not ValueError, past about a thousand
    levels of nesting; DRF's parser lets it through as a 500.

    JSON has no NaN or Infinity (RFC 8259 §6), which Python's decoder reads; DRF refuses them
    with words that do not say where. The body is read once more, keeping each such token, to
    name the first (`records[0].data.entries.wind.value`), as a number too large for a float
    is named by the field that refuses it.
    """

    def parse(self, stream: Any, media_type: str | None = None, parser_context: Any = None) -> Any:
        encoding = parsers.get_encoding(parser_context or {})
        if codecs.lookup(encoding).name != "utf-8":
            # JSON is UTF-8 (RFC 8259 §8.1). Another charset reads other text than the bytes
            # show: in UTF-7, "grip +AGYAYQBpAGw- ok" is "grip fail ok".
            raise UnsupportedMediaType(f"application/json; charset={encoding}")
        try:
            text = codecs.getreader(encoding)(stream).read()
            return json.loads(text, parse_constant=strict_constant, object_pairs_hook=_unique_keys)
        except RecursionError:
            raise ParseError("JSON parse error - nested too deeply.") from None
        except _DuplicateKey as exc:
            raise ParseError(f"JSON parse error - {exc}.") from None
        except ValueError as exc:
            if not str(exc).startswith("Out of range float values"):
                raise ParseError(f"JSON parse error - {exc}") from None
        try:
            kept = json.loads(
                text, parse_constant=lambda token: _Constant(token), object_pairs_hook=_unique_keys
            )
        except (ValueError, RecursionError):  # not reached: the same text parsed up to here
            raise ParseError("JSON parse error - not valid JSON.") from None
        try:
            where = _first_constant(kept, "")
        except RecursionError:  # as deep as the decoder allowed, deeper than the walk may go
            where = None
        raise ValidationError({where or "body": [NOT_FINITE]})


SENT_AS_IT_IS = {b"7bit", b"8bit", b"binary"}
"""The Content-Transfer-Encoding values that leave a part's bytes as they are (RFC 2045 §6.2)."""


def says_encoded(header: bytes) -> bool:
    """Whether a part's header block has a Content-Transfer-Encoding other than one of the
    identity ones, read as loosely as any reader might: every line of that name (not only the
    last, which Django reads), any case (RFC 2045 §6.1), an empty value counted as encoded, and
    a line that starts with a space or a tab read both ways: joined to the line before (a
    folded header) and on its own, stripped (as Django reads it: joined alone, such a line hid
    a header Django then obeyed)."""
    lines: list[bytes] = []
    for line in header.splitlines():
        if line[:1] in (b" ", b"\t") and lines:
            lines[-1] += b" " + line.strip()
        lines.append(line.strip())
    for line in lines:
        name, colon, value = line.partition(b":")
        if (
            colon
            and name.strip().lower() == b"content-transfer-encoding"
            and value.strip().lower() not in SENT_AS_IT_IS
        ):
            return True
    return False


def _header_block(part: LazyStream) -> bytes:
    """A part's header block, read as Django's parse_boundary_stream reads it (the first
    blank line within 1, 2, 4 then 8 KB) and put back for it to read again."""
    size = 1024
    while size <= MAX_TOTAL_HEADER_SIZE:
        chunk = part.read(size)
        part.unget(chunk)
        end = chunk.find(b"\r\n\r\n")
        if end != -1:
            return bytes(chunk[:end])
        if len(chunk) < size:
            return b""
        size *= 2
    return b""  # Django's parser refuses a header this long


class _FormParts(DjangoMultiPartParser):
    """Django's multipart parser, made to walk a body's parts as its parse() does, reading
    each part's header before anything of the part is read."""

    # Set by Django's __init__, read as its parse() reads them.
    _boundary: bytes
    _chunk_size: int
    _content_length: int
    _encoding: str
    _input_data: Any

    def encoded_part(self) -> str | None:
        """The name of the first part whose header says it is encoded ("" for a part with no
        name), or None when no part does.

        The parts are the ones Django's parse() finds, found its way. A part it skips unread
        (one with no name, a file whose name is empty once cleaned) is skipped here too: past
        the first 64 KB read, the rest of such a part is then taken for a part of its own, and
        a part written there was read, base64 and all. The walk stops where parse() refuses
        the form for too many fields or files."""
        if self._content_length == 0:
            return None
        fields = files = 0
        stream = LazyStream(ChunkIter(self._input_data, self._chunk_size))
        for raw in InterBoundaryIter(stream, b"--" + self._boundary):
            header = _header_block(raw)
            kind, meta, part = parse_boundary_stream(raw, MAX_TOTAL_HEADER_SIZE)
            if kind in FIELD_TYPES:
                fields += 1
                limit = settings.DATA_UPLOAD_MAX_NUMBER_FIELDS
                if limit is not None and fields > limit + 2:
                    return None  # parse() refuses the form at this part
            disposition = meta.get("content-disposition", ("", {}))[1]
            name = disposition.get("name")
            if says_encoded(header):
                return "" if name is None else force_str(name.strip(), errors="replace")
            if name is None:
                continue
            if kind == FILE:
                files += 1
                limit = settings.DATA_UPLOAD_MAX_NUMBER_FILES
                if limit is not None and files > limit:
                    return None  # parse() refuses the form at this part
                file_name = force_str(disposition["filename"], self._encoding, errors="replace")
                if not self.sanitize_file_name(file_name):
                    continue
            exhaust(part)
        return None


def _copied(stream: IO[bytes]) -> Any:
    """The request body, kept (on disk past the in-memory upload limit) to be read twice."""
    copy = tempfile.SpooledTemporaryFile(  # noqa: SIM115 - closed by the caller
        max_size=settings.FILE_UPLOAD_MAX_MEMORY_SIZE, dir=settings.FILE_UPLOAD_TEMP_DIR
    )
    shutil.copyfileobj(stream, copy, 64 * 1024)
    copy.seek(0)
    return copy


class MultiPartParser(parsers.MultiPartParser):
    """DRF's multipart parser, with a name given twice, or a part that says it is encoded,
    answered as a 400 naming it.

    A form keeps every value of a repeated name and a serializer reads the last, so
    ``certifier=A&certifier=B`` stored B where another reader (or a person looking at the
    request) sees A. Only the endpoints that take a file accept a form at all; every other one
    reads JSON alone.

    Django decodes a part sent with ``Content-Transfer-Encoding: base64``: a capacity sent as
    ``MTI=`` was stored as 12 kN. A form's parts are sent as they are (RFC 7578 §4.7), so every
    part's header is read first, and a form with a part that says otherwise is refused before
    anything of it is read. The body is kept while that is done.
    """

    def parse(self, stream: Any, media_type: str | None = None, parser_context: Any = None) -> Any:
        parser_context = parser_context or {}
        encoding = parsers.get_encoding(parser_context)
        if codecs.lookup(encoding).name != "utf-8":
            # A form's text parts are read in the charset it names: in UTF-7 a certifier
            # "+AEEAQwBNAEU-" was stored as "ACME". Forms are read as UTF-8 alone, as JSON is.
            raise UnsupportedMediaType(f"multipart/form-data; charset={encoding}")
        request = parser_context["request"]
        meta = {**request.META, "CONTENT_TYPE": media_type}
        with _copied(stream) as body:
            try:
                parts = _FormParts(meta, body, request.upload_handlers, encoding)
                encoded = parts.encoded_part()
            except MultiPartParserError as exc:
                raise ParseError(f"Multipart form parse error - {exc}") from None
            if encoded is not None:
                which = f"The part {encoded!r}" if encoded else "A part with no name"
                raise ValidationError(
                    {
                        encoded or "body": [
                            f"{which} says it is encoded (Content-Transfer-Encoding): a form's"
                            " parts are sent as they are (RFC 7578 §4.7)."
                        ]
                    }
                )
            body.seek(0)
            parsed = super().parse(body, media_type, parser_context)
        names = [name for part in (parsed.data, parsed.files) for name, _ in part.lists()]
        counts = {name: 0 for name in names}
        for part in (parsed.data, parsed.files):
            for name, values in part.lists():
                counts[name] += len(values)
        for name in names:
            if counts[name] > 1:
                # A text part and a file part of one name count too: image=text and image=@file.
                raise ValidationError({name: [f"The name {name!r} appears twice in the form."]})
        return parsed

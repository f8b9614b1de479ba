"""Request parsers: DRF's JSON parser, with JSON nested too deeply answered as a 400 and a
NaN or Infinity token answered as a 400 naming where it is."""

import codecs
import json
from typing import Any

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


class MultiPartParser(parsers.MultiPartParser):
    """DRF's multipart parser, with a name given twice answered as a 400 naming it.

    A form keeps every value of a repeated name and a serializer reads the last, so
    ``certifier=A&certifier=B`` stored B where another reader (or a person looking at the
    request) sees A. Only the endpoints that take a file accept a form at all; every other one
    reads JSON alone.
    """

    def parse(self, stream: Any, media_type: str | None = None, parser_context: Any = None) -> Any:
        encoding = parsers.get_encoding(parser_context or {})
        if codecs.lookup(encoding).name != "utf-8":
            # A form's text parts are read in the charset it names: in UTF-7 a certifier
            # "+AEEAQwBNAEU-" was stored as "ACME". Forms are read as UTF-8 alone, as JSON is.
            raise UnsupportedMediaType(f"multipart/form-data; charset={encoding}")
        parsed = super().parse(stream, media_type, parser_context)
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

"""Request parsers: DRF's JSON parser, with JSON nested too deeply answered as a 400."""

from typing import Any

from rest_framework import parsers
from rest_framework.exceptions import ParseError


class JSONParser(parsers.JSONParser):
    """Python's json decoder raises RecursionError, not ValueError, past about a thousand
    levels of nesting; DRF's parser lets it through as a 500."""

    def parse(self, stream: Any, media_type: str | None = None, parser_context: Any = None) -> Any:
        try:
            return super().parse(stream, media_type, parser_context)
        except RecursionError:
            raise ParseError("JSON parse error - nested too deeply.") from None

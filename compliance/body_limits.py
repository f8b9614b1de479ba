"""A request body's size, checked on its declared length before anything reads a byte of it.

Django reads a body up to its Content-Length and no further (none at all without one), so a
limit on the declared length bounds every read, of every parser and middleware after this one:
a multipart form (the endpoints that take a file) up to ``PARAPET_MAX_FORM_BYTES``, any other
body up to ``PARAPET_MAX_BODY_BYTES``. Past its limit a body is answered 413, unread, so nothing
of it is copied, parsed or stored; one sent without a length (chunked) is answered 411, where
Django would have read it as empty; a length that is not a number of bytes, 400. Why the limits
are what they are: docs/limits.md.
"""

from collections.abc import Callable, Mapping
from typing import Any

from django.conf import settings
from django.http import HttpRequest, HttpResponse, JsonResponse

FORM_MEDIA_TYPE = "multipart/form-data"
MB = 1024 * 1024


def body_limit(content_type: str) -> tuple[int, str]:
    """The limit of a body of this content type, in bytes, and what such a body is called."""
    if content_type.split(";", 1)[0].strip().lower() == FORM_MEDIA_TYPE:
        return settings.PARAPET_MAX_FORM_BYTES, "A form with a file"
    return settings.PARAPET_MAX_BODY_BYTES, "A request body"


def refusal(meta: Mapping[str, Any]) -> JsonResponse | None:
    """The answer to a request whose body is not to be read (WSGI ``meta``), else None."""
    declared = meta.get("CONTENT_LENGTH")
    if declared in (None, ""):
        if meta.get("HTTP_TRANSFER_ENCODING"):
            return _refuse(
                411, "A request body is sent with its length (Content-Length); this one was not."
            )
        return None
    if not (isinstance(declared, str) and declared.isascii() and declared.isdigit()):
        # Django reads "-1" or "12abc" as no body at all, and a number in other digits as one.
        return _refuse(400, "Content-Length is a whole number of bytes.")
    size = int(declared)
    limit, what = body_limit(str(meta.get("CONTENT_TYPE", "")))
    if size > limit:
        return _refuse(
            413, f"{what} is at most {limit // MB} MB ({limit} bytes); this one is {size} bytes."
        )
    return None


def _refuse(status: int, detail: str) -> JsonResponse:
    return JsonResponse({"detail": detail}, status=status)


class RequestBodyLimitMiddleware:
    """Refuses a body past its limit before any later middleware or view reads it."""

    def __init__(self, get_response: Callable[[HttpRequest], HttpResponse]) -> None:
        self.get_response = get_response

    def __call__(self, request: HttpRequest) -> HttpResponse:
        refused = refusal(request.META)
        return refused if refused is not None else self.get_response(request)

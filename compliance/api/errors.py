"""Domain errors to HTTP, in one place."""

from typing import Any

from django.conf import settings
from django.core.exceptions import RequestDataTooBig, TooManyFieldsSent, TooManyFilesSent
from rest_framework import exceptions
from rest_framework.response import Response
from rest_framework.views import exception_handler as drf_exception_handler

from compliance.body_limits import MB
from compliance.errors import answer_for


def exception_handler(exc: Exception, context: dict[str, Any]) -> Response | None:
    if isinstance(exc, RequestDataTooBig):
        # A form within its limit whose text parts are not (compliance/body_limits.py answers
        # every other body past its limit before it is read); Django's answer is an HTML page.
        limit = settings.DATA_UPLOAD_MAX_MEMORY_SIZE
        words = f"A form's text parts are at most {limit // MB} MB ({limit} bytes) together."
        return Response({"detail": words}, status=413)
    if isinstance(exc, TooManyFieldsSent | TooManyFilesSent):
        # Django stops reading a form past its count of parts; its answer is an HTML page.
        if isinstance(exc, TooManyFilesSent):
            limit, kind = settings.DATA_UPLOAD_MAX_NUMBER_FILES, "files"
        else:
            limit, kind = settings.DATA_UPLOAD_MAX_NUMBER_FIELDS, "fields"
        return Response(
            {"detail": f"A form holds at most {limit} {kind}; this one holds more."}, 400
        )
    answer = answer_for(exc)
    if answer is not None:
        code, body = answer
        return Response(body, status=code)
    response = drf_exception_handler(exc, context)
    if (
        response is not None
        and isinstance(exc, exceptions.NotAuthenticated | exceptions.AuthenticationFailed)
        and isinstance(response.data, dict)
    ):
        # A code the phone can test without reading words: the session is gone, sign in again.
        response.data["code"] = exc.default_code
    return response

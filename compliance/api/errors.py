"""Domain errors to HTTP, in one place."""

from typing import Any

from django.core.exceptions import ValidationError as DjangoValidationError
from rest_framework import exceptions, status
from rest_framework.response import Response
from rest_framework.views import exception_handler as drf_exception_handler

from compliance.append_only import AppendOnlyViolation
from compliance.errors import InvalidTransition, JobBlocked, NotPermitted
from compliance.signing import NoSigningCredential


def django_errors(exc: DjangoValidationError) -> dict[str, Any]:
    if hasattr(exc, "error_dict"):
        return {
            field: [str(m) for e in errs for m in e.messages]
            for field, errs in exc.error_dict.items()
        }
    return {"non_field_errors": list(exc.messages)}


def exception_handler(exc: Exception, context: dict[str, Any]) -> Response | None:
    if isinstance(exc, JobBlocked):
        return Response(
            {"detail": "This job cannot start yet.", "reasons": [r.as_dict() for r in exc.reasons]},
            status=status.HTTP_409_CONFLICT,
        )
    if isinstance(exc, InvalidTransition):
        return Response({"detail": exc.message}, status=status.HTTP_409_CONFLICT)
    if isinstance(exc, NotPermitted):
        return Response({"detail": exc.message}, status=status.HTTP_403_FORBIDDEN)
    if isinstance(exc, NoSigningCredential):
        return Response({"detail": str(exc)}, status=status.HTTP_409_CONFLICT)
    if isinstance(exc, AppendOnlyViolation):
        return Response({"detail": str(exc)}, status=status.HTTP_409_CONFLICT)
    if isinstance(exc, DjangoValidationError):
        return Response(django_errors(exc), status=status.HTTP_400_BAD_REQUEST)
    response = drf_exception_handler(exc, context)
    if (
        response is not None
        and isinstance(exc, exceptions.NotAuthenticated | exceptions.AuthenticationFailed)
        and isinstance(response.data, dict)
    ):
        # A code the phone can test without reading words: the session is gone, sign in again.
        response.data["code"] = exc.default_code
    return response

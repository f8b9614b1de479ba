"""Domain errors, and the one mapping from an error to its answer: a status and a body, used
by the API's exception handler and, through the same mapping, by the sync endpoint's answer for
each refused record."""

from dataclasses import dataclass
from typing import Any

from django.core.exceptions import ValidationError

from compliance.append_only import AppendOnlyViolation


@dataclass(frozen=True)
class Reason:
    code: str
    message: str
    requirement: str = ""

    def as_dict(self) -> dict[str, str]:
        return {"code": self.code, "message": self.message, "requirement": self.requirement}


class DomainError(Exception):
    """Base of the errors a service raises on purpose."""


class JobBlocked(DomainError):
    """The job cannot move to the asked state; ``reasons`` says why in plain words."""

    def __init__(self, reasons: list[Reason]) -> None:
        super().__init__("; ".join(r.message for r in reasons))
        self.reasons = reasons


class InvalidTransition(DomainError):
    def __init__(self, message: str) -> None:
        super().__init__(message)
        self.message = message


class NotPermitted(DomainError):
    def __init__(self, message: str) -> None:
        super().__init__(message)
        self.message = message


READ_ONLY = "Auditors have read-only access."


def require_writer(user: Any) -> None:
    """Every service that changes something refuses a read-only person (an auditor) first."""
    if not user.can_write:
        raise NotPermitted(READ_ONLY)


class PdfsPending(DomainError):
    """Some records' PDFs are still being rendered; ``record_ids`` names them."""

    def __init__(self, record_ids: list[int]) -> None:
        super().__init__(f"{len(record_ids)} record PDFs are still being rendered.")
        self.record_ids = record_ids


class NoSigningCredential(DomainError):
    """The organisation has no signing certificate yet."""


def field_errors(exc: ValidationError) -> dict[str, list[str]]:
    """A Django validation error as {field: [messages]} ("non_field_errors" when it has none)."""
    if hasattr(exc, "error_dict"):
        return {
            field: [str(m) for e in errs for m in e.messages]
            for field, errs in exc.error_dict.items()
        }
    return {"non_field_errors": [str(m) for m in exc.messages]}


def answer_for(exc: Exception) -> tuple[int, dict[str, Any]] | None:
    """The HTTP status and body for a domain error (None for anything else)."""
    if isinstance(exc, JobBlocked):
        return 409, {
            "detail": "This job cannot start yet.",
            "reasons": [r.as_dict() for r in exc.reasons],
        }
    if isinstance(exc, NotPermitted):
        return 403, {"detail": exc.message}
    if isinstance(exc, InvalidTransition):
        return 409, {"detail": exc.message}
    if isinstance(exc, DomainError | AppendOnlyViolation):
        return 409, {"detail": str(exc)}
    if isinstance(exc, ValidationError):
        return 400, field_errors(exc)
    return None


def rejection_for(exc: Exception) -> dict[str, Any] | None:
    """The same answer as errors of one refused sync record: field errors as they are, a job
    that cannot go on under "job" with its reasons, anything else under "record"."""
    answer = answer_for(exc)
    if answer is None:
        return None
    code, body = answer
    if code == 400:
        return {"errors": body}
    if "reasons" in body:
        return {
            "errors": {"job": [r["message"] for r in body["reasons"]]},
            "reasons": body["reasons"],
        }
    return {"errors": {"record": [body["detail"]]}}

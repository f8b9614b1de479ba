"""Domain errors, mapped to HTTP answers in one place (compliance.api.errors)."""

from dataclasses import dataclass


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


class PdfsPending(DomainError):
    """Some records' PDFs are still being rendered; ``record_ids`` names them."""

    def __init__(self, record_ids: list[int]) -> None:
        super().__init__(f"{len(record_ids)} record PDFs are still being rendered.")
        self.record_ids = record_ids

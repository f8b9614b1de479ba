"""Append-only rows: safety records are added, never edited or deleted in place.

The guard sits on the model's save/delete and on its queryset's bulk update/delete, so the
ORM paths (API, admin, shell) all refuse. A database that is edited behind the ORM is caught
by the record seals instead.
"""

from typing import Any

from django.db import models


class AppendOnlyViolation(Exception):
    """Raised when code tries to change or remove a stored safety record."""


class AppendOnlyQuerySet(models.QuerySet):
    def update(self, **kwargs: Any) -> int:
        raise AppendOnlyViolation(f"{self.model.__name__} rows are append-only; update refused.")

    def delete(self) -> tuple[int, dict[str, int]]:
        raise AppendOnlyViolation(f"{self.model.__name__} rows are append-only; delete refused.")


class AppendOnlyModel(models.Model):
    """Abstract base for rows that may only be inserted."""

    objects = AppendOnlyQuerySet.as_manager()

    class Meta:
        abstract = True

    def save(self, *args: Any, **kwargs: Any) -> None:
        if not self._state.adding:
            raise AppendOnlyViolation(
                f"{type(self).__name__} {self.pk} is an append-only record; it cannot be changed."
            )
        super().save(*args, **kwargs)

    def delete(self, *args: Any, **kwargs: Any) -> tuple[int, dict[str, int]]:
        raise AppendOnlyViolation(
            f"{type(self).__name__} {self.pk} is an append-only record; it cannot be deleted."
        )

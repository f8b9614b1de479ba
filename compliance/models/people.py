"""Organisations and the people who sign in: one organisation and one role each."""

from django.contrib.auth.models import AbstractUser
from django.db import models


class Organisation(models.Model):
    class Kind(models.TextChoices):
        CONTRACTOR = "contractor", "Facade contractor"
        OWNER = "owner", "Building owner"

    name = models.CharField(max_length=200, unique=True)
    kind = models.CharField(max_length=20, choices=Kind.choices, default=Kind.CONTRACTOR)
    created_at = models.DateTimeField(auto_now_add=True)

    def __str__(self) -> str:
        return self.name


class Role(models.TextChoices):
    OPERATOR = "operator", "Operator"
    SUPERVISOR = "supervisor", "Supervisor (competent person)"
    AUDITOR = "auditor", "Auditor (read only)"
    ADMIN = "admin", "Organisation admin"
    PROPERTY_MANAGER = "property_manager", "Property manager (building owner)"


class User(AbstractUser):
    """A person who signs in; belongs to one organisation with one role."""

    organisation = models.ForeignKey(
        Organisation, null=True, blank=True, on_delete=models.PROTECT, related_name="people"
    )
    role = models.CharField(max_length=20, choices=Role.choices, default=Role.OPERATOR)

    @property
    def display_name(self) -> str:
        return self.get_full_name() or self.username

    @property
    def can_write(self) -> bool:
        return self.role != Role.AUDITOR

    @property
    def can_supervise(self) -> bool:
        return self.role in (Role.SUPERVISOR, Role.ADMIN)

    @property
    def can_keep_anchor_log(self) -> bool:
        """Supervisors, admins and property managers sign anchor log entries."""
        return self.role in (Role.SUPERVISOR, Role.ADMIN, Role.PROPERTY_MANAGER)

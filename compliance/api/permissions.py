"""Who may do what: organisation scoping lives in each view's queryset; roles live here."""

from typing import Any

from rest_framework.permissions import SAFE_METHODS, BasePermission
from rest_framework.request import Request


class OrganisationMember(BasePermission):
    """Signed in, belongs to an organisation; auditors may only read."""

    message = "Auditors have read-only access."

    def has_permission(self, request: Request, view: Any) -> bool:
        user = request.user
        if not (user and user.is_authenticated and user.organisation_id):
            self.message = "You need to sign in as a member of an organisation."
            return False
        if request.method in SAFE_METHODS:
            return True
        self.message = "Auditors have read-only access."
        return bool(user.can_write)


class SupervisorWrites(OrganisationMember):
    """Reads for members; changes only for a supervisor or an admin."""

    def has_permission(self, request: Request, view: Any) -> bool:
        if not super().has_permission(request, view):
            return False
        if request.method in SAFE_METHODS:
            return True
        self.message = "Only a supervisor, an admin or a property manager can change this register."
        return bool(request.user.can_keep_anchor_log)

"""Signing in with a username as a phone's keyboard types it."""

from typing import Any

from django.contrib.auth import get_user_model
from django.contrib.auth.backends import ModelBackend
from django.http import HttpRequest


class AnyCaseUsernameBackend(ModelBackend):
    """Django's own backend, with the username matched whatever its case and without the
    spaces around it: a phone's keyboard writes "Tomas " for tomas, and the person read
    "Wrong username or password." with both right. Where two accounts differ only in case,
    only the exact name signs in (neither is taken for the other)."""

    def authenticate(
        self,
        request: HttpRequest | None,
        username: str | None = None,
        password: str | None = None,
        **kwargs: Any,
    ) -> Any:
        if username is None or password is None:
            return None
        typed = username.strip()
        model = get_user_model()
        # The database's own case-insensitive match may go further than Python's folding
        # (PostgreSQL's UPPER() makes a dotless ı an I): only a name that folds to the same
        # text signs in, the text the sign-in limit counts by.
        found = [
            user
            for user in model._default_manager.filter(username__iexact=typed)
            if user.username.casefold() == typed.casefold()
        ]
        if len(found) > 1:
            found = [user for user in found if user.username == typed]
        if len(found) != 1:
            # As Django's backend does: hash anyway, so a missing account takes as long.
            model().set_password(password)
            return None
        user = found[0]
        if user.check_password(password) and self.user_can_authenticate(user):
            return user
        return None

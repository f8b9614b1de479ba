"""API tokens for scripts: a new one at each sign-in, expiring, revoked on sign-out and when the
password changes (a stolen token is not good for ever)."""

import datetime as dt
from typing import Any

from django.conf import settings
from django.db import transaction
from django.utils import timezone
from rest_framework.authentication import TokenAuthentication
from rest_framework.authtoken.models import Token
from rest_framework.exceptions import AuthenticationFailed


def token_lifetime() -> dt.timedelta:
    return dt.timedelta(hours=settings.PARAPET_TOKEN_HOURS)


@transaction.atomic
def issue_token(*, user: Any) -> Token:
    """A fresh token for `user`; any earlier one stops working. Two sign-ins of one person at
    once take turns on the person's row: unlocked, both deleted the old token and the second
    insert broke the one-token rule (a 500)."""
    type(user).objects.select_for_update().filter(pk=user.pk).exists()
    Token.objects.filter(user=user).delete()
    return Token.objects.create(user=user)


def revoke_tokens(*, user: Any) -> int:
    """Every token of `user` stops working; how many there were."""
    deleted, _ = Token.objects.filter(user=user).delete()
    return deleted


class ExpiringTokenAuthentication(TokenAuthentication):
    """DRF's token authentication, refusing a token older than PARAPET_TOKEN_HOURS."""

    def authenticate_credentials(self, key: str) -> tuple[Any, Token]:
        user, token = super().authenticate_credentials(key)
        if token.created + token_lifetime() < timezone.now():
            token.delete()
            raise AuthenticationFailed("The token has expired; sign in again.")
        return user, token


def revoke_on_password_change(sender: Any, instance: Any, **kwargs: Any) -> None:
    """post_save of a user: set_password() leaves the new raw password on `_password` until the
    save completes, so a save that changed the password revokes every token."""
    if getattr(instance, "_password", None) is not None:
        revoke_tokens(user=instance)

"""Limits on guessing passwords: by account and by client address, in the shared cache.

An attacker who changes X-Forwarded-For, or spreads attempts over several workers with a
cache of their own, must not get more guesses: the account is counted whatever the address,
the address is the proxy-reported one only for the number of proxies the deploy trusts
(PARAPET_TRUSTED_PROXIES), and production points CACHE_URL at a cache every worker shares.
The same limits cover the HTML sign-in page and the password re-entered to sign.
"""

import hashlib
from typing import Any

from rest_framework.request import Request
from rest_framework.settings import api_settings
from rest_framework.throttling import SimpleRateThrottle


def client_address(meta: Any) -> str:
    """The client's address: REMOTE_ADDR, or the entry of X-Forwarded-For added by the
    outermost of the trusted proxies (none are trusted unless configured)."""
    remote = str(meta.get("REMOTE_ADDR", ""))
    proxies = api_settings.NUM_PROXIES or 0
    forwarded = meta.get("HTTP_X_FORWARDED_FOR")
    if proxies <= 0 or not forwarded:
        return remote
    addresses = [a.strip() for a in str(forwarded).split(",")]
    return addresses[-min(proxies, len(addresses))]


def _digest(text: str) -> str:
    # surrogatepass: the limit is counted before the input is checked, and a username holding
    # a lone surrogate must reach that check (a 400), not fail here (a 500).
    return hashlib.sha256(text.encode("utf-8", "surrogatepass")).hexdigest()[:32]


class _Throttle(SimpleRateThrottle):
    def key(self, ident: str) -> str:
        return self.cache_format % {"scope": self.scope, "ident": _digest(ident)}


class LoginAccountThrottle(_Throttle):
    """Sign-in attempts per account, from any address."""

    scope = "login_account"

    def get_cache_key(self, request: Request, view: Any) -> str | None:
        return self.key(account_key(username_of(request)))


class LoginAddressThrottle(_Throttle):
    """Sign-in attempts per client address, whatever the account."""

    scope = "login_address"

    def get_cache_key(self, request: Request, view: Any) -> str | None:
        return self.key(client_address(request.META))


class PasswordReentryThrottle(_Throttle):
    """Passwords re-entered to sign a record or a log entry, per person."""

    scope = "password_reentry"

    def get_cache_key(self, request: Request, view: Any) -> str | None:
        if request.method != "POST" or not getattr(request.user, "pk", None):
            return None
        return self.key(f"user:{request.user.pk}")


LOGIN_THROTTLES = [LoginAccountThrottle, LoginAddressThrottle]


def account_key(username: str) -> str:
    """The account a username names as sign-in matches it (compliance.auth): without the
    spaces around it, case folded. " ana", "ANA" and "ana\t" count against one account."""
    return username.strip().casefold()[:150]


def username_of(request: Any) -> str:
    data = getattr(request, "data", None)
    if data is None:
        data = request.POST
    try:
        # Cut by account_key after the spaces go, as sign-in reads it: cut first, 150 spaces
        # and "ana" counted as "" (a fresh allowance) and signed in as ana.
        return str(data.get("username", ""))[:4096]
    except AttributeError:
        return ""


def login_allowed(request: Any) -> bool:
    """The sign-in limits for a plain Django request (the HTML page); counts the attempt."""
    return all(throttle().allow_request(request, None) for throttle in LOGIN_THROTTLES)

"""Deploy checks, login throttling, password hashing, CSP, CSRF and the API schema."""

import os
import secrets
import subprocess
import sys
from pathlib import Path

import pytest
from django.contrib.auth.hashers import make_password
from django.core.cache import cache
from django.urls import reverse
from rest_framework.test import APIClient

from tests.factories import PASSWORD, UserFactory

pytestmark = pytest.mark.django_db
ROOT = Path(__file__).resolve().parent.parent


def _manage(*args: str, **env: str) -> subprocess.CompletedProcess[str]:
    # the browser tests set DJANGO_ALLOW_ASYNC_UNSAFE in this process; a deploy never does
    drop = ("DATABASE_URL", "CELERY_BROKER_URL", "DJANGO_ALLOW_ASYNC_UNSAFE")
    clean = {k: v for k, v in os.environ.items() if k not in drop}
    return subprocess.run(
        [sys.executable, "manage.py", *args],
        cwd=ROOT,
        capture_output=True,
        text=True,
        env={**clean, **env},
        timeout=120,
    )


def test_check_deploy_is_clean_with_production_settings():
    result = _manage(
        "check",
        "--deploy",
        "--fail-level",
        "WARNING",
        DJANGO_DEBUG="false",
        DJANGO_SECRET_KEY=secrets.token_urlsafe(64),
        PARAPET_SIGNING_PASSPHRASE=secrets.token_urlsafe(32),
        DJANGO_ALLOWED_HOSTS="parapet.example",
    )
    assert result.returncode == 0, result.stdout + result.stderr
    assert "no issues" in result.stdout


def test_without_debug_the_server_refuses_to_start_on_the_public_demo_key():
    """Before, no DJANGO_SECRET_KEY meant the repository's public key, which was also the
    passphrase of every organisation's signing key; and DEBUG was on unless turned off."""
    no_key = _manage("check", DJANGO_DEBUG="", DJANGO_SECRET_KEY="", PARAPET_SIGNING_PASSPHRASE="x")
    assert no_key.returncode == 1
    assert "DJANGO_SECRET_KEY is required when DJANGO_DEBUG is off" in no_key.stderr
    no_passphrase = _manage(
        "check",
        DJANGO_DEBUG="false",
        DJANGO_SECRET_KEY=secrets.token_urlsafe(64),
        PARAPET_SIGNING_PASSPHRASE="",
    )
    assert no_passphrase.returncode == 1
    assert "PARAPET_SIGNING_PASSPHRASE is required" in no_passphrase.stderr


def test_the_openapi_schema_generates_without_warnings():
    result = _manage("spectacular", "--validate", "--fail-on-warn", "--file", os.devnull)
    assert result.returncode == 0, result.stderr


def test_passwords_are_hashed_with_argon2(settings):
    settings.PASSWORD_HASHERS = [
        "django.contrib.auth.hashers.Argon2PasswordHasher",
        "django.contrib.auth.hashers.PBKDF2PasswordHasher",
    ]
    assert make_password("a long pass phrase").startswith("argon2$argon2id$")


def test_production_settings_hash_with_argon2_first():
    from django.conf import settings

    # the test run swaps in a fast hasher; the project's own settings module names Argon2 first
    text = (ROOT / "compliance" / "settings.py").read_text()
    assert text.index("Argon2PasswordHasher") < text.index("PBKDF2PasswordHasher")
    assert settings.AUTH_USER_MODEL == "compliance.User"


def test_login_is_throttled():
    cache.clear()
    user = UserFactory()
    client = APIClient()
    codes = [
        client.post(
            reverse("token"), {"username": user.username, "password": "wrong"}, format="json"
        ).status_code
        for _ in range(21)
    ]
    assert codes[:20] == [400] * 20 and codes[20] == 429
    cache.clear()
    assert (
        client.post(
            reverse("token"), {"username": user.username, "password": PASSWORD}, format="json"
        ).status_code
        == 200
    )


def test_responses_carry_a_content_security_policy(client):
    response = client.get(reverse("schema"))
    policy = response.headers["Content-Security-Policy"]
    assert "default-src 'self'" in policy and "frame-ancestors 'none'" in policy
    assert "script-src 'self'" in policy and "unsafe-eval" not in policy
    assert response.headers["X-Frame-Options"] == "DENY"


def test_session_api_requires_csrf():
    cache.clear()
    user = UserFactory(role="supervisor")
    client = APIClient(enforce_csrf_checks=True)
    response = client.post(
        reverse("login"), {"username": user.username, "password": PASSWORD}, format="json"
    )
    assert response.status_code == 200
    without = client.post(reverse("logout"))
    assert without.status_code == 403 and "CSRF" in without.json()["detail"]
    token = client.cookies.get("csrftoken")
    page = client.get("/")  # the app shell sets the CSRF cookie
    token = client.cookies.get("csrftoken") or token
    assert token is not None, page.status_code
    with_token = client.post(reverse("logout"), HTTP_X_CSRFTOKEN=token.value)
    assert with_token.status_code == 204


def test_oversized_json_is_refused(job, operator, settings):
    """Past the body limit (16 MB, docs/limits.md; it was Django's 5 MB, answered as an HTML
    page, which a heavy 200-record batch could pass), unread; tests/api/test_body_limits.py
    has the rest."""
    from tests.conftest import client_for

    limit = settings.PARAPET_MAX_BODY_BYTES
    body = '{"records": ["' + "x" * (limit - 16) + '"]}'
    assert len(body) == limit + 1
    response = client_for(operator).post(reverse("sync"), body, content_type="application/json")
    assert response.status_code == 413
    assert response.json() == {
        "detail": f"A request body is at most 16 MB ({limit} bytes); this one is {limit + 1} bytes."
    }


@pytest.mark.django_db
def test_a_missing_session_is_marked_by_a_code_the_phone_tests():
    """The phone signs out on this code alone; other 403s (a role, a wrong password) carry none."""
    anonymous = APIClient()
    for response in (
        anonymous.get(reverse("me")),
        anonymous.post(reverse("sync"), {"records": []}, format="json"),
    ):
        assert response.status_code == 403
        assert response.json()["code"] == "not_authenticated"

    auditor = APIClient()
    auditor.force_authenticate(UserFactory(role="auditor"))
    refused = auditor.post(reverse("sync"), {"records": []}, format="json")
    assert refused.status_code == 403
    assert "code" not in refused.json()


def test_changing_x_forwarded_for_does_not_reset_the_account_limit():
    """Before, the limit was kept per address and username, the address read from whatever
    X-Forwarded-For the client sent: a new header was a fresh allowance."""
    cache.clear()
    user = UserFactory()
    client = APIClient()
    codes = [
        client.post(
            reverse("token"),
            {"username": user.username, "password": "wrong"},
            format="json",
            HTTP_X_FORWARDED_FOR=f"203.0.113.{n}",
        ).status_code
        for n in range(21)
    ]
    assert codes[:20] == [400] * 20 and codes[20] == 429


def test_one_address_trying_many_accounts_is_limited():
    cache.clear()
    client = APIClient()
    codes = [
        client.post(
            reverse("token"), {"username": f"nobody{n}", "password": "wrong"}, format="json"
        ).status_code
        for n in range(61)
    ]
    assert codes[:60] == [400] * 60 and codes[60] == 429


def test_the_html_sign_in_page_is_limited_too(client):
    cache.clear()
    user = UserFactory()
    codes = [
        client.post(
            reverse("login-page"), {"username": user.username, "password": "wrong"}
        ).status_code
        for _ in range(21)
    ]
    assert codes[:20] == [200] * 20 and codes[20] == 429
    assert (
        "Too many attempts"
        in client.post(
            reverse("login-page"), {"username": user.username, "password": PASSWORD}
        ).content.decode()
    )


@pytest.mark.parametrize("typed", ["Tomas", "TOMAS", " tomas ", "tomas\t"])
def test_a_username_signs_in_as_a_phone_keyboard_types_it(typed):
    """A phone capitalises the first letter and may add a space: "Tomas" with the right
    password read "Wrong username or password."."""
    user = UserFactory(username="tomas")
    response = APIClient().post(
        reverse("login"), {"username": typed, "password": PASSWORD}, format="json"
    )
    assert response.status_code == 200, response.json()
    assert response.json()["username"] == user.username


def test_two_accounts_differing_only_in_case_sign_in_only_by_their_exact_names():
    UserFactory(username="ana")
    UserFactory(username="Ana")
    client = APIClient()
    for typed, expected in [("ana", 200), ("Ana", 200), ("ANA", 400)]:
        response = client.post(
            reverse("login"), {"username": typed, "password": PASSWORD}, format="json"
        )
        assert response.status_code == expected, typed
        if expected == 200:
            assert response.json()["username"] == typed
            client.post(reverse("logout"))


def test_a_wrong_password_still_fails_whatever_the_case():
    UserFactory(username="tomas")
    response = APIClient().post(
        reverse("login"), {"username": "Tomas", "password": "wrong"}, format="json"
    )
    assert response.status_code == 400
    assert response.json() == {"detail": "Wrong username or password."}


def test_spaces_and_case_around_a_username_do_not_reset_the_account_limit():
    """Sign-in matched " ana" and "ANA\\t" to ana while the limit counted each spelling apart:
    every spelling was a fresh allowance of guesses at ana's password."""
    cache.clear()
    UserFactory(username="ana")
    client = APIClient()
    spellings = ["ana", " ana", "ANA", "ana\t", "  Ana ", "aNa"]
    codes = [
        client.post(
            reverse("token"),
            {"username": spellings[n % len(spellings)], "password": "wrong"},
            format="json",
        ).status_code
        for n in range(21)
    ]
    assert codes[:20] == [400] * 20 and codes[20] == 429
    right = client.post(
        reverse("token"), {"username": " ANA ", "password": PASSWORD}, format="json"
    )
    assert right.status_code == 429


def test_a_name_the_database_alone_takes_for_another_does_not_sign_in(monkeypatch):
    """PostgreSQL's case-insensitive match upper-cases a dotless ı to I: "ıvy" matched ivy
    there while the limit counted it apart. Only a name that folds to the same text signs in."""
    from compliance.auth import AnyCaseUsernameBackend

    ivy = UserFactory(username="ivy")

    class Lookalike:
        def filter(self, **kwargs):
            return [ivy]

    class Users:
        """The user model as PostgreSQL answers the case-insensitive match for "ıvy"."""

        _default_manager = Lookalike()

        def set_password(self, password):
            pass

    monkeypatch.setattr("compliance.auth.get_user_model", lambda: Users)
    backend = AnyCaseUsernameBackend()
    assert backend.authenticate(None, username="ıvy", password=PASSWORD) is None
    assert backend.authenticate(None, username="IVY", password=PASSWORD) == ivy


def test_spaces_past_the_length_a_name_is_cut_to_do_not_reset_the_account_limit():
    """The limit cut a username to 150 characters before taking its spaces off, sign-in after:
    150 spaces then "ana" counted as "" (a fresh allowance) and signed in as ana."""
    cache.clear()
    UserFactory(username="ana")
    client = APIClient()
    for _ in range(20):
        client.post(reverse("token"), {"username": "ana", "password": "wrong"}, format="json")
    padded = " " * 150 + "ana"
    response = client.post(
        reverse("token"), {"username": padded, "password": PASSWORD}, format="json"
    )
    assert response.status_code == 429

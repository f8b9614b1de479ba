"""API tokens expire, are new at each sign-in, and die on sign-out and on a password change.

Before: one token per person for ever, the same one returned at every sign-in, untouched by
sign-out or a new password.
"""

import datetime as dt

import pytest
from django.urls import reverse
from django.utils import timezone
from rest_framework.authtoken.models import Token
from rest_framework.test import APIClient

from tests.factories import PASSWORD


def _token(user) -> str:
    response = APIClient().post(
        reverse("token"), {"username": user.username, "password": PASSWORD}, format="json"
    )
    assert response.status_code == 200, response.content
    return response.json()["token"]


def _me(key: str) -> int:
    client = APIClient()
    client.credentials(HTTP_AUTHORIZATION=f"Token {key}")
    return client.get(reverse("me")).status_code


def test_each_sign_in_gives_a_new_token_and_the_old_one_stops(job, supervisor):
    first = _token(supervisor)
    second = _token(supervisor)
    assert first != second
    assert _me(second) == 200
    assert _me(first) == 403


def test_a_token_expires(job, supervisor, settings):
    settings.PARAPET_TOKEN_HOURS = 12
    key = _token(supervisor)
    Token.objects.filter(key=key).update(created=timezone.now() - dt.timedelta(hours=13))
    client = APIClient()
    client.credentials(HTTP_AUTHORIZATION=f"Token {key}")
    response = client.get(reverse("me"))
    assert response.status_code == 403
    assert response.json()["detail"] == "The token has expired; sign in again."
    assert not Token.objects.filter(key=key).exists()


def test_signing_out_revokes_the_token(job, supervisor):
    key = _token(supervisor)
    client = APIClient()
    client.credentials(HTTP_AUTHORIZATION=f"Token {key}")
    assert client.post(reverse("logout")).status_code == 204
    assert _me(key) == 403


def test_a_new_password_revokes_the_token(job, supervisor):
    key = _token(supervisor)
    supervisor.set_password("another-long-password-2026")
    supervisor.save()
    assert _me(key) == 403


@pytest.mark.parametrize("field", ["first_name", "email"])
def test_saving_other_fields_keeps_the_token(job, supervisor, field):
    key = _token(supervisor)
    setattr(supervisor, field, "x@example.org" if field == "email" else "Rhea")
    supervisor.save()
    assert _me(key) == 200

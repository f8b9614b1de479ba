"""Schema-driven fuzzing of the whole API, in-process over WSGI, as a signed-in operator.

Every operation of /api/schema/ gets its examples and a few generated cases (5 each by default;
PARAPET_FUZZ_EXAMPLES raises it): no answer may be a 5xx or show a stack trace.
"""

import os
from unittest import mock

import pytest
import schemathesis
from hypothesis import HealthCheck, settings
from rest_framework.authtoken.models import Token
from schemathesis.checks import not_a_server_error
from schemathesis.core.failures import FailureGroup

from compliance.wsgi import application
from tests.conftest import fill_all

TRACE_MARKERS = (b"Traceback (most recent call last)", b'File "/', b"django/core/handlers")


@pytest.fixture(autouse=True)
def _keep_the_test_connection():
    """Like Django's test client: a request must not close the test's database connection.

    Outside tests Django closes connections at the end of each request (CONN_MAX_AGE=0); here
    that would end the test transaction on PostgreSQL (SQLite's in-memory test database never
    closes, which is why this showed only in the PostgreSQL run).
    """
    from django.core.signals import request_finished, request_started
    from django.db import close_old_connections

    request_started.disconnect(close_old_connections)
    request_finished.disconnect(close_old_connections)
    yield
    request_started.connect(close_old_connections)
    request_finished.connect(close_old_connections)


@pytest.fixture
def token(job, simple_checklists, operator):
    """An operator's token, with a small rig in the database for the generated calls to hit."""
    fill_all(job, simple_checklists, operator)
    return Token.objects.create(user=operator).key


def no_stack_trace(ctx, response, case):
    body = response.content or b""
    for marker in TRACE_MARKERS:
        if marker in body:
            raise AssertionError(f"The answer shows a stack trace ({marker.decode()!r}).")


schema = schemathesis.openapi.from_wsgi("/api/schema/", application)
schema.config.phases.update(phases=["examples", "fuzzing"])


@pytest.mark.django_db
@schema.parametrize()
@settings(
    max_examples=int(os.environ.get("PARAPET_FUZZ_EXAMPLES", "5")),
    deadline=None,
    derandomize=True,
    suppress_health_check=list(HealthCheck),
)
def test_no_server_error_and_no_stack_trace(case, token):
    case.call_and_validate(
        headers={"Authorization": f"Token {token}"},
        checks=[not_a_server_error, no_stack_trace],
    )


@pytest.mark.django_db
def test_the_checks_catch_a_server_error_and_a_stack_trace(token, settings):
    """The harness itself: a view that crashes fails both checks."""
    case = schema["/api/v1/me/"]["GET"].Case()
    headers = {"Authorization": f"Token {token}"}
    crash = mock.patch("compliance.api.views.s.UserSerializer", side_effect=RuntimeError("boom"))
    with crash, pytest.raises(FailureGroup) as caught:
        case.call_and_validate(headers=headers, checks=[not_a_server_error])
    assert "Server error" in str(caught.value.exceptions)
    settings.DEBUG = True  # Django's technical 500 page shows the traceback
    settings.DEBUG_PROPAGATE_EXCEPTIONS = False
    with crash, pytest.raises(FailureGroup) as caught:
        case.call_and_validate(headers=headers, checks=[no_stack_trace])
    assert "stack trace" in str(caught.value.exceptions)

"""Schema-driven fuzzing of the whole API, in-process over WSGI, signed in with a token.

Every operation of /api/schema/ gets its examples and a few generated cases (5 each by default;
PARAPET_FUZZ_EXAMPLES raises it) as each role it serves (hostile.roles_for: the operator on all,
a supervisor and an owner's property manager where they act): no answer may be a 5xx or show a
stack trace. Cases are counted in conftest.py's tally.
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
from tests.factories import OrganisationFactory, SiteFactory, UserFactory
from tests.fuzz.conftest import TRACE_MARKERS, tally
from tests.fuzz.hostile import ROLES


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


@pytest.fixture(params=ROLES)
def role(request):
    return request.param


@pytest.fixture
def token(job, simple_checklists, operator, role):
    """A token for the role, with a small rig in the database for the generated calls to hit."""
    fill_all(job, simple_checklists, operator)
    users = {"operator": operator, "supervisor": job.supervisor}
    if role == "property_manager":
        owner = OrganisationFactory(kind="owner")
        users[role] = UserFactory(organisation=owner, role=role)
        SiteFactory(organisation=owner)
    return Token.objects.create(user=users[role]).key


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
    response = case.call(headers={"Authorization": f"Token {token}"})
    label = f"{case.method.upper()} {case.path}"
    tally("schemathesis", label, response.status_code, response.content)
    case.validate_response(response, checks=[not_a_server_error, no_stack_trace])


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

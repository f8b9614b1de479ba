"""Signing out on a shared phone: the next person gets an empty sign-in form, not the last
person's name and not a "your sign-in has ended" notice meant for a lapsed session."""

import pytest

from tests.browser.conftest import PASSWORD, TYPE_MS, sign_in_as

pytestmark = pytest.mark.browser


def test_a_request_answered_after_signing_out_does_not_turn_it_into_a_lapsed_session(
    live_server, demo, page
):
    """Found in CI: the phone's background fetch of the day was still running when the
    supervisor signed out. Its answers ("not signed in") arrived before the sign-out finished,
    the phone took them for a lapsed session, showed "Sign in again" and filled in the last
    person's username, so the next person's typed name was appended to it and refused."""
    base = live_server.url
    sign_in_as(page, base, "rhea")
    answered_403: list[str] = []
    page.on(
        "response",
        lambda r: answered_403.append(r.url) if r.status == 403 and "/api/v1/" in r.url else None,
    )

    def slow_sign_out(route):
        # The server ends the session; before the phone hears back, a background fetch runs
        # (the phone came back online) and is refused.
        answer = route.fetch()
        page.evaluate("() => window.dispatchEvent(new Event('online'))")
        for _ in range(50):
            if answered_403:
                break
            page.wait_for_timeout(100)
        page.wait_for_timeout(300)
        route.fulfill(response=answer)

    page.route("**/api/v1/auth/logout/", slow_sign_out)
    page.click("[data-testid=sign-out]")
    page.wait_for_selector("input[name=username]")
    assert answered_403, "the background fetch did not run while signing out"
    page.wait_for_timeout(300)
    assert page.input_value("input[name=username]") == ""
    assert page.query_selector("[data-testid=session-ended]") is None

    page.type("input[name=username]", "tomas", delay=TYPE_MS)
    page.type("input[name=password]", PASSWORD, delay=TYPE_MS)
    page.click("button[type=submit]")
    page.wait_for_selector("[data-testid=jobs] a")
    assert page.query_selector("[data-testid=session-ended]") is None


def test_before_anyone_signs_in_the_strip_claims_no_sync(live_server, demo, page):
    """A fresh phone at the sign-in screen has sent nothing and read nothing from the server:
    the strip showed 'Last sync' with the time of an attempt the server refused."""
    page.goto(live_server.url + "/")
    page.wait_for_selector("input[name=username]")
    page.wait_for_selector("[data-testid=strip][data-syncing=no]")
    page.wait_for_timeout(1500)  # the first attempts have run and been refused
    assert page.inner_text("[data-testid=strip-last-sync]") == "Last sync never"
    assert page.get_attribute("[data-testid=strip]", "data-synced") == "no"
    sign_in_as(page, live_server.url, "tomas")
    assert page.inner_text("[data-testid=strip-last-sync]") != "Last sync never"

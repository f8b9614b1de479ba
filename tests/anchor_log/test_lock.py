"""Locks on PostgreSQL, on real connections: two anchor-log writers at one site at once, and a
job locked without its building."""

import contextlib
import datetime as dt
import threading
from collections.abc import Callable
from typing import Any

import pytest
from django.db import connection, transaction
from django.utils import timezone

from checklists.services import record_sheet
from compliance.anchor_log import services as anchor_log
from compliance.anchor_log.services import record_entry, verify_log_chain
from compliance.models import AnchorLogEntry, Job, JobState, SiteGrant
from compliance.records.signing import create_self_signed
from tests.conftest import PASSING, fill_all
from tests.factories import (
    PASSWORD,
    JobFactory,
    OrganisationFactory,
    SiteFactory,
    UserFactory,
    make_drop,
)

pytestmark = [pytest.mark.postgres, pytest.mark.django_db(transaction=True)]
TODAY = timezone.localdate
MEETING_S = 3.0


@pytest.fixture
def meet_before_sealing(monkeypatch) -> Callable[[], threading.Event]:
    """Arm, just before the writers start: each writer, once it has read its place in the
    chain, waits there until the other has too (or for MEETING_S). Two writers that both read
    the chain before either appends always collide, so the race is certain, not a matter of
    timing. A writer kept waiting on a lock never arrives; the first goes on alone after
    MEETING_S. The event returned is set when the first writer has read its place, holding
    every lock it takes before sealing."""
    seal_of = anchor_log.seal_of

    def arm() -> threading.Event:
        meeting = threading.Barrier(2)
        arrived = threading.Event()

        def seal_after_meeting(document: dict[str, Any]) -> str:
            arrived.set()
            with contextlib.suppress(threading.BrokenBarrierError):
                meeting.wait(timeout=MEETING_S)
            return seal_of(document)

        monkeypatch.setattr(anchor_log, "seal_of", seal_after_meeting)
        return arrived

    return arm


def at_once(*calls: Callable[[], Any], timeout_s: float = 60) -> list[Any]:
    """Run each call in its own thread, so on its own database connection; raise any error."""
    start = threading.Barrier(len(calls))
    results: list[Any] = [None] * len(calls)

    def run(i: int, call: Callable[[], Any]) -> None:
        try:
            start.wait(timeout=timeout_s)
            results[i] = call()
        except Exception as exc:  # reported below
            results[i] = exc
        finally:
            connection.close()

    threads = [threading.Thread(target=run, args=(i, c)) for i, c in enumerate(calls)]
    for thread in threads:
        thread.start()
    for thread in threads:
        thread.join(timeout_s)
        assert not thread.is_alive(), "a writer hung: lock wait or deadlock"
    for result in results:
        if isinstance(result, Exception):
            raise result
    return results


@pytest.fixture
def tower(simple_checklists):
    owner = OrganisationFactory(name="Harbour View owners", kind="owner")
    create_self_signed(organisation=owner)
    managers = [UserFactory(organisation=owner, role="property_manager") for _ in range(2)]
    site = SiteFactory(organisation=owner)
    crew = OrganisationFactory(name="Harbour facade crew", kind="contractor")
    SiteGrant.objects.create(
        site=site,
        contractor=crew,
        granted_by=managers[0],
        starts_on=TODAY() - dt.timedelta(days=1),
        ends_on=TODAY() + dt.timedelta(days=30),
    )
    supervisor = UserFactory(organisation=crew, role="supervisor")
    operator = UserFactory(organisation=crew, role="operator")
    job = JobFactory(site=site, organisation=crew, supervisor=supervisor)
    drop = make_drop(job)
    return {
        "site": site,
        "managers": managers,
        "operator": operator,
        "job": job,
        "drop": drop,
        "checklists": simple_checklists,
    }


def signer(t, manager, anchor, kind: str, details: str) -> Callable[[], AnchorLogEntry]:
    return lambda: record_entry(
        anchor=anchor,
        by=manager,
        password=PASSWORD,
        kind=kind,
        details=details,
        performed_on=TODAY(),
        result="pass",
    )


def test_two_entries_at_one_site_at_once_take_sequences_one_and_two(tower, meet_before_sealing):
    t = tower
    meet_before_sealing()
    first, second = at_once(
        signer(t, t["managers"][0], t["drop"].anchor, "periodic_inspection", "Yearly inspection."),
        signer(t, t["managers"][1], t["drop"].safety_anchor, "load_test", "Proof load held."),
    )
    entries = list(AnchorLogEntry.objects.filter(site=t["site"]).order_by("sequence"))
    assert [e.sequence for e in entries] == [1, 2]
    assert {e.pk for e in entries} == {first.pk, second.pk}
    assert entries[0].previous_seal == "" and entries[1].previous_seal == entries[0].seal
    assert verify_log_chain(t["site"].pk) == []


def test_a_removal_and_a_crews_pre_use_check_at_once_both_land_and_the_job_is_held(
    tower, meet_before_sealing
):
    """The removal locks the jobs using the anchor, then the chain; the crew's sheet locks its
    job, then the chain. One order for both, so neither waits on the other for ever: the crew
    sends its sheet once the removal holds what it locks before sealing."""
    t = tower
    fill_all(t["job"], t["checklists"], t["operator"])
    before = AnchorLogEntry.objects.filter(site=t["site"]).count()
    assert before == 2  # the crew's pre-use checks of its two anchors
    anchor = t["drop"].anchor
    removal_sealing = meet_before_sealing()

    def crew_checks_again() -> Any:
        assert removal_sealing.wait(timeout=30), "the removal never reached its seal"
        job = Job.objects.select_related("site__profile").get(pk=t["job"].pk)
        return record_sheet(
            job=job,
            version=t["checklists"]["anchor"],
            by=t["operator"],
            anchor=anchor,
            entries=PASSING["anchor"],
        )

    at_once(
        signer(t, t["managers"][0], anchor, "removed_from_service", "Base cracked."),
        crew_checks_again,
    )
    entries = list(AnchorLogEntry.objects.filter(site=t["site"]).order_by("sequence"))
    assert [e.sequence for e in entries] == [1, 2, 3, 4]
    assert {e.kind for e in entries[2:]} == {"removed_from_service", "pre_use_check"}
    assert verify_log_chain(t["site"].pk) == []
    assert Job.objects.get(pk=t["job"].pk).state == JobState.HELD


def test_locking_a_job_leaves_its_building_and_profile_free(simple_checklists):
    """A job is locked while its state moves; its site and jurisdiction profile are only read.
    Locking them too made every crew under one profile, at any building, wait for each other."""
    from compliance.jobs.holds import locked as _locked

    first, second = JobFactory(), JobFactory()
    assert first.site_id != second.site_id and first.site.profile_id == second.site.profile_id
    holding, done = threading.Event(), threading.Event()

    def hold_first() -> None:
        with transaction.atomic():
            _locked(first)
            holding.set()
            done.wait(timeout=30)

    def lock_second() -> int:
        assert holding.wait(timeout=30)
        try:
            with transaction.atomic():
                with connection.cursor() as cursor:
                    cursor.execute("SET LOCAL lock_timeout = '2s'")
                return _locked(second).pk
        finally:
            done.set()

    assert at_once(hold_first, lock_second)[1] == second.pk

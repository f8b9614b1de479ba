"""Every path into and out of hold, blocked starts, and the append-only transition log."""

import datetime as dt

import pytest
from django.urls import reverse
from django.utils import timezone

from checklists.services import record_sheet
from compliance.append_only import AppendOnlyViolation
from compliance.errors import InvalidTransition, JobBlocked
from compliance.jobs.selectors import job_requirements
from compliance.jobs.services import close_job, pause_job, start_job
from compliance.models import Hold, JobState, JobTransition
from tests.conftest import PASSING, client_for, fill_all
from tests.factories import (
    AnchorFactory,
    CertificationFactory,
    JobFactory,
    UserFactory,
    make_drop,
)

pytestmark = pytest.mark.django_db


def _hose_requirement(job):
    return next(r for r in job_requirements(job) if r.subject.kind == "hose")


def _fail_hose(job, versions, by):
    req = _hose_requirement(job)
    entries = {**PASSING["hose"], "valve_pressure": {"value": 3000, "unit": "kPa"}}
    sheet, _ = record_sheet(
        job=job, version=versions["hose"], by=by, entries=entries, equipment=req.subject.equipment
    )
    return sheet


def _pass_hose(job, versions, by):
    req = _hose_requirement(job)
    sheet, _ = record_sheet(
        job=job,
        version=versions["hose"],
        by=by,
        entries=PASSING["hose"],
        equipment=req.subject.equipment,
    )
    return sheet


def test_job_with_no_sheets_cannot_start(job, simple_checklists, operator):
    with pytest.raises(JobBlocked) as caught:
        start_job(job=job, by=operator)
    codes = [r.code for r in caught.value.reasons]
    # one requirement per anchor (2), robot, tether, safety line, hose, site: all missing
    assert codes.count("sheet_missing") == 7
    # "Weather for site has not been done." read as a slip; a subject is named as in a sentence.
    assert any(r.message.endswith(" for the site has not been done.") for r in caught.value.reasons)
    job.refresh_from_db()
    assert job.state == JobState.PLANNED


def test_all_passing_sheets_clear_then_start(job, simple_checklists, operator):
    fill_all(job, simple_checklists, operator)
    job.refresh_from_db()
    assert job.state == JobState.CLEARED
    start_job(job=job, by=operator)
    job.refresh_from_db()
    assert job.state == JobState.WORKING
    states = list(job.transitions.values_list("from_state", "to_state"))
    assert states[-2:] == [("planned", "cleared"), ("cleared", "working")]


def test_failed_blocking_item_before_start_holds_the_job(job, simple_checklists, operator):
    fill_all(job, simple_checklists, operator)
    _fail_hose(job, simple_checklists, operator)
    job.refresh_from_db()
    assert job.state == JobState.HELD
    with pytest.raises(JobBlocked) as caught:
        start_job(job=job, by=operator)
    assert {"open_hold", "sheet_failed"} <= {r.code for r in caught.value.reasons}


def test_failed_blocking_item_while_working_holds_at_once(job, simple_checklists, operator):
    fill_all(job, simple_checklists, operator)
    start_job(job=job, by=operator)
    sheet = _fail_hose(job, simple_checklists, operator)
    job.refresh_from_db()
    assert job.state == JobState.HELD
    hold = Hold.objects.get(job=job)
    assert hold.sheet == sheet and hold.item_key == "valve_pressure"
    assert "above the maximum of 2500 kPa" in hold.reason
    last = job.transitions.last()
    assert (last.from_state, last.to_state) == ("working", "held")
    assert last.by == operator and "valve pressure" in last.reason


def test_non_blocking_failure_does_not_hold(job, simple_checklists, operator):
    fill_all(job, simple_checklists, operator, overrides={"robot": {"cups": {"value": "fail"}}})
    job.refresh_from_db()
    assert job.state == JobState.CLEARED
    assert not Hold.objects.filter(job=job).exists()


def test_only_a_new_passing_sheet_clears_the_hold(job, simple_checklists, operator):
    fill_all(job, simple_checklists, operator)
    start_job(job=job, by=operator)
    _fail_hose(job, simple_checklists, operator)
    # a passing sheet for some other requirement does not clear it
    site_req = next(r for r in job_requirements(job) if r.subject.kind == "site")
    record_sheet(job=job, version=simple_checklists["site"], by=operator, entries=PASSING["site"])
    job.refresh_from_db()
    assert job.state == JobState.HELD and site_req
    # pausing or starting a held job is refused
    with pytest.raises(InvalidTransition):
        pause_job(job=job, by=operator)
    with pytest.raises(JobBlocked):
        start_job(job=job, by=operator)
    repair = _pass_hose(job, simple_checklists, operator)
    job.refresh_from_db()
    assert job.state == JobState.CLEARED
    hold = Hold.objects.get(job=job)
    assert hold.clearance.sheet == repair
    start_job(job=job, by=operator)
    job.refresh_from_db()
    assert job.state == JobState.WORKING


def test_hold_cleared_goes_to_planned_when_other_checks_still_missing(
    job, simple_checklists, operator
):
    _fail_hose(job, simple_checklists, operator)
    job.refresh_from_db()
    assert job.state == JobState.HELD
    _pass_hose(job, simple_checklists, operator)
    job.refresh_from_db()
    assert job.state == JobState.PLANNED


def test_two_failures_need_both_requirements_to_pass(job, simple_checklists, operator):
    fill_all(job, simple_checklists, operator)
    _fail_hose(job, simple_checklists, operator)
    record_sheet(
        job=job,
        version=simple_checklists["site"],
        by=operator,
        entries={**PASSING["site"], "zone_closed": {"value": "fail"}},
    )
    assert Hold.objects.filter(job=job).count() == 2
    _pass_hose(job, simple_checklists, operator)
    job.refresh_from_db()
    assert job.state == JobState.HELD
    record_sheet(job=job, version=simple_checklists["site"], by=operator, entries=PASSING["site"])
    job.refresh_from_db()
    assert job.state == JobState.CLEARED


def test_expired_certification_blocks_start(simple_checklists):
    job = JobFactory()
    drop = make_drop(job, certified=False)
    operator = UserFactory(organisation=job.organisation)
    today = timezone.localdate()
    CertificationFactory(
        anchor=drop.anchor,
        certified_on=today - dt.timedelta(days=400),
        valid_until=today - dt.timedelta(days=1),
    )
    CertificationFactory(anchor=drop.safety_anchor)
    fill_all(job, simple_checklists, operator)
    with pytest.raises(JobBlocked) as caught:
        start_job(job=job, by=operator)
    reasons = caught.value.reasons
    assert [r.code for r in reasons] == ["anchor_certification_expired"]
    assert f"Anchor {drop.anchor.label}" in reasons[0].message
    # a new certification (never an edit of the old one) lets the job start
    CertificationFactory(anchor=drop.anchor, certified_on=today)
    start_job(job=job, by=operator)
    job.refresh_from_db()
    assert job.state == JobState.WORKING


def test_uncertified_and_low_capacity_anchors_block(job, simple_checklists, operator):
    drop = job.drops.first()
    weak = AnchorFactory(site=job.site)
    CertificationFactory(anchor=weak, rated_capacity_kn=8.0)
    drop.safety_anchor = weak
    drop.save()
    bare = AnchorFactory(site=job.site)
    drop.anchor = bare
    drop.save()
    fill_all(job, simple_checklists, operator)
    with pytest.raises(JobBlocked) as caught:
        start_job(job=job, by=operator)
    assert {r.code for r in caught.value.reasons} == {"anchor_uncertified", "anchor_capacity_low"}


def test_pause_and_close(job, simple_checklists, operator):
    fill_all(job, simple_checklists, operator)
    start_job(job=job, by=operator)
    pause_job(job=job, by=operator, reason="Lunch")
    job.refresh_from_db()
    assert job.state == JobState.CLEARED
    close_job(job=job, by=operator)
    job.refresh_from_db()
    assert job.state == JobState.CLOSED
    with pytest.raises(InvalidTransition):
        start_job(job=job, by=operator)


def test_closing_a_held_job_needs_a_reason(job, simple_checklists, operator):
    # Held while working: the crew ends the day with the reason (a job held before any work
    # is closed by a supervisor, tests/jobs/test_roles.py).
    fill_all(job, simple_checklists, operator)
    start_job(job=job, by=operator)
    _fail_hose(job, simple_checklists, operator)
    job.refresh_from_db()
    assert job.state == JobState.HELD
    with pytest.raises(InvalidTransition):
        close_job(job=job, by=operator)
    close_job(job=job, by=operator, reason="Hose burst; replacement tomorrow.")
    job.refresh_from_db()
    assert job.state == JobState.CLOSED


def test_transition_log_is_append_only(job, simple_checklists, operator):
    fill_all(job, simple_checklists, operator)
    row = JobTransition.objects.filter(job=job).first()
    row.reason = "rewritten"
    with pytest.raises(AppendOnlyViolation):
        row.save()
    with pytest.raises(AppendOnlyViolation):
        row.delete()
    with pytest.raises(AppendOnlyViolation):
        JobTransition.objects.filter(job=job).update(reason="x")
    with pytest.raises(AppendOnlyViolation):
        JobTransition.objects.filter(job=job).delete()


def test_an_overdue_equipment_inspection_names_the_equipment(job, simple_checklists, operator):
    fill_all(job, simple_checklists, operator)
    hose = job.drops.first().hose
    hose.next_inspection_due = job.date - dt.timedelta(days=1)
    hose.save()
    with pytest.raises(JobBlocked) as caught:
        start_job(job=job, by=operator)
    (reason,) = caught.value.reasons
    assert reason.code == "equipment_inspection_overdue"
    assert reason.requirement == f"equipment:{hose.pk}"
    assert reason.message.endswith(f"{hose.next_inspection_due:%Y-%m-%d}.")


def _hose_sheet_made(job, versions, by, entries, minutes_ago):
    """A hose check filled ``minutes_ago`` on a phone whose clock was right when it sent it."""
    req = _hose_requirement(job)
    made = timezone.now() - dt.timedelta(minutes=minutes_ago)
    sheet, _ = record_sheet(
        job=job,
        version=versions["hose"],
        by=by,
        entries=entries,
        equipment=req.subject.equipment,
        device_time=made,
        phone_clock_offset_s=0,
    )
    return sheet


@pytest.fixture
def job_of_the_last_hours(job):
    """The job's day is the day two hours ago (the same as today but just after midnight)."""
    from compliance import clock

    day = timezone.localdate(timezone.now() - dt.timedelta(hours=2))
    type(job).objects.filter(pk=job.pk).update(date=day)
    job.refresh_from_db()
    with clock.replaying(day):
        yield job


def test_a_pass_made_before_the_failure_it_arrives_after_clears_nothing(
    job_of_the_last_hours, simple_checklists, operator
):
    """A second phone, offline since 05:02, sent its passing hose check after the 07:02 one
    failed: it cleared the hold and the job was cleared, the older check standing for the
    newer."""
    job = job_of_the_last_hours
    fill_all(job, simple_checklists, operator)
    failing = {**PASSING["hose"], "valve_pressure": {"value": 3000, "unit": "kPa"}}
    _hose_sheet_made(job, simple_checklists, operator, failing, minutes_ago=0)
    _hose_sheet_made(job, simple_checklists, operator, PASSING["hose"], minutes_ago=120)

    job.refresh_from_db()
    assert job.state == JobState.HELD
    assert Hold.objects.filter(job=job, clearance__isnull=True).count() == 1
    assert not _hose_requirement(job).satisfied

    newer = _hose_sheet_made(job, simple_checklists, operator, PASSING["hose"], minutes_ago=0)

    job.refresh_from_db()
    assert job.state == JobState.CLEARED
    assert Hold.objects.get(job=job).clearance.sheet == newer


def test_a_recertification_below_the_minimum_takes_a_cleared_job_back_to_planned(
    job, simple_checklists, operator, supervisor
):
    """The job said "cleared" beside the blocker its anchor's new rating raised (its start was
    refused); the new certificate reads its readiness again, as the log book's changes do."""
    fill_all(job, simple_checklists, operator)
    job.refresh_from_db()
    assert job.state == JobState.CLEARED
    anchor = job.drops.get().anchor
    certificate = {
        "certifier": "Pat Engineer",
        "rated_capacity_kn": 8.0,
        "certified_on": job.date.isoformat(),
        "valid_until": (job.date + dt.timedelta(days=365)).isoformat(),
    }
    client = client_for(supervisor)
    url = reverse("anchor-certifications", args=[anchor.pk])
    assert client.post(url, certificate, format="json").status_code == 201
    detail = client.get(reverse("job-detail", args=[job.pk])).json()
    assert detail["state"] == "planned"
    assert detail["blockers"] == [
        {
            "code": "anchor_capacity_low",
            "message": f"Anchor {anchor.label} is rated 8 kN, below the profile's minimum of"
            " 12 kN.",
            "requirement": f"anchor:{anchor.pk}",
        }
    ]
    transition = JobTransition.objects.filter(job=job).latest("id")
    assert (transition.from_state, transition.to_state, transition.by_id) == (
        "cleared",
        "planned",
        supervisor.pk,
    )
    assert transition.reason == "A required check is no longer satisfied."


def test_a_failure_claiming_to_be_older_than_the_morning_s_pass_still_stops_work(
    job_of_the_last_hours, simple_checklists, operator
):
    """A failure sent while the job worked, stamped by its phone as made before the morning's
    passing check, was opened and cleared at once by that pass: work never stopped and the day
    signed safe. The phone's time is its claim: a failure that arrives stops work, and only a
    check made (and received) after it clears it."""
    job = job_of_the_last_hours
    fill_all(job, simple_checklists, operator)
    start_job(job=job, by=operator)
    failing = {**PASSING["hose"], "valve_pressure": {"value": 3000, "unit": "kPa"}}
    _hose_sheet_made(job, simple_checklists, operator, failing, minutes_ago=120)

    job.refresh_from_db()
    assert job.state == JobState.HELD
    assert Hold.objects.filter(job=job, clearance__isnull=True).count() == 1

    _hose_sheet_made(job, simple_checklists, operator, PASSING["hose"], minutes_ago=0)

    job.refresh_from_db()
    assert job.state == JobState.CLEARED

"""A check is judged on the register, the profile and the plan as they were: a figure it read
that reads otherwise since leaves its verdict behind, and the job is not ready until it is
checked again."""

import pytest
from django.urls import reverse

from compliance.jobs.selectors import job_blockers, job_requirements
from compliance.models import JobState
from tests.conftest import PASSING, client_for, fill_all

pytestmark = pytest.mark.django_db


def _hose(job):
    return job.drops.get().hose


def _patch(client, item, body):
    return client.patch(reverse("equipment-detail", args=[item.pk]), body, format="json")


def test_a_rating_lowered_after_the_check_leaves_the_check_behind(
    job, simple_checklists, operator, supervisor
):
    """A hose's rating lowered after its check passed at 900 kPa kept the job cleared, and it
    started: the check was judged against the old rating."""
    fill_all(job, simple_checklists, operator)
    job.refresh_from_db()
    assert job.state == JobState.CLEARED
    hose = _hose(job)
    was = hose.ratings["rating_kpa"]

    response = _patch(
        client_for(supervisor), hose, {"ratings": {**hose.ratings, "rating_kpa": 800.0}}
    )

    assert response.status_code == 200, response.json()
    job.refresh_from_db()
    assert job.state == JobState.PLANNED
    key = f"hose-check@equipment:{hose.pk}"
    assert not next(r for r in job_requirements(job) if r.key == key).satisfied
    assert [(r.code, r.message) for r in job_blockers(job) if r.requirement == key] == [
        (
            "sheet_judged_on_changed",
            f"Hose Check for hose {hose.label} was judged with its pressure rating at"
            f" {was:g} kPa; it now reads 800 kPa: check it again.",
        )
    ]
    response = client_for(operator).post(reverse("job-start", args=[job.pk]))
    assert response.status_code == 409


def test_a_change_the_check_did_not_read_leaves_it_standing(
    job, simple_checklists, operator, supervisor
):
    fill_all(job, simple_checklists, operator)
    hose = _hose(job)
    client = client_for(supervisor)

    assert _patch(client, hose, {"serial": "H-NEW-SERIAL"}).status_code == 200
    assert (
        _patch(client, _hose(job), {"ratings": {**hose.ratings, "length_m": 190.0}}).status_code
        == 200
    )

    job.refresh_from_db()
    assert job.state == JobState.CLEARED
    assert all(r.satisfied for r in job_requirements(job))


def test_the_rating_put_back_lets_the_check_stand_again(
    job, simple_checklists, operator, supervisor
):
    fill_all(job, simple_checklists, operator)
    hose = _hose(job)
    client = client_for(supervisor)
    _patch(client, hose, {"ratings": {**hose.ratings, "rating_kpa": 800.0}})

    assert _patch(client, _hose(job), {"ratings": hose.ratings}).status_code == 200

    job.refresh_from_db()
    assert job.state == JobState.CLEARED


def test_a_profile_figure_changed_since_leaves_the_check_behind(job, simple_checklists, operator):
    """The site check read the profile's highest wind; a profile loaded since with a lower one
    judges 6.5 m/s otherwise."""
    fill_all(job, simple_checklists, operator)
    profile = job.site.profile
    profile.thresholds = {
        **profile.thresholds,
        "max_wind_ms": {**profile.thresholds["max_wind_ms"], "value": 6.0},
    }
    profile.save(update_fields=["thresholds"])

    reasons = [r for r in job_blockers(job) if r.code == "sheet_judged_on_changed"]
    assert [r.requirement for r in reasons] == ["site-check@site"]
    assert "the site's profile's max wind at" in reasons[0].message
    assert reasons[0].message.endswith("it now reads 6 m/s: check it again.")


def test_a_rating_lowered_while_the_robot_works_stops_work_until_checked_again(
    job, simple_checklists, operator, supervisor
):
    """Re-rated while the job was working, the hose's check stood on the old rating and work
    went on; now the job is held until a check made since passes."""
    from checklists.services import record_sheet
    from compliance.jobs.services import start_job
    from compliance.models import Hold

    fill_all(job, simple_checklists, operator)
    start_job(job=job, by=operator)
    hose = _hose(job)

    response = _patch(
        client_for(supervisor), hose, {"ratings": {**hose.ratings, "rating_kpa": 800.0}}
    )

    assert response.status_code == 200, response.json()
    job.refresh_from_db()
    assert job.state == JobState.HELD
    hold = Hold.objects.get(job=job)
    assert (hold.requirement, hold.item_key) == (f"hose-check@equipment:{hose.pk}", "judged_on")
    assert hold.reason.endswith("it now reads 800 kPa: check it again.")
    # Its sheet is the passing check it leaves behind: no failure was found then.
    (shown,) = client_for(operator).get(reverse("job-detail", args=[job.pk])).json()["holds"]
    assert shown["found_at"] is None
    assert job.transitions.last().reason == ("Stop work: the register changed under the job.")

    record_sheet(
        job=job,
        version=simple_checklists["hose"],
        by=operator,
        entries={**PASSING["hose"], "valve_pressure": {"value": 700, "unit": "kPa"}},
        equipment=_hose(job),
    )

    job.refresh_from_db()
    assert job.state == JobState.CLEARED
    assert Hold.objects.get(job=job).clearance is not None


def test_kit_taken_out_of_service_while_the_robot_works_stops_work_until_it_returns(
    job, simple_checklists, operator, supervisor
):
    """A safety line taken out of service ("sheath cut at 40 m") while the job was working left
    work going with no hold, and the day could be signed safe."""
    from compliance.jobs.services import start_job
    from compliance.models import Hold

    fill_all(job, simple_checklists, operator)
    start_job(job=job, by=operator)
    line = job.drops.get().safety_line
    client = client_for(supervisor)

    response = _patch(client, line, {"in_service": False, "reason": "Sheath cut at 40 m."})

    assert response.status_code == 200, response.json()
    job.refresh_from_db()
    assert job.state == JobState.HELD
    hold = Hold.objects.get(job=job, clearance__isnull=True)
    assert (hold.requirement, hold.item_key) == (
        f"equipment:{line.pk}",
        "equipment_out_of_service",
    )

    returned = _patch(client, line, {"in_service": True, "reason": "New line fitted."})
    assert returned.status_code == 200, returned.json()

    job.refresh_from_db()
    assert not Hold.objects.filter(job=job, clearance__isnull=True).exists()
    # The line's check was made before it came back: it is checked again before work resumes.
    assert job.state == JobState.PLANNED
    fill_all(job, simple_checklists, operator)
    job.refresh_from_db()
    assert job.state == JobState.CLEARED


def test_kit_returned_to_service_is_checked_again_before_work_resumes(
    job, simple_checklists, operator, supervisor
):
    """A line taken out of service ("sheath cut at 40 m") and flipped back in service with no
    word of why: the hold cleared and the job went straight back to cleared on the check made
    before the damage, and work restarted."""
    from compliance.jobs.services import start_job

    fill_all(job, simple_checklists, operator)
    start_job(job=job, by=operator)
    line = job.drops.get().safety_line
    client = client_for(supervisor)
    _patch(client, line, {"in_service": False, "reason": "Sheath cut at 40 m."})

    bare = _patch(client, line, {"in_service": True})
    assert bare.status_code == 400
    assert bare.json() == {
        "reason": [
            "Say why it is fit to return to service: what was repaired or replaced, and who"
            " inspected it."
        ]
    }
    line.refresh_from_db()
    assert line.in_service is False

    assert (
        _patch(client, line, {"in_service": True, "reason": "New line fitted."}).status_code == 200
    )

    job.refresh_from_db()
    assert job.state == JobState.PLANNED
    key = f"line-check@equipment:{line.pk}"
    assert [(r.code, r.message) for r in job_blockers(job) if r.requirement == key] == [
        (
            "sheet_before_return",
            f"Line Check for safety line {line.label} was filled before it was returned to"
            " service: check it again.",
        )
    ]
    assert client_for(operator).post(reverse("job-start", args=[job.pk])).status_code == 409


def test_an_anchor_returned_to_service_is_checked_again_before_work_resumes(
    job, simple_checklists, operator, supervisor
):
    import datetime as dt

    from compliance.anchor_log.services import record_entry
    from compliance.jobs.services import start_job
    from compliance.records.signing import create_self_signed
    from tests.factories import PASSWORD

    create_self_signed(organisation=job.organisation)
    fill_all(job, simple_checklists, operator)
    start_job(job=job, by=operator)
    anchor = job.drops.get().anchor
    today = dt.date.today()

    def sign(kind, details):
        record_entry(
            anchor=anchor,
            by=supervisor,
            password=PASSWORD,
            kind=kind,
            details=details,
            performed_on=today,
        )

    sign("removed_from_service", "Base cracked.")
    sign("returned_to_service", "New base fitted and proof loaded.")

    job.refresh_from_db()
    assert job.state == JobState.PLANNED
    key = f"anchor-check@anchor:{anchor.pk}"
    assert [r.code for r in job_blockers(job) if r.requirement == key] == ["sheet_before_return"]
    fill_all(job, simple_checklists, operator)
    job.refresh_from_db()
    assert job.state == JobState.CLEARED


def test_an_inspection_date_moved_past_while_the_robot_works_stops_work(
    job, simple_checklists, operator, supervisor
):
    import datetime as dt

    from compliance.jobs.services import start_job

    fill_all(job, simple_checklists, operator)
    start_job(job=job, by=operator)
    robot = job.drops.get().robot

    response = _patch(
        client_for(supervisor),
        robot,
        {"next_inspection_due": (job.date - dt.timedelta(days=1)).isoformat()},
    )

    assert response.status_code == 200, response.json()
    job.refresh_from_db()
    assert job.state == JobState.HELD
    assert [h.item_key for h in job.holds.all()] == ["equipment_inspection_overdue"]


def _publish_stricter_site_check(versions):
    """A new version of the site check, published by the loader (the defaults change with a
    release): its wind limit reads the same profile figure, with one more tick."""
    from checklists.services import create_draft, publish_version
    from tests.factories import reading, tick

    items = [
        tick("zone_closed"),
        tick("gust_meter_read"),
        reading("roof_wind", "m/s", {"max": {"profile": "max_wind_ms"}}),
    ]
    draft = create_draft(checklist=versions["site"].checklist, items=items, by=None)
    return publish_version(version=draft, by=None)


def test_a_checklist_published_after_the_checks_leaves_a_cleared_job_not_ready(
    job, simple_checklists, operator
):
    """A stricter site check published at noon left the morning's job "cleared" beside its
    "filled against an older version" blocker; closed without work, it was signed safe."""
    fill_all(job, simple_checklists, operator)
    job.refresh_from_db()
    assert job.state == JobState.CLEARED

    _publish_stricter_site_check(simple_checklists)

    job.refresh_from_db()
    assert job.state == JobState.PLANNED
    assert "sheet_old_version" in [r.code for r in job_blockers(job)]
    assert job.transitions.last().reason == "A required check is no longer satisfied."


def test_a_checklist_published_while_the_robot_works_does_not_stop_it(
    job, simple_checklists, operator
):
    """Work started on the checks of the version in force; the new version applies to the
    next check (a register change that leaves the rig unsafe is what stops work)."""
    from compliance.jobs.services import start_job

    fill_all(job, simple_checklists, operator)
    start_job(job=job, by=operator)

    _publish_stricter_site_check(simple_checklists)

    job.refresh_from_db()
    assert job.state == JobState.WORKING
    assert not job.holds.exists()


def _reload_profile_with(job, tmp_path, **values):
    """The profile as a release's fixture file, with some thresholds' values changed, loaded
    as `manage.py load_defaults` loads it."""
    import json

    from compliance.registers.profiles import load_profiles

    profile = job.site.profile
    thresholds = {
        key: {**t, "value": values.get(key, t["value"])} for key, t in profile.thresholds.items()
    }
    data = {
        "key": profile.key,
        "name": profile.name,
        "thresholds": thresholds,
        "cautions": profile.cautions,
    }
    (tmp_path / "profile.json").write_text(json.dumps(data))
    load_profiles(tmp_path)


def test_a_profile_reloaded_with_a_lower_wind_limit_stops_the_robot_at_work(
    job, simple_checklists, operator, tmp_path
):
    """The wind limit lowered below the morning's 6.5 m/s reading by a profile reload: nothing
    read the open jobs again, and the robot worked on (the next readiness check noticed)."""
    from compliance.jobs.services import start_job

    fill_all(job, simple_checklists, operator)
    start_job(job=job, by=operator)

    _reload_profile_with(job, tmp_path, max_wind_ms=5.0)

    job.refresh_from_db()
    assert job.state == JobState.HELD
    hold = job.holds.get()
    assert (hold.requirement, hold.item_key) == ("site-check@site", "judged_on")


def test_a_profile_reloaded_with_a_lower_wind_limit_leaves_a_cleared_job_not_ready(
    job, simple_checklists, operator, tmp_path
):
    fill_all(job, simple_checklists, operator)

    _reload_profile_with(job, tmp_path, max_wind_ms=5.0)

    job.refresh_from_db()
    assert job.state == JobState.PLANNED
    assert "sheet_judged_on_changed" in [r.code for r in job_blockers(job)]


def test_a_profile_reloaded_back_to_a_limit_it_had_before_stops_the_robot_at_work(
    job, simple_checklists, operator, tmp_path
):
    """Limits raised by one reload and put back by the next: the second load made no new
    revision (the profile had held that content before), so nothing read the open jobs, and
    a robot started on the raised limit worked on."""
    from compliance.jobs.services import start_job
    from compliance.models import Job

    strict = job.site.profile.thresholds["max_wind_ms"]["value"]
    _reload_profile_with(job, tmp_path)  # the profile's content, as its first revision
    original = job.site.profile.thresholds
    _reload_profile_with(job, tmp_path, max_wind_ms=strict + 20)
    job = Job.objects.get(pk=job.pk)
    windy = {"site": {"roof_wind": {"value": strict + 5, "unit": "m/s"}}}
    fill_all(job, simple_checklists, operator, windy)
    start_job(job=job, by=operator)

    _reload_profile_with(job, tmp_path, max_wind_ms=original["max_wind_ms"]["value"])

    job.refresh_from_db()
    assert job.state == JobState.HELD


def test_a_profile_reloaded_with_a_shorter_inspection_interval_stops_the_robot_at_work(
    job, simple_checklists, operator, tmp_path
):
    """The anchors were inspected 100 days ago; a reload that makes an inspection due every 30
    days leaves them overdue. A cleared job did not start on that (anchor_inspection_overdue),
    but a robot already on the facade worked on."""
    from compliance.jobs.services import start_job

    fill_all(job, simple_checklists, operator)
    start_job(job=job, by=operator)

    _reload_profile_with(job, tmp_path, certification_interval_days=30)

    job.refresh_from_db()
    assert job.state == JobState.HELD
    holds = sorted((h.requirement, h.item_key) for h in job.holds.all())
    anchors = job.drops.get()
    assert holds == sorted(
        [
            (f"anchor:{anchors.anchor_id}", "anchor_inspection_overdue"),
            (f"anchor:{anchors.safety_anchor_id}", "anchor_inspection_overdue"),
        ]
    )
    assert job.transitions.last().reason == "Stop work: the register changed under the job."

    # Put back, the holds clear and the job may start again once the crew says so.
    _reload_profile_with(job, tmp_path, certification_interval_days=365)
    job.refresh_from_db()
    assert [h.item_key for h in job.holds.filter(clearance__isnull=True)] == []
    assert job.state == JobState.CLEARED


def test_a_passing_inspection_in_the_log_book_clears_the_overdue_hold(
    job, simple_checklists, operator, supervisor, tmp_path
):
    """The owner inspected the overdue anchors and signed it in the log book: the jobs stayed
    held for good (start refused on the holds alone) until some unrelated change read them."""
    from django.utils import timezone

    from compliance.anchor_log.services import record_entry
    from compliance.jobs.services import start_job
    from compliance.records.signing import create_self_signed
    from tests.factories import PASSWORD

    fill_all(job, simple_checklists, operator)
    start_job(job=job, by=operator)
    _reload_profile_with(job, tmp_path, certification_interval_days=30)
    job.refresh_from_db()
    assert job.state == JobState.HELD
    create_self_signed(organisation=job.site.organisation)
    drop = job.drops.get()

    for n, anchor in enumerate((drop.anchor, drop.safety_anchor)):
        record_entry(
            anchor=anchor,
            by=supervisor,
            password=PASSWORD,
            kind="periodic_inspection",
            result="pass",
            details="Inspected: sound, fixings tight.",
            performed_on=timezone.localdate(),
        )
        job.refresh_from_db()
        still_held = [h.item_key for h in job.holds.filter(clearance__isnull=True)]
        assert still_held == ([] if n else ["anchor_inspection_overdue"])
    assert job.state == JobState.CLEARED

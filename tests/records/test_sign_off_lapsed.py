"""Sign-off: a day whose job was ready when it closed is still not signed "safe" while one of
its pre-start checks no longer counts and no hold stands for it (a figure the check was judged
on reads otherwise, the kit was returned to service after it, a drop was planned after it).
A checklist, or a version of one, published while the robot was at work is the job's next
check, not a lapse of its day: it leaves "safe" as it was."""

import pytest
from django.urls import reverse
from django.utils import timezone

from compliance import clock
from compliance.errors import InvalidTransition
from compliance.jobs.services import close_job, start_job
from compliance.models import DailyRecord, Equipment, JobState
from compliance.records.services import MEANINGS, sign_daily_record
from compliance.registers.services import update_equipment
from tests.conftest import client_for, fill_all
from tests.factories import PASSWORD, make_drop, published_checklist, tick

pytestmark = pytest.mark.django_db

SAFE = f"“{MEANINGS['reviewed_safe']}”"
EXCEPTIONS = f"“{MEANINGS['reviewed_exceptions']}”"
STOPPED = f"“{MEANINGS['reviewed_stopped']}”"


def _at_work(job, versions, operator):
    with clock.replaying(job.date):
        fill_all(job, versions, operator)
        start_job(job=job, by=operator)
    job.refresh_from_db()
    assert job.state == JobState.WORKING
    return job


def _close(job, operator):
    with clock.replaying(job.date):
        close_job(job=job, by=operator)
    job.refresh_from_db()
    assert job.state == JobState.CLOSED
    return job


def _refused_safe(job, supervisor) -> str:
    with pytest.raises(InvalidTransition) as refused:
        sign_daily_record(job=job, by=supervisor, password=PASSWORD, meaning="reviewed_safe")
    assert not DailyRecord.objects.filter(job=job).exists()
    return str(refused.value)


def _hose_rerated_unseen(job):
    """The hose's register row re-rated under the working job without the register's service
    (so no hold opened): the state the sign-off must not take on trust."""
    hose = job.drops.get().hose
    Equipment.objects.filter(pk=hose.pk).update(ratings={**hose.ratings, "rating_kpa": 800.0})
    return hose


def test_a_check_judged_on_a_figure_changed_before_close_refuses_safe(
    job, simple_checklists, operator, supervisor, credential
):
    """The hose's check read its rating at 2500 kPa; the register said 800 kPa when the job
    closed from work, with no hold: the day was signed "safe to proceed"."""
    job = _at_work(job, simple_checklists, operator)
    hose = _hose_rerated_unseen(job)
    job = _close(job, operator)

    detail = _refused_safe(job, supervisor)

    assert detail == (
        "A pre-start check of this day no longer counts, and no hold stands for it: Hose Check"
        f" for hose {hose.label} was judged with its pressure rating at 2500 kPa; it now reads"
        f" 800 kPa: check it again. So it cannot be signed as {SAFE} Choose {EXCEPTIONS} and"
        " say why in the remarks."
    )


def test_a_check_judged_on_a_figure_changed_after_close_refuses_safe(
    job, simple_checklists, operator, supervisor, credential
):
    """The hose re-rated through the register after the job closed (a closed job is not read
    again): whether the rating was wrong all day or changed since cannot be told, and the
    record seals the register as it stands when signed, so the signer says which."""
    job = _close(_at_work(job, simple_checklists, operator), operator)
    hose = job.drops.get().hose
    update_equipment(item=hose, by=supervisor, ratings={**hose.ratings, "rating_kpa": 800.0})

    detail = _refused_safe(job, supervisor)

    assert "was judged with its pressure rating at 2500 kPa; it now reads 800 kPa" in detail
    assert EXCEPTIONS in detail and STOPPED not in detail


def test_kit_returned_to_service_after_its_check_and_before_close_refuses_safe(
    job, simple_checklists, operator, supervisor, credential
):
    """The safety line came back to service after its check, with no hold on the job: the
    check was of the line as it was before."""
    job = _at_work(job, simple_checklists, operator)
    line = job.drops.get().safety_line
    Equipment.objects.filter(pk=line.pk).update(returned_at=timezone.now())
    job = _close(job, operator)

    detail = _refused_safe(job, supervisor)

    assert f"Line Check for safety line {line.label} was filled before it was returned to" in detail
    assert detail.endswith(f"Choose {EXCEPTIONS} and say why in the remarks.")


def test_kit_out_of_service_and_returned_after_close_leaves_safe(
    job, simple_checklists, operator, supervisor, credential
):
    """Taken out of service and returned after the job closed: at close the line was in
    service and its check counted."""
    job = _close(_at_work(job, simple_checklists, operator), operator)
    line = job.drops.get().safety_line
    update_equipment(item=line, by=supervisor, reason="Sheath cut on the van.", in_service=False)
    update_equipment(item=line, by=supervisor, reason="Sheath replaced.", in_service=True)

    record = sign_daily_record(job=job, by=supervisor, password=PASSWORD, meaning="reviewed_safe")

    assert record.pk


def test_a_drop_planned_after_the_checks_refuses_safe(
    job, simple_checklists, operator, supervisor, credential
):
    """A drop written in after work started (not through planning, which refuses it): the site
    check was judged without it, and its own kit and anchors were never checked."""
    job = _at_work(job, simple_checklists, operator)
    make_drop(job, label="D2")
    job = _close(job, operator)

    detail = _refused_safe(job, supervisor)

    assert "Site Check for the site was done before drop D2 was planned" in detail
    assert "has not been done." in detail


def test_a_stopped_meaning_refused_for_a_lapsed_day_sends_to_exceptions_only(
    job, simple_checklists, operator, supervisor, credential
):
    job = _at_work(job, simple_checklists, operator)
    _hose_rerated_unseen(job)
    job = _close(job, operator)

    with pytest.raises(InvalidTransition) as refused:
        sign_daily_record(job=job, by=supervisor, password=PASSWORD, meaning="reviewed_stopped")

    detail = str(refused.value)
    assert detail.startswith("No hold is open on this day")
    assert "was judged with its pressure rating at 2500 kPa" in detail
    assert SAFE not in detail and EXCEPTIONS in detail
    record = sign_daily_record(
        job=job,
        by=supervisor,
        password=PASSWORD,
        meaning="reviewed_exceptions",
        remarks="Hose re-rated to 800 kPa during the day; worked at 900 kPa until 15:00.",
    )
    assert record.pk


def test_the_job_detail_names_the_lapsed_checks_the_sign_page_shows(
    job, simple_checklists, operator, supervisor, credential
):
    job = _at_work(job, simple_checklists, operator)
    hose = _hose_rerated_unseen(job)
    job = _close(job, operator)

    detail = client_for(supervisor).get(reverse("job-detail", args=[job.pk])).json()

    assert (detail["was_ready"], detail["ready_when_closed"]) == (True, True)
    assert [(r["code"], r["requirement"]) for r in detail["lapsed_checks"]] == [
        ("sheet_judged_on_changed", f"hose-check@equipment:{hose.pk}")
    ]


def test_a_checklist_or_version_published_during_work_leaves_safe(
    job, simple_checklists, operator, supervisor, credential
):
    """A new checklist for robots and a new version of the line check, published while the
    robot was on the facade: the job goes on under the checks it started with (they apply to
    its next check), so its day's checks were complete."""
    from checklists.models import ChecklistVersion
    from checklists.schema import content_hash

    job = _at_work(job, simple_checklists, operator)
    published_checklist("robot-tracks", "robot", [tick("tracks")])
    line = simple_checklists["safety_line"]
    newer = ChecklistVersion(
        checklist=line.checklist,
        number=2,
        items=[*line.items, tick("thimble")],
        status="published",
        published_at=timezone.now(),
    )
    newer.content_hash = content_hash(newer.hashed_content())
    newer.save()
    job = _close(job, operator)
    detail = client_for(supervisor).get(reverse("job-detail", args=[job.pk])).json()
    assert {r["code"] for r in detail["blockers"]} == {"sheet_missing", "sheet_old_version"}
    assert detail["lapsed_checks"] == []

    record = sign_daily_record(job=job, by=supervisor, password=PASSWORD, meaning="reviewed_safe")

    assert record.pk

"""Planning a day's drops: what cannot be planned is refused in words naming the field, and
what would block the start is shown while planning."""

import datetime as dt

import pytest
from django.core.exceptions import ValidationError
from django.urls import reverse
from django.utils import timezone

from compliance.anchor_log.services import record_entry
from compliance.jobs import services
from compliance.models import AnchorLogEntry, Drop, SiteGrant
from compliance.records.signing import create_self_signed
from compliance.registers import services as register_services
from tests.conftest import client_for
from tests.factories import (
    PASSWORD,
    AnchorFactory,
    CertificationFactory,
    EquipmentFactory,
    JobFactory,
    OrganisationFactory,
    UserFactory,
    make_drop,
)

pytestmark = pytest.mark.django_db


def rig_of(drop: Drop) -> dict:
    return {
        name: getattr(drop, name)
        for name in ("robot", "anchor", "safety_anchor", "tether", "safety_line", "hose")
    }


def ids(rig: dict) -> dict:
    return {name: row.pk for name, row in rig.items()}


@pytest.fixture
def tomorrow_job(job):
    """The same organisation's job at the same site tomorrow, with no drops yet."""
    return JobFactory(
        site=job.site, supervisor=job.supervisor, date=job.date + dt.timedelta(days=1)
    )


def test_a_robot_on_another_job_that_day_is_refused_naming_the_field(job):
    rig = rig_of(job.drops.get())
    other = JobFactory(site=job.site, supervisor=job.supervisor, date=job.date)
    spare_day = job.date - dt.timedelta(days=5)
    fresh = rig_of(
        make_drop(JobFactory(site=job.site, supervisor=job.supervisor, date=spare_day), "spare")
    )
    with pytest.raises(ValidationError) as caught:
        services.add_drop(
            job=other,
            by=job.supervisor,
            label="D2",
            length_m=90.0,
            **{**fresh, "robot": rig["robot"]},
        )
    assert caught.value.message_dict == {
        "robot": [f"Robot {rig['robot'].label} is on another job on {job.date}."]
    }
    assert not other.drops.exists()


def test_a_robot_used_again_within_one_job_is_fine(job):
    """Drops of one job are worked one after another by the same crew."""
    rig = rig_of(job.drops.get())
    services.add_drop(job=job, by=job.supervisor, label="D2", length_m=80.0, **rig)
    assert job.drops.count() == 2


def test_the_same_robot_another_day_is_fine(job, tomorrow_job):
    rig = rig_of(job.drops.get())
    services.add_drop(job=tomorrow_job, by=job.supervisor, label="D1", length_m=80.0, **rig)
    assert tomorrow_job.drops.count() == 1


def test_an_anchor_on_another_contractor_s_job_that_day_is_refused_without_naming_it():
    owner = OrganisationFactory(name="Harbour Court owners", kind="owner")
    manager = UserFactory(organisation=owner, role="property_manager")
    site = JobFactory(site__organisation=owner, supervisor=manager).site
    north, south = (OrganisationFactory(name=n) for n in ("North crew", "South crew"))
    for contractor in (north, south):
        SiteGrant.objects.create(
            site=site,
            contractor=contractor,
            granted_by=manager,
            starts_on=timezone.localdate(),
            ends_on=timezone.localdate(),
        )
    jobs = [
        services.create_job(
            site=site,
            date=timezone.localdate(),
            supervisor=(boss := UserFactory(organisation=org, role="supervisor")),
            by=boss,
        )
        for org in (north, south)
    ]
    anchors = [AnchorFactory(site=site) for _ in range(3)]
    for anchor in anchors:
        CertificationFactory(anchor=anchor)

    def kit(org):
        return {k: EquipmentFactory(organisation=org, kind=k) for k in ("robot", "tether")} | {
            k: EquipmentFactory(organisation=org, kind=k) for k in ("safety_line", "hose")
        }

    services.add_drop(
        job=jobs[0],
        by=jobs[0].supervisor,
        label="N1",
        length_m=50.0,
        anchor=anchors[0],
        safety_anchor=anchors[1],
        **kit(north),
    )
    client = client_for(jobs[1].supervisor)
    body = {
        "label": "S1",
        "length_m": 50.0,
        "anchor": anchors[1].pk,
        "safety_anchor": anchors[2].pk,
        **{k: v.pk for k, v in kit(south).items()},
    }
    response = client.post(reverse("job-drops", args=[jobs[1].pk]), body, format="json")
    words = f"Anchor {anchors[1].label} is on another job on {timezone.localdate()}."
    assert (response.status_code, response.json()) == (400, {"anchor": [words]})
    assert "North" not in response.content.decode()
    assert not jobs[1].drops.exists()


def test_equipment_out_of_service_is_refused(job, tomorrow_job):
    rig = rig_of(job.drops.get())
    register_services.update_equipment(
        item=rig["hose"], by=job.supervisor, in_service=False, reason="Split near coupling."
    )
    rig["hose"].refresh_from_db()
    with pytest.raises(ValidationError) as caught:
        services.add_drop(job=tomorrow_job, by=job.supervisor, label="D1", length_m=80.0, **rig)
    assert caught.value.message_dict == {"hose": [f"Hose {rig['hose'].label} is out of service."]}


def test_an_anchor_out_of_service_is_refused(job, tomorrow_job):
    rig = rig_of(job.drops.get())
    owner_manager = UserFactory(organisation=job.organisation, role="supervisor")
    create_self_signed(organisation=job.organisation)
    record_entry(
        anchor=rig["anchor"],
        by=owner_manager,
        password=PASSWORD,
        kind=AnchorLogEntry.Kind.REMOVED,
        details="Fixing bolt loose.",
        performed_on=job.date,
    )
    with pytest.raises(ValidationError) as caught:
        services.add_drop(job=tomorrow_job, by=job.supervisor, label="D1", length_m=80.0, **rig)
    assert caught.value.message_dict == {
        "anchor": [
            f"Anchor {rig['anchor'].label} is out of service since {job.date}: Fixing bolt loose."
        ]
    }


def test_the_plan_check_shows_what_will_block_the_start_and_refuses_nothing(job, tomorrow_job):
    rig = rig_of(job.drops.get())
    register_services.update_equipment(
        item=rig["tether"], by=job.supervisor, next_inspection_due=job.date
    )
    # The safety anchor's newest certificate is valid today but lapses before tomorrow's job.
    CertificationFactory(
        anchor=rig["safety_anchor"],
        certified_on=job.date - dt.timedelta(days=50),
        valid_until=job.date,
    )
    response = client_for(job.supervisor).post(
        reverse("job-plan-check", args=[tomorrow_job.pk]), ids(rig), format="json"
    )
    assert response.status_code == 200
    assert response.json() == {
        "conflicts": [
            {
                "field": "tether",
                "code": "equipment_inspection_overdue",
                "message": f"Tether {rig['tether'].label}'s periodic inspection falls due on"
                f" {job.date}, before {tomorrow_job.date}.",
                "refuses": False,
            },
            {
                "field": "safety_anchor",
                "code": "anchor_certificate_lapses",
                "message": f"Anchor {rig['safety_anchor'].label}'s certificate is valid until"
                f" {job.date}, before {tomorrow_job.date}.",
                "refuses": False,
            },
        ]
    }
    assert not tomorrow_job.drops.exists()


def test_the_plan_check_of_another_organisation_s_job_is_not_found(job):
    stranger = UserFactory(role="supervisor")
    response = client_for(stranger).post(
        reverse("job-plan-check", args=[job.pk]), {}, format="json"
    )
    assert response.status_code == 404


def test_the_plan_check_refuses_what_adding_the_drop_would_refuse(job, tomorrow_job):
    """The desk's live check said '0 refused' for one anchor holding both lines and for a drop
    taller than the building; adding the drop was then refused (or, for a line shorter than the
    drop, accepted). The check now answers what the server decides."""
    rig = rig_of(job.drops.get())
    register_services.update_equipment(
        item=rig["safety_line"],
        by=job.supervisor,
        ratings={**rig["safety_line"].ratings, "length_m": 100.0},
    )
    rig["safety_line"].refresh_from_db()
    body = {**ids(rig), "safety_anchor": rig["anchor"].pk, "length_m": 110.0}

    response = client_for(job.supervisor).post(
        reverse("job-plan-check", args=[tomorrow_job.pk]), body, format="json"
    )

    assert response.status_code == 200
    line = rig["safety_line"].label
    assert response.json() == {
        "conflicts": [
            {
                "field": "safety_line",
                "code": "line_shorter_than_drop",
                "message": f"Safety line {line} is 100 m long, shorter than the 110 m drop.",
                "refuses": True,
            },
            {
                "field": "safety_anchor",
                "code": "anchors_not_independent",
                "message": "The safety line needs an anchor independent of the tether's.",
                "refuses": True,
            },
        ]
    }
    taller = client_for(job.supervisor).post(
        reverse("job-plan-check", args=[tomorrow_job.pk]),
        {"anchor": rig["anchor"].pk, "length_m": 121.0},
        format="json",
    )
    assert taller.json() == {
        "conflicts": [
            {
                "field": "length_m",
                "code": "drop_taller_than_building",
                "message": "At most the site's height, 120 m: a drop cannot be longer than the"
                " building is tall.",
                "refuses": True,
            }
        ]
    }
    with pytest.raises(ValidationError) as refused:
        services.add_drop(
            job=tomorrow_job,
            by=job.supervisor,
            label="D1",
            length_m=110.0,
            **{**rig, "safety_anchor": job.drops.get().safety_anchor},
        )
    assert refused.value.message_dict == {
        "safety_line": [f"Safety line {line} is 100 m long, shorter than the 110 m drop."]
    }


def test_a_line_shortened_in_the_register_after_planning_keeps_the_job_from_starting(
    job, simple_checklists, operator
):
    """The plan check refuses a tether shorter than the drop, but the register could be edited
    afterwards (a re-cut line, a typing slip): the job then started with it."""
    from compliance.errors import JobBlocked
    from tests.conftest import fill_all

    drop = job.drops.get()
    register_services.update_equipment(
        item=drop.tether, by=job.supervisor, ratings={**drop.tether.ratings, "length_m": 20.0}
    )
    fill_all(job, simple_checklists, operator)

    with pytest.raises(JobBlocked) as blocked:
        services.start_job(job=job, by=operator)

    assert [r.message for r in blocked.value.reasons if r.code == "line_shorter_than_drop"] == [
        f"Drop {drop.label}: tether {drop.tether.label} is 20 m long, shorter than the"
        f" {drop.length_m:g} m drop."
    ]


def test_equipment_taken_out_after_planning_is_named_with_its_day_and_reason(job, operator):
    """The job's blockers say why the robot is out and since when (the phone and the desk show
    them before anyone reaches the roof), and the job's detail says whether work ever started,
    so the phone offers Close to an operator only once it has."""
    from compliance.jobs.selectors import job_blockers

    drop = job.drops.get()
    register_services.update_equipment(
        item=drop.robot, by=job.supervisor, reason="Vacuum pump fault.", in_service=False
    )
    messages = [r.message for r in job_blockers(job) if r.code == "equipment_out_of_service"]
    assert messages == [
        f"{drop.robot.label} is out of service since {timezone.localdate():%Y-%m-%d}:"
        " Vacuum pump fault."
    ]
    detail = client_for(operator).get(reverse("job-detail", args=[job.pk])).json()
    assert detail["work_started"] is False
    assert messages[0] in [b["message"] for b in detail["blockers"]]

"""Bad input gets a 400 naming the field, and nothing already stored changes."""

import uuid

import pytest
from django.urls import reverse

from checklists.models import CheckSheet, ItemEntry
from compliance.models import AnchorCertification, Equipment, Job
from compliance.selectors import job_requirements
from tests.conftest import PASSING, client_for

pytestmark = pytest.mark.django_db


def counts():
    return (
        CheckSheet.objects.count(),
        ItemEntry.objects.count(),
        Equipment.objects.count(),
        AnchorCertification.objects.count(),
        Job.objects.count(),
    )


def hose_of(job):
    return next(r for r in job_requirements(job) if r.subject.kind == "hose").subject.equipment


def post_sheet(client, job, version, entries, **extra):
    return client.post(
        reverse("sheet-list"),
        {"job": job.pk, "version": version.pk, "entries": entries, **extra},
        format="json",
    )


@pytest.mark.parametrize(
    ("entries", "field"),
    [
        (
            {**PASSING["hose"], "valve_pressure": {"value": 900, "unit": "kg"}},
            "entries.valve_pressure.unit",
        ),
        (
            {**PASSING["hose"], "valve_pressure": {"value": "900", "unit": "kPa"}},
            "entries.valve_pressure.value",
        ),
        ({**PASSING["hose"], "valve_pressure": {"value": True}}, "entries.valve_pressure.value"),
        ({"condition": {"value": "pass"}}, "entries.valve_pressure"),
        ({**PASSING["hose"], "condition": {"value": "maybe"}}, "entries.condition.value"),
        ({**PASSING["hose"], "condition": {"value": "na"}}, "entries.condition.value"),
        ({**PASSING["hose"], "mystery": {"value": 1}}, "entries.mystery"),
        ({**PASSING["hose"], "condition": "pass"}, "entries.condition"),
    ],
)
def test_bad_entries_name_the_field(job, simple_checklists, operator, entries, field):
    before = counts()
    response = post_sheet(
        client_for(operator), job, simple_checklists["hose"], entries, equipment=hose_of(job).pk
    )
    assert response.status_code == 400
    assert field in response.json(), response.json()
    assert counts() == before


def test_nan_reading_is_refused(job, simple_checklists, operator):
    client = client_for(operator)
    body = (
        f'{{"job": {job.pk}, "version": {simple_checklists["hose"].pk}, '
        f'"equipment": {hose_of(job).pk}, "entries": {{"condition": {{"value": "pass"}}, '
        '"valve_pressure": {"value": NaN, "unit": "kPa"}}}'
    )
    response = client.post(reverse("sheet-list"), body, content_type="application/json")
    assert response.status_code == 400
    assert CheckSheet.objects.count() == 0


def test_a_reading_in_another_accepted_unit_is_converted_and_kept_as_entered(
    job, simple_checklists, operator
):
    entries = {**PASSING["hose"], "valve_pressure": {"value": 9, "unit": "bar"}}
    response = post_sheet(
        client_for(operator), job, simple_checklists["hose"], entries, equipment=hose_of(job).pk
    )
    assert response.status_code == 201, response.json()
    entry = next(e for e in response.json()["entries"] if e["item_key"] == "valve_pressure")
    assert entry["value"] == pytest.approx(900.0) and entry["unit"] == "kPa"
    assert entry["working"]["as_entered"] == {"value": 9, "unit": "bar"}


def test_unknown_equipment_is_refused(job, simple_checklists, operator):
    before = counts()
    response = post_sheet(
        client_for(operator), job, simple_checklists["hose"], PASSING["hose"], equipment=999999
    )
    assert response.status_code == 400 and "equipment" in response.json()
    # equipment of the wrong kind names the field too
    robot = next(r for r in job_requirements(job) if r.subject.kind == "robot").subject.equipment
    response = post_sheet(
        client_for(operator), job, simple_checklists["hose"], PASSING["hose"], equipment=robot.pk
    )
    assert response.status_code == 400 and "equipment" in response.json()
    assert counts() == before


def test_negative_capacity_and_bad_dates_are_refused(job, supervisor):
    anchor = job.drops.first().anchor
    url = reverse("anchor-certifications", args=[anchor.pk])
    client = client_for(supervisor)
    before = counts()
    for body, field in [
        (
            {
                "certifier": "P",
                "rated_capacity_kn": -5,
                "certified_on": "2026-01-01",
                "valid_until": "2027-01-01",
            },
            "rated_capacity_kn",
        ),
        (
            {
                "certifier": "P",
                "rated_capacity_kn": "lots",
                "certified_on": "2026-01-01",
                "valid_until": "2027-01-01",
            },
            "rated_capacity_kn",
        ),
        (
            {
                "certifier": "P",
                "rated_capacity_kn": 20,
                "certified_on": "2026-01-01",
                "valid_until": "2025-01-01",
            },
            "valid_until",
        ),
        (
            {"rated_capacity_kn": 20, "certified_on": "2026-01-01", "valid_until": "2027-01-01"},
            "certifier",
        ),
        (
            {
                "certifier": "P",
                "rated_capacity_kn": 20,
                "certified_on": "01/01/2026",
                "valid_until": "2027-01-01",
            },
            "certified_on",
        ),
    ]:
        response = client.post(url, body, format="json")
        assert response.status_code == 400, body
        assert field in response.json(), (body, response.json())
    assert counts() == before
    ok = client.post(
        url,
        {
            "certifier": "P",
            "rated_capacity_kn": 20,
            "certified_on": "2026-01-01",
            "valid_until": "2027-01-01",
        },
        format="json",
    )
    assert ok.status_code == 201


def test_equipment_ratings_are_checked_per_kind(job, supervisor):
    client = client_for(supervisor)
    before = counts()
    response = client.post(
        reverse("equipment-list"),
        {
            "kind": "hose",
            "label": "H-9",
            "ratings": {
                "id_mm": -12,
                "rating_kpa": "high",
                "kg_per_m": 0.1,
                "length_m": 100,
                "colour": "red",
            },
        },
        format="json",
    )
    assert response.status_code == 400
    body = response.json()
    assert {"ratings.id_mm", "ratings.rating_kpa", "ratings.roughness_mm", "ratings.colour"} <= set(
        body
    )
    assert counts() == before
    response = client.post(
        reverse("equipment-list"), {"kind": "crane", "label": "C", "ratings": {}}, format="json"
    )
    assert response.status_code == 400 and "kind" in response.json()


def test_the_same_sheet_sent_twice_is_stored_once(job, simple_checklists, operator):
    client = client_for(operator)
    key = str(uuid.uuid4())
    first = post_sheet(client, job, simple_checklists["site"], PASSING["site"], client_uuid=key)
    again = post_sheet(client, job, simple_checklists["site"], PASSING["site"], client_uuid=key)
    assert (first.status_code, again.status_code) == (201, 200)
    assert first.json()["id"] == again.json()["id"]
    assert CheckSheet.objects.filter(client_uuid=key).count() == 1


def test_a_stored_sheet_cannot_be_edited_through_the_api(job, simple_checklists, operator):
    client = client_for(operator)
    sheet = post_sheet(client, job, simple_checklists["site"], PASSING["site"]).json()
    url = reverse("sheet-detail", args=[sheet["id"]])
    assert client.put(url, {}, format="json").status_code == 405
    assert client.patch(url, {"verdict": "pass"}, format="json").status_code == 405
    assert client.delete(url).status_code == 405


def test_start_blocked_answers_409_with_reasons(job, simple_checklists, operator):
    response = client_for(operator).post(reverse("job-start", args=[job.pk]))
    assert response.status_code == 409
    body = response.json()
    assert body["detail"] == "This job cannot start yet."
    assert {r["code"] for r in body["reasons"]} == {"sheet_missing"}
    assert all(r["message"] and r["requirement"] for r in body["reasons"])
    job.refresh_from_db()
    assert job.state == "planned"

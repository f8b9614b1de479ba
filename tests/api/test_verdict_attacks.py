"""Inputs chosen to get a pass for an unsafe rig, through the calc endpoint and through a sheet of
the default checklists on the demo's job. Each must fail with a reason or be refused (400) naming
the field: never a pass, never a 500.

Source of the numbers: the default profile's schedule (a reading every 30 s ± 10 s for 180 s) and
the demo's readings; the checks themselves are the project's (docs/verdicts.md).
"""

import json

import pytest
from django.urls import reverse
from django.utils import timezone

from checklists.models import CheckSheet
from checklists.selectors import current_versions
from compliance.demo import _entries, load_demo, scenario_path
from compliance.jobs.selectors import job_requirements
from compliance.models import Job, Site
from tests.conftest import client_for
from tests.engineering.examples import ARREST, DECAY, SUCTION, WATER, vary

pytestmark = pytest.mark.django_db

# The default profile's schedule, on the example decay inputs.
SCHEDULE = vary(DECAY, interval_s=30.0, interval_tolerance_s=10.0, min_duration_s=180.0)
STEADY = [[30 * n, 60.0 - 0.4 * n] for n in range(7)]


@pytest.fixture
def calc(job):
    client = client_for(job.supervisor)

    def post(name: str, body: dict):
        return client.post(reverse("calc", args=[name]), body, format="json")

    return post


@pytest.mark.parametrize(
    ("samples", "says"),
    [
        ([[0, 60], [30, 59.6], [30, 59.2], [60, 58.8]], "sample 3 time must be later"),
        ([[0, 60], [60, 59.6], [30, 59.2], [90, 58.8]], "sample 3 time must be later"),
        ([[-30, 60], [0, 59.6], [30, 59.2], [60, 58.8]], "sample 1 time cannot be negative"),
    ],
    ids=["duplicate-time", "time-goes-back", "negative-time"],
)
def test_calc_decay_series_with_bad_times_is_a_400_naming_samples(calc, samples, says):
    response = calc("vacuum-decay", {**SCHEDULE, "samples": samples})
    assert response.status_code == 400
    assert list(response.json()) == ["samples"]
    assert says in response.json()["samples"][0]


def test_calc_decay_three_readings_at_the_shortest_spacing_fail_the_schedule(calc):
    # Every spacing is interval - tolerance = 20 s: in tolerance, but the test is far too short.
    body = {**SCHEDULE, "samples": [[0, 60.0], [20, 60.0], [40, 60.0]]}
    data = calc("vacuum-decay", body).json()
    assert data["verdict"] == "fail"
    assert data["governing"] == "schedule"
    assert data["reason"] == (
        "The decay test did not keep its schedule: the test ran 40 s; it must run at least"
        " 180 s. Start the test again."
    )


def test_calc_decay_huge_extrapolation_is_a_400_naming_it(calc):
    flat = [[30 * n, 60.0] for n in range(7)]
    response = calc("vacuum-decay", {**SCHEDULE, "samples": flat, "max_extrapolation": 1e6})
    assert response.status_code == 400
    assert response.json() == {
        "max_extrapolation": [
            "must be at most 10 (a trend is not projected ten times further than it was watched)"
        ]
    }


def test_calc_decay_rescue_longer_than_the_grip_fails_in_figures(calc):
    body = {**SCHEDULE, "samples": STEADY, "required_hold_s": 100.0, "rescue_time_s": 5000.0}
    data = calc("vacuum-decay", body).json()
    assert data["verdict"] == "fail"
    assert data["governing"] == "rescue_time"
    assert data["reason"].startswith("With the pump off the grip lasts about ")
    assert (
        "the rescue plan needs 5000 s to reach the robot. The job cannot start." in (data["reason"])
    )


def test_calc_suction_zero_rows_is_a_400_naming_cup_rows(calc):
    response = calc("suction-hold", {**SUCTION, "cup_rows": 0})
    assert response.status_code == 400
    assert list(response.json()) == ["cup_rows"]


@pytest.mark.parametrize(
    ("changes", "field"),
    [({"cup_rows": 5}, "cup_rows"), ({"cup_rows": 2, "row_spacing_m": 0.0}, "row_spacing_m")],
    ids=["more-rows-than-cups", "two-rows-no-spacing"],
)
def test_calc_suction_impossible_rows_are_a_400_naming_the_input(calc, changes, field):
    """Before, an impossible rig failed as "out of range ... beyond the numbers it can hold"."""
    response = calc("suction-hold", {**SUCTION, **changes})
    assert response.status_code == 400
    assert list(response.json()) == [field]


def test_calc_water_line_instant_valve_counts_the_whole_surge(calc):
    # Standing 391.9 kPa at the foot; a valve shut at once adds rho*a*v = 157.7 kPa.
    body = vary(WATER, valve_closure_s=0.0, hose_rating_kpa=500.0)
    data = calc("water-line", body).json()
    assert data["verdict"] == "fail"
    assert data["governing"] == "hose_rating"
    assert data["outputs"]["surge_kpa"] == pytest.approx(157.74, abs=0.01)
    slow = calc("water-line", vary(body, valve_closure_s=100.0)).json()
    assert slow["verdict"] == "pass"


def test_calc_arrest_line_at_top_longer_than_the_line_is_a_400(calc):
    response = calc("arrest-load", {**ARREST, "shortest_line_m": 60.0})
    assert response.status_code == 400
    assert list(response.json()) == ["shortest_line_m"]


# Sheets on the demo's job ------------------------------------------------------------------


@pytest.fixture
def today(tmp_path, settings) -> Job:
    settings.MEDIA_ROOT = tmp_path
    org = load_demo()
    return Job.objects.get(organisation=org, date=timezone.localdate())  # today's job


def post_sheet(job: Job, key: str, entries_changes=None, **readings):
    version = next(
        v
        for vs in current_versions(job.organisation_id).values()
        for v in vs
        if v.checklist.key == key
    )
    req = next(r for r in job_requirements(job) if r.checklist_key == key)
    demo = json.loads(scenario_path().read_text(encoding="utf-8"))["readings"].get(key, {})
    entries = _entries(version.items, {**demo, **readings})
    for item_key, change in (entries_changes or {}).items():
        entries[item_key] = {**entries[item_key], **change}
    body = {"job": job.pk, "version": version.pk, "entries": entries}
    if req.subject.equipment is not None:
        body["equipment"] = req.subject.equipment.pk
    if req.subject.anchor is not None:
        body["anchor"] = req.subject.anchor.pk
    operator = job.crew.get(username="tomas")
    return client_for(operator).post(reverse("sheet-list"), body, format="json")


def entry(response, key: str) -> dict:
    return next(e for e in response.json()["entries"] if e["item_key"] == key)


def test_sheet_demo_vacuum_readings_pass(today):
    response = post_sheet(today, "vacuum-hold")
    assert response.status_code == 201
    assert response.json()["verdict"] == "pass"


def test_sheet_decay_series_with_a_repeated_time_is_a_400_and_stores_nothing(today):
    series = [[0, 62.0], [30, 61.6], [30, 61.1], [60, 60.7]]
    response = post_sheet(today, "vacuum-hold", decay_series=series)
    assert response.status_code == 400
    assert response.json() == {"entries.decay_series.value[2][0]": ["Sample times must increase."]}
    assert CheckSheet.objects.filter(job=today).count() == 0


def test_sheet_decay_series_with_a_negative_time_is_a_400_naming_the_sample(today):
    series = [[-60, 62.0], [-30, 61.6], [0, 61.1], [30, 60.7], [60, 60.3], [90, 59.9], [120, 59.5]]
    response = post_sheet(today, "vacuum-hold", decay_series=series)
    assert response.status_code == 400
    assert response.json() == {
        "entries.decay_series.value[0][0]": ["Sample times cannot be negative."]
    }
    assert CheckSheet.objects.filter(job=today).count() == 0


def test_sheet_decay_series_in_bar_is_converted_to_kpa(today):
    demo = json.loads(scenario_path().read_text(encoding="utf-8"))["readings"]["vacuum-hold"]
    in_bar = [[t, v / 100.0] for t, v in demo["decay_series"]]
    response = post_sheet(
        today, "vacuum-hold", entries_changes={"decay_series": {"value": in_bar, "unit": "bar"}}
    )
    assert response.status_code == 201
    series = entry(response, "decay_series")
    assert series["unit"] == "kPa"
    kept = [x for pair in series["value"] for x in pair]
    assert kept == pytest.approx([x for pair in demo["decay_series"] for x in pair])
    assert series["working"]["as_entered"] == {"value": in_bar, "unit": "bar"}
    assert entry(response, "decay_test")["verdict"] == "pass"


def test_sheet_decay_series_in_a_unit_of_mass_is_a_400_naming_the_unit(today):
    response = post_sheet(today, "vacuum-hold", entries_changes={"decay_series": {"unit": "kg"}})
    assert response.status_code == 400
    assert list(response.json()) == ["entries.decay_series.unit"]
    assert CheckSheet.objects.filter(job=today).count() == 0


def test_sheet_three_readings_at_the_shortest_spacing_fail_and_hold(today):
    response = post_sheet(today, "vacuum-hold", decay_series=[[0, 62], [20, 62], [40, 62]])
    assert response.status_code == 201
    assert response.json()["verdict"] == "fail"
    assert entry(response, "decay_series")["message"] == (
        "The test did not keep its schedule: the test ran 40 s; it must run at least 180 s."
        " Start it again."
    )
    assert entry(response, "decay_test")["verdict"] == "fail"


def test_sheet_line_at_top_longer_than_the_drop_fails_naming_the_reading(today):
    response = post_sheet(today, "safety-line-pre-use", line_at_top=500)
    assert response.status_code == 201
    arrest = entry(response, "arrest")
    assert arrest["verdict"] == "fail"
    assert arrest["message"].startswith(
        "Cannot compute: the reading \u201cSafety line paid out at the top of the drop"
    )


SITE = {
    "name": "North block",
    "address": "1 Example Row",
    "height_m": 60,
    "storeys": 18,
    "profile": "generic",
    "terrain": "IV",
}


@pytest.mark.parametrize(
    "outline",
    [
        [[0, 0], [32, 0]],
        [[0, 0], [0, 0], [0, 0]],
        [[0, 0], [32, 0], [32, 0], [0, 24]],
        [[0, 0], [16, 0], [32, 0]],
        "abc",
        [["0", "0"], ["32", "0"], ["32", "24"]],
        [[0, 0, 0], [32, 0, 0], [32, 24, 0]],
        [[True, False], [32, 0], [32, 24]],
        [[0, 0], [10**400, 0], [32, 24]],
        {"x": 1},
    ],
    ids=[
        "two-points",
        "one-point-thrice",
        "repeated-corner",
        "collinear",
        "text",
        "numbers-as-text",
        "three-coordinates",
        "booleans",
        "beyond-a-float",
        "object",
    ],
)
def test_a_roof_outline_that_is_not_a_polygon_is_a_400(today, outline):
    response = client_for(today.supervisor).post(
        reverse("site-list"), {**SITE, "roof_outline": outline}, format="json"
    )
    assert response.status_code == 400
    assert list(response.json()) == ["roof_outline"]
    assert not Site.objects.filter(name=SITE["name"]).exists()


def test_a_roof_outline_polygon_or_none_is_accepted(today):
    client = client_for(today.supervisor)
    rect = [[0, 0], [32, 0], [32, 24.5], [0, 24.5]]
    response = client.post(reverse("site-list"), {**SITE, "roof_outline": rect}, format="json")
    assert response.status_code == 201
    assert response.json()["roof_outline"] == rect
    response = client.post(
        reverse("site-list"), {**SITE, "name": "South block", "roof_outline": []}, format="json"
    )
    assert response.status_code == 201


def test_a_second_site_of_the_same_name_is_a_400_not_a_500(today):
    client = client_for(today.supervisor)
    assert client.post(reverse("site-list"), SITE, format="json").status_code == 201
    response = client.post(reverse("site-list"), SITE, format="json")
    assert response.status_code == 400
    assert list(response.json()) == ["name"]
    assert Site.objects.filter(name=SITE["name"]).count() == 1


def test_a_stored_flat_outline_is_taken_as_no_plan_so_the_drop_stands_at_a_corner(today):
    """An outline stored before the API refused it (all corners on one line) has no depth: the
    hold is worked as with no plan (zone A, the worst), not refused with a raw field name."""
    Site.objects.filter(pk=today.site_id).update(roof_outline=[[0, 0], [16, 0], [32, 0]])
    response = post_sheet(today, "vacuum-hold")
    assert response.status_code == 201
    hold = entry(response, "hold_margin")
    assert hold["verdict"] in ("pass", "fail")
    assert hold["value"]["facade_zone"] == "A"
    assert hold["working"]["inputs"]["corner_distance_m"] == 0.0
    assert "building_depth_m" not in hold["message"]

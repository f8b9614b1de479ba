"""The caution band: a passing item close to its limit is flagged only where its checklist item
names a band (`caution_below`, a source like a limit), with the profile's reason. An item without
one never carries a caution, so a correctly rated anchor, whose rated capacity already holds the
standard's factor, passes plainly.
"""

import json
from pathlib import Path

import pytest
from django.core.exceptions import ValidationError

from checklists.schema import validate_items
from checklists.verdicts import evaluate
from compliance.engineering import run
from compliance.engineering.working import whole_pct

FIXTURES = Path(__file__).resolve().parents[2] / "fixtures"
PROFILE = json.loads((FIXTURES / "profiles" / "generic.json").read_text())["thresholds"]
REASON = PROFILE["wind_caution_band"]["source"]
BAND = {"profile": "wind_caution_band"}


def _items(key: str) -> list[dict]:
    return json.loads((FIXTURES / "checklists" / f"{key}.json").read_text())["items"]


def _wind(caution_below: dict | None = BAND) -> dict:
    item = {
        "key": "roof_wind",
        "kind": "reading",
        "label": "Mean wind on the roof",
        "reason": "The wind the crew works in.",
        "blocking": True,
        "unit": "m/s",
        "limits": {"max": {"profile": "max_wind_ms"}},
    }
    if caution_below is not None:
        item["caution_below"] = caution_below
    return item


def _one(items: list[dict], entries: dict, context: dict | None = None):
    outcome = evaluate(items, entries, context if context is not None else {"profile": PROFILE})
    return {r.key: r for r in outcome.items}


# The schema -------------------------------------------------------------------------------


def test_schema_takes_caution_below_as_a_source():
    assert validate_items([_wind()])[0]["caution_below"] == BAND
    assert validate_items([_wind({"value": 0.1})])[0]["caution_below"] == {"value": 0.1}


@pytest.mark.parametrize(
    "bad, error",
    [
        (0.2, "A source is one of {"),
        ({"profile": "a", "value": 1}, "A source is one of {"),
        ({"tank": "band"}, "Unknown source 'tank'."),
        ({"profile": ""}, "A source reference is a non-empty text."),
        ({"value": True}, "A literal value is a number or a text."),
    ],
)
def test_schema_names_a_malformed_caution_below(bad, error):
    with pytest.raises(ValidationError) as caught:
        validate_items([_wind(bad)])
    messages = caught.value.message_dict
    assert list(messages) == ["items[0].caution_below"]
    assert messages["items[0].caution_below"][0].startswith(error)


def test_default_checklists_name_the_band_on_their_wind_items_only():
    weather, vacuum = _items("weather"), _items("vacuum-hold")
    validate_items(weather)
    validate_items(vacuum)
    named = {i["key"] for i in weather + vacuum if "caution_below" in i}
    assert named == {"forecast_at_height", "wind_load"}


# The server's verdicts ------------------------------------------------------------------


def test_a_reading_within_the_band_passes_with_a_caution_and_its_reason():
    wind = _one([_wind()], {"roof_wind": {"value": 12.3, "unit": "m/s"}})["roof_wind"]
    assert wind.verdict == "pass"
    assert wind.margin == pytest.approx((14.0 - 12.3) / 14.0)  # 0.1214
    assert wind.message == ""
    assert wind.working["caution_below"] == {
        "band": 0.2,
        "source": {"profile": "wind_caution_band"},
        "message": f"Passes, but within 20 % of its limit (margin 12 %): {REASON}",
    }


def test_a_reading_outside_the_band_has_no_caution():
    wind = _one([_wind()], {"roof_wind": {"value": 11.0, "unit": "m/s"}})["roof_wind"]
    assert wind.verdict == "pass" and wind.margin == pytest.approx(3 / 14)
    assert "caution_below" not in wind.working


def test_an_item_without_a_band_never_has_a_caution():
    wind = _one([_wind(None)], {"roof_wind": {"value": 13.9, "unit": "m/s"}})["roof_wind"]
    assert wind.verdict == "pass" and wind.margin < 0.01
    limit = {"value": 14.0, "source": {"profile": "max_wind_ms"}}
    assert wind.working == {"limits": {"max": limit}}


def test_a_rated_anchor_a_little_over_its_minimum_passes_plainly():
    """The anchor's limit already holds the standard's factor: 25 kN against 22.2 kN (margin
    13 %) used to show a caution on the phone; the default anchor checklist names no band."""
    items = _items("anchor-pre-use")
    assert all("caution_below" not in i for i in items)
    entries = {
        i["key"]: {"value": "pass"} if i["kind"] == "tick" else {"value": 25, "unit": "kN"}
        for i in items
        if i["kind"] in ("tick", "reading")
    }
    capacity = _one(items, entries)["tag_capacity"]
    assert capacity.verdict == "pass" and capacity.margin == pytest.approx(25 / 22.2 - 1)
    assert "caution_below" not in capacity.working


def test_a_failing_reading_has_no_caution():
    wind = _one([_wind()], {"roof_wind": {"value": 14.5, "unit": "m/s"}})["roof_wind"]
    assert wind.verdict == "fail"
    assert "caution_below" not in wind.working


@pytest.mark.parametrize(
    "context",
    [
        {"profile": {"max_wind_ms": PROFILE["max_wind_ms"]}},  # the profile has no band
        {"profile": {**PROFILE, "wind_caution_band": {"unit": ""}}},  # a threshold with no value
        {"profile": {**PROFILE, "wind_caution_band": "a fifth"}},  # not a number
        {"profile": {**PROFILE, "wind_caution_band": {"value": None}}},
    ],
)
def test_a_band_that_cannot_be_resolved_is_ignored(context):
    wind = _one([_wind()], {"roof_wind": {"value": 13.0, "unit": "m/s"}}, context)["roof_wind"]
    assert wind.verdict == "pass" and wind.message == ""
    assert "caution_below" not in wind.working


def test_a_band_from_a_literal_value_has_no_profile_reason():
    wind = _one([_wind({"value": 0.25})], {"roof_wind": {"value": 11.0, "unit": "m/s"}})
    assert wind["roof_wind"].working["caution_below"] == {
        "band": 0.25,
        "source": {"value": 0.25},
        "message": "Passes, but within 25 % of its limit (margin 21 %).",
    }


def _weather_context(speed_10m: float) -> tuple[list[dict], dict, dict]:
    items = [i for i in _items("weather") if i["key"] in ("forecast_10m", "forecast_at_height")]
    context = {"profile": PROFILE, "drop": {"height_m": 60.0, "terrain": "III"}}
    return items, {"forecast_10m": {"value": speed_10m, "unit": "m/s"}}, context


def _wind_margin(speed_10m: float) -> float:
    inputs = {
        "speed_ms": speed_10m,
        "measured_at_m": 10,
        "working_height_m": 60.0,
        "terrain": "III",
        "method": "log",
        "limit_ms": 14.0,
    }
    return run("wind-at-height", inputs).to_dict()["margin"]


def test_a_calc_within_its_band_passes_with_a_caution():
    # Search the 10 m forecast for one that puts the result within the band.
    speed = next(s / 10 for s in range(10, 200) if 0.0 < _wind_margin(s / 10) < 0.2)
    margin = _wind_margin(speed)
    items, entries, context = _weather_context(speed)
    result = _one(items, entries, context)["forecast_at_height"]
    assert result.verdict == "pass" and result.margin == pytest.approx(margin)
    pct = whole_pct(margin, passed=True).lstrip("+")
    assert result.working["caution_below"] == {
        "band": 0.2,
        "source": {"profile": "wind_caution_band"},
        "message": f"Passes, but within 20 % of its limit (margin {pct}): {REASON}",
    }
    # The calculation's own words stay as they were, the general caution among them.
    assert "licensed engineer" in result.working["caution"]


def test_a_calc_far_from_its_limit_and_a_failing_one_have_no_caution():
    for speed, verdict in ((2.0, "pass"), (20.0, "fail")):
        items, entries, context = _weather_context(speed)
        result = _one(items, entries, context)["forecast_at_height"]
        assert result.verdict == verdict
        assert "caution_below" not in result.working


@pytest.mark.parametrize(
    ("typed", "unit"),
    [(5620, "lbf"), (2549, "kgf"), (2500, "daN")],
)
def test_an_anchor_tag_read_in_another_unit_fails_rather_than_passing(typed, unit):
    """A 25 kN anchor's tag in pounds-force, kilograms-force or decanewtons, typed as kN, passed
    with a margin in the hundreds of percent. 25 kN = 5620 lbf = 2549 kgf = 2500 daN (SI
    brochure conversion factors: 1 lbf = 4.448 N, 1 kgf = 9.807 N, 1 daN = 10 N)."""
    items = _items("anchor-pre-use")
    entries = {
        i["key"]: {"value": "pass"} if i["kind"] == "tick" else {"value": typed, "unit": "kN"}
        for i in items
        if i["kind"] in ("tick", "reading")
    }

    capacity = _one(items, entries)["tag_capacity"]

    assert capacity.verdict == "fail", unit
    assert capacity.message == f"{typed:g} kN is above the maximum of 1000 kN."

"""Input validation: every bad input is refused with an error naming the field."""

from __future__ import annotations

import math
from typing import Any

import pytest

from compliance.engineering import CALCULATIONS, CalcInputError, UnknownCalculation, run

from .examples import BY_NAME, DECAY, vary


def _number_fields() -> list[tuple[str, str]]:
    return [
        (calc.name, spec.name)
        for calc in CALCULATIONS.values()
        for spec in calc.fields
        if spec.kind in ("number", "integer")
    ]


def _base_with(calc: str, field: str) -> dict[str, Any]:
    """The example inputs with `field` present, dropping anything it conflicts with."""
    base = dict(BY_NAME[calc])
    conflicts = {
        ("arrest-load", "elongation_pct"): ["line_ea_kn"],
        ("arrest-load", "elongation_load_kn"): ["line_ea_kn"],
        ("suspended-mass", "water_temp_c"): ["water_density_kgm3"],
        ("wind-at-height", "alpha"): [],
    }
    for name in conflicts.get((calc, field), []):
        base.pop(name, None)
    if (calc, field) == ("wind-at-height", "alpha"):
        base["method"] = "power"
    return base


def expect_error(calc: str, inputs: Any, field: str) -> CalcInputError:
    with pytest.raises(CalcInputError) as caught:
        run(calc, inputs)
    error = caught.value
    assert error.field == field, str(error)
    assert str(error) == f"{error.field}: {error.message}"
    assert error.message
    return error


@pytest.mark.parametrize(("calc", "field"), _number_fields())
@pytest.mark.parametrize(
    ("bad", "says"),
    [
        (True, "not true or false"),
        (False, "not true or false"),
        ("12", "not text"),
        (math.nan, "finite"),
        (math.inf, "finite"),
        (-math.inf, "finite"),
        ([1.0], "must be a number"),
        ({"value": 1.0}, "must be a number"),
    ],
)
def test_numbers_must_be_finite_numbers(calc: str, field: str, bad: Any, says: str) -> None:
    error = expect_error(calc, vary(_base_with(calc, field), **{field: bad}), field)
    assert says in error.message


@pytest.mark.parametrize(("calc", "field"), _number_fields())
def test_bounds_from_the_declared_fields(calc: str, field: str) -> None:
    spec = next(s for s in CALCULATIONS[calc].fields if s.name == field)
    base = _base_with(calc, field)
    if spec.greater_than == 0.0 or spec.at_least == 0.0:
        assert "negative" in expect_error(calc, vary(base, **{field: -1.0}), field).message
    if spec.greater_than == 0.0:
        assert "greater than zero" in expect_error(calc, vary(base, **{field: 0}), field).message
    if spec.at_least is not None and spec.at_least > 0:
        below = spec.at_least - (1 if spec.kind == "integer" else 0.5)
        assert "at least" in expect_error(calc, vary(base, **{field: below}), field).message
    if spec.at_most is not None:
        above = spec.at_most * 1.001 + 0.001
        assert "at most" in expect_error(calc, vary(base, **{field: above}), field).message


@pytest.mark.parametrize(
    ("calc", "field"),
    [
        (calc.name, spec.name)
        for calc in CALCULATIONS.values()
        for spec in calc.fields
        if spec.required
    ],
)
def test_missing_required_field(calc: str, field: str) -> None:
    assert expect_error(calc, vary(BY_NAME[calc], **{field: None}), field).message == "is required"


@pytest.mark.parametrize("calc", list(CALCULATIONS))
def test_unknown_field_is_named(calc: str) -> None:
    error = expect_error(calc, {**BY_NAME[calc], "colour": "red"}, "colour")
    assert "not an input" in error.message


@pytest.mark.parametrize(
    ("calc", "changes", "field", "says"),
    [
        ("suction-hold", {"vacuum_kpa": 101.4}, "vacuum_kpa", "atmosphere"),
        ("suction-hold", {"wet_glass_friction": 2.1}, "wet_glass_friction", "at most 2"),
        ("suction-hold", {"cups": 2.5}, "cups", "whole number"),
        ("suction-hold", {"cups": 0}, "cups", "at least 1"),
        ("suction-hold", {"safety_factor": 0.9}, "safety_factor", "at least 1"),
        ("suction-hold", {"effective_area_ratio": 1.2}, "effective_area_ratio", "at most 1"),
        ("vacuum-decay", {"samples": [[0, 60], [10, 59]]}, "samples", "at least 3"),
        ("vacuum-decay", {"samples": [[0, 60], [10, 59], [10, 58]]}, "samples", "increase"),
        ("vacuum-decay", {"samples": [[0, 60], [20, 59], [10, 58]]}, "samples", "sample 3"),
        ("vacuum-decay", {"samples": [[-1, 60], [10, 59], [20, 58]]}, "samples", "negative"),
        ("vacuum-decay", {"samples": [[0, 60], [10, 120], [20, 58]]}, "samples", "atmosphere"),
        ("vacuum-decay", {"samples": [[0, 60], [10, -1], [20, 58]]}, "samples", "negative"),
        ("vacuum-decay", {"samples": [[0, 60], [10], [20, 58]]}, "samples", "pair"),
        ("vacuum-decay", {"samples": [[0, 60], [10, True], [20, 58]]}, "samples", "true"),
        ("vacuum-decay", {"samples": [[0, 60], [10, "59"], [20, 58]]}, "samples", "text"),
        ("vacuum-decay", {"samples": [[0, 60], [10, math.nan], [20, 58]]}, "samples", "finite"),
        ("vacuum-decay", {"samples": "0,60;10,59;20,58"}, "samples", "list"),
        ("vacuum-decay", {"samples": 60}, "samples", "list"),
        ("vacuum-decay", {"min_vacuum_kpa": 0}, "min_vacuum_kpa", "greater than zero"),
        ("arrest-load", {"line_ea_kn": None}, "line_ea_kn", "is required"),
        (
            "arrest-load",
            {"elongation_pct": 3.0, "elongation_load_kn": 4.5},
            "elongation_pct",
            "not more than one",
        ),
        (
            "arrest-load",
            {"line_ea_kn": None, "elongation_pct": 3.0},
            "elongation_load_kn",
            "required with elongation_pct",
        ),
        (
            "arrest-load",
            {"line_ea_kn": None, "elongation_load_kn": 4.5},
            "elongation_pct",
            "required with elongation_load_kn",
        ),
        ("arrest-load", {"elongation_pct": 3.0}, "elongation_load_kn", "required with"),
        (
            "arrest-load",
            {"line_ea_kn": None, "elongation_pct": 120, "elongation_load_kn": 4.5},
            "elongation_pct",
            "at most 100",
        ),
        ("wind-at-height", {"terrain": "V"}, "terrain", "unknown value"),
        ("wind-at-height", {"terrain": 2}, "terrain", "must be text"),
        ("wind-at-height", {"method": "cubic"}, "method", "unknown value"),
        ("wind-at-height", {"alpha": 0.2}, "alpha", "applies only when method"),
        ("wind-at-height", {"working_height_m": 250.0}, "working_height_m", "200"),
        ("wind-at-height", {"measured_at_m": 201.0}, "measured_at_m", "200"),
        ("wind-at-height", {"area_m2": 0.5}, "drag_coefficient", "required with area_m2"),
        ("wind-at-height", {"drag_coefficient": 1.2}, "area_m2", "required with"),
        ("wind-at-height", {"gust_factor": 0.8}, "gust_factor", "at least 1"),
        ("water-line", {"water_temp_c": 60.5}, "water_temp_c", "0-60"),
        ("water-line", {"water_temp_c": -1.0}, "water_temp_c", "negative"),
        ("water-line", {"roughness_mm": 1.0}, "roughness_mm", "Moody"),
        (
            "suspended-mass",
            {"water_density_kgm3": 1000.0, "water_temp_c": 20.0},
            "water_temp_c",
            "not both",
        ),
        ("suspended-mass", {"water_temp_c": 75.0}, "water_temp_c", "0-60"),
        ("water-use", {"supply_l": 0}, "supply_l", "greater than zero"),
    ],
)
def test_specific_invalid_inputs(calc: str, changes: dict[str, Any], field: str, says: str) -> None:
    error = expect_error(calc, vary(BY_NAME[calc], **changes), field)
    assert says in error.message, error.message


def test_the_first_bad_field_is_reported() -> None:
    """Declared order: vacuum_kpa comes before wet_glass_friction."""
    expect_error(
        "suction-hold",
        vary(BY_NAME["suction-hold"], vacuum_kpa=-1, wet_glass_friction=9),
        "vacuum_kpa",
    )


def test_unknown_fields_are_reported_before_bad_values() -> None:
    expect_error(
        "suction-hold",
        {**BY_NAME["suction-hold"], "vacum_kpa": 21, "wet_glass_friction": 9},
        "vacum_kpa",
    )


def test_inputs_must_be_a_mapping() -> None:
    expect_error("suction-hold", [1, 2, 3], "inputs")


def test_choices_are_normalised() -> None:
    result = run("wind-at-height", vary(BY_NAME["wind-at-height"], terrain=" iv ", method="LOG"))
    assert result.inputs["terrain"] == "IV"
    assert result.inputs["method"] == "log"


def test_null_optional_is_absent() -> None:
    result = run("vacuum-decay", vary(DECAY, system_volume_l=None) | {"system_volume_l": None})
    assert "system_volume_l" not in result.inputs


def test_whole_float_counts_are_accepted() -> None:
    """JSON from the phone has no integer type: 4.0 cups is 4 cups."""
    result = run("suction-hold", vary(BY_NAME["suction-hold"], cups=4.0))
    assert result.inputs["cups"] == 4
    assert isinstance(result.inputs["cups"], int)


def test_unknown_calculation() -> None:
    with pytest.raises(UnknownCalculation) as caught:
        run("rope-swing", {})
    assert caught.value.name == "rope-swing"


# Numbers at the edges of binary64 (IEEE 754-2019): the largest finite double is about
# 1.8e308, the smallest positive (subnormal) one 5e-324. Python's json module reads an integer
# of any length, so 10**400 reaches the validator as an int that float() cannot hold.

HUGE_INT = 10**400


@pytest.mark.parametrize(("calc", "field"), _number_fields())
@pytest.mark.parametrize("huge", [HUGE_INT, -HUGE_INT], ids=["10**400", "-10**400"])
def test_an_integer_too_large_for_a_float_is_not_finite(calc: str, field: str, huge: int) -> None:
    error = expect_error(calc, vary(_base_with(calc, field), **{field: huge}), field)
    assert error.message == "must be a finite number"


@pytest.mark.parametrize("where", [0, 1])
def test_a_huge_integer_in_a_series_sample_names_the_series(where: int) -> None:
    sample = [0, 60.0]
    sample[where] = HUGE_INT
    samples = [sample, [60, 57.0], [120, 54.0], [180, 51.0]]
    error = expect_error("vacuum-decay", vary(DECAY, samples=samples), "samples")
    assert error.message.endswith("must be a finite number")


@pytest.mark.parametrize(
    ("calc", "field"),
    [
        (calc.name, spec.name)
        for calc in CALCULATIONS.values()
        for spec in calc.fields
        if spec.kind == "number" and spec.greater_than == 0.0
    ],
)
def test_negative_zero_is_not_greater_than_zero(calc: str, field: str) -> None:
    error = expect_error(calc, vary(_base_with(calc, field), **{field: -0.0}), field)
    assert error.message == "must be greater than zero"


@pytest.mark.parametrize(
    ("calc", "field"),
    [
        ("water-line", "flow_lpm"),
        ("water-line", "top_head_m"),
        ("suction-hold", "peak_pressure_pa"),
    ],
)
def test_negative_zero_is_taken_as_zero(calc: str, field: str) -> None:
    """-0.0 is a valid JSON number equal to zero; it is kept as +0.0 so no "-0" reaches the
    working or the record."""
    result = run(calc, vary(BY_NAME[calc], **{field: -0.0}))
    value = result.inputs[field]
    assert value == 0.0 and math.copysign(1.0, float(value)) == 1.0  # type: ignore[arg-type]
    assert "-0" not in " ".join(result.steps)

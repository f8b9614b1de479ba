"""vacuum-decay: least-squares fits, the pessimistic prediction and the edge cases."""

from __future__ import annotations

import math

import numpy as np
import pint
import pytest
from hypothesis import given
from hypothesis import strategies as st

from compliance.engineering import run
from compliance.engineering.decay import fit_line, schedule_problems

from .examples import DECAY, vary

ureg = pint.UnitRegistry()


def test_line_fit_matches_numpy_polyfit() -> None:
    """Reference: numpy.polyfit (degree 1) and the R² definition 1 - SSres/SStot."""
    xs = [0.0, 30.0, 60.0, 90.0, 120.0, 150.0]
    ys = [60.0, 58.1, 56.5, 54.8, 53.2, 51.0]
    fit = fit_line(xs, ys)
    slope, intercept = np.polyfit(xs, ys, 1)
    predicted = np.polyval([slope, intercept], xs)
    r2 = 1 - np.sum((np.array(ys) - predicted) ** 2) / np.sum((np.array(ys) - np.mean(ys)) ** 2)
    assert fit.slope == pytest.approx(slope, rel=1e-12)
    assert fit.intercept == pytest.approx(intercept, rel=1e-12)
    assert fit.r2 == pytest.approx(r2, rel=1e-12)


def test_exact_line_by_hand() -> None:
    """Readings falling 3 kPa a minute from 60 kPa: the line reaches 40 kPa at 400 s, 220 s after
    the last sample at 180 s (hand calculation)."""
    result = run("vacuum-decay", DECAY)
    out = result.outputs
    assert out["linear_slope_kpa_per_s"] == pytest.approx(-0.05, rel=1e-12)
    assert out["leak_rate_kpa_per_min"] == pytest.approx(3.0, rel=1e-12)
    assert out["linear_r2"] == pytest.approx(1.0, abs=1e-12)
    assert out["linear_time_to_limit_s"] == pytest.approx(220.0, rel=1e-12)
    assert out["fit"] == "linear"
    assert out["time_to_limit_s"] == pytest.approx(220.0, rel=1e-12)
    assert result.verdict == "pass"
    assert result.margin == pytest.approx(220.0 / 200.0 - 1)


def test_exact_exponential_recovers_tau() -> None:
    """v = 80·exp(-t/1000 s): tau = 1000 s and 40 kPa is reached at 1000·ln 2 s (hand)."""
    samples = [[t, 80.0 * math.exp(-t / 1000.0)] for t in (0, 60, 120, 180)]
    out = run("vacuum-decay", vary(DECAY, samples=samples)).outputs
    assert out["exponential_tau_s"] == pytest.approx(1000.0, rel=1e-9)
    assert out["exponential_v0_kpa"] == pytest.approx(80.0, rel=1e-9)
    assert out["exponential_r2"] == pytest.approx(1.0, abs=1e-12)
    assert out["exponential_time_to_limit_s"] == pytest.approx(
        1000.0 * math.log(2.0) - 180.0, rel=1e-9
    )


def test_the_shorter_prediction_governs() -> None:
    """Pessimistic choice: the prediction that reaches the limit first governs."""
    for samples in (
        [[t, 80.0 * math.exp(-t / 1000.0)] for t in (0, 60, 120, 180)],
        [[0, 60.0], [60, 57.0], [120, 54.0], [180, 51.0]],
    ):
        out = run("vacuum-decay", vary(DECAY, samples=samples, min_vacuum_kpa=50.0)).outputs
        times = [
            out["linear_time_to_limit_s"],
            out["exponential_time_to_limit_s"],
            out["recent_time_to_limit_s"],
        ]
        assert all(isinstance(t, float) for t in times)
        assert out["predicted_time_to_limit_s"] == min(t for t in times if isinstance(t, float))


def test_short_hold_fails() -> None:
    result = run("vacuum-decay", vary(DECAY, required_hold_s=300.0))
    assert result.verdict == "fail"
    assert result.governing == "hold_time"
    assert result.margin == pytest.approx(220.0 / 300.0 - 1)
    assert result.reason == "With the pump off the grip lasts about 220 s; 300 s are needed."


def test_leak_rate_in_mbar_litre_per_second() -> None:
    """Q = V·Δp/Δt (pressure-decay practice, from memory); units checked with pint."""
    out = run("vacuum-decay", DECAY).outputs
    q = (2.0 * ureg.L * 0.05 * ureg.kPa / ureg.s).to("mbar*L/s").magnitude
    assert out["leak_rate_mbar_l_per_s"] == pytest.approx(q, rel=1e-12)
    assert (
        run("vacuum-decay", vary(DECAY, system_volume_l=None)).outputs["leak_rate_mbar_l_per_s"]
        is None
    )


FLAT = [[0, 50.1], [60, 50.1], [120, 50.1], [180, 50.1]]


def test_flat_series_is_relied_on_only_as_far_as_the_allowed_extrapolation() -> None:
    """Three flat readings never mean "margin unbounded": the grip is relied on for at most
    max_extrapolation × the test's duration beyond the last reading (2 × 180 s = 360 s)."""
    result = run("vacuum-decay", vary(DECAY, samples=FLAT, required_hold_s=300.0))
    out = result.outputs
    assert result.verdict == "pass"
    assert out["predicted_time_to_limit_s"] is None
    assert out["time_to_limit_s"] == 360.0
    assert out["fit"] == "none"
    assert out["leak_rate_kpa_per_min"] == 0.0
    assert result.margin == pytest.approx(360.0 / 300.0 - 1)
    failing = run("vacuum-decay", vary(DECAY, samples=FLAT, required_hold_s=600.0))
    assert failing.verdict == "fail"
    assert failing.reason == (
        "The test ran 180 s, so at most 360 s beyond it can be relied on; 600 s are needed."
        " Run the test longer."
    )


def test_extrapolation_never_exceeds_the_allowed_multiple() -> None:
    """A slow leak predicts hours; the calculation relies on no more than the multiple."""
    samples = [[0, 60.0], [60, 59.9], [120, 59.8], [180, 59.7]]
    result = run("vacuum-decay", vary(DECAY, samples=samples, required_hold_s=400.0))
    predicted = result.outputs["predicted_time_to_limit_s"]
    assert isinstance(predicted, float) and predicted > 10_000.0
    assert result.outputs["time_to_limit_s"] == 360.0
    assert result.verdict == "fail"


def test_rushed_test_fails_its_schedule() -> None:
    """Three flat readings a second apart against a 300 s hold: before, "margin unbounded"."""
    result = run(
        "vacuum-decay",
        vary(DECAY, samples=[[0, 60.0], [1, 60.0], [2, 60.0]], required_hold_s=300.0),
    )
    assert result.verdict == "fail"
    assert result.governing == "schedule"
    assert result.margin is None
    assert result.reason == (
        "The decay test did not keep its schedule: two readings were 1 s apart; the test needs"
        " one every 60 s (± 10 s); the test ran 2 s; it must run at least 180 s. Start the test"
        " again."
    )


def test_a_gap_in_the_schedule_fails() -> None:
    samples = [[0, 60.0], [60, 59.0], [180, 57.0], [240, 56.0]]
    result = run("vacuum-decay", vary(DECAY, samples=samples))
    assert result.governing == "schedule"
    assert "two readings were 120 s apart" in result.reason


def test_accelerating_leak_is_governed_by_the_last_interval() -> None:
    """[0,80],[30,79],[60,70] with a 40 kPa limit: the straight line gives 188 s (+57 % on
    120 s), the last interval (9 kPa in 30 s) reaches 40 kPa in 30 / 9 × 30 = 100 s (hand)."""
    result = run(
        "vacuum-decay",
        vary(
            DECAY,
            samples=[[0, 80.0], [30, 79.0], [60, 70.0]],
            required_hold_s=120.0,
            interval_s=30.0,
            min_duration_s=60.0,
            max_extrapolation=3.0,
        ),
    )
    assert result.outputs["linear_time_to_limit_s"] == pytest.approx(188.0)
    assert result.outputs["recent_time_to_limit_s"] == pytest.approx(100.0)
    assert result.outputs["fit"] == "recent interval"
    assert result.verdict == "fail"
    assert result.margin == pytest.approx(100.0 / 120.0 - 1)
    assert result.reason == "With the pump off the grip lasts about 100 s; 120 s are needed."


def test_noise_around_a_level_is_inconclusive() -> None:
    """[75, 73, 76]: a series that ends higher than it started says nothing about a leak."""
    result = run(
        "vacuum-decay",
        vary(DECAY, samples=[[0, 75.0], [60, 73.0], [120, 76.0]], min_duration_s=120.0),
    )
    assert result.verdict == "fail"
    assert result.governing == "rising"
    assert result.reason.endswith("Inconclusive: repeat the test.")
    assert any("margin none: inconclusive" in step for step in result.steps)


def test_scattered_readings_below_the_stated_r2_are_inconclusive() -> None:
    samples = [[0, 60.0], [60, 57.0], [120, 59.5], [180, 56.0], [240, 59.0], [300, 57.5]]
    result = run("vacuum-decay", vary(DECAY, samples=samples, min_duration_s=300.0))
    r2 = result.outputs["linear_r2"]
    assert isinstance(r2, float) and r2 < 0.8
    assert result.governing == "fit_quality"
    assert result.verdict == "fail"


def test_times_count_from_the_first_reading() -> None:
    """Epoch seconds give the same answer as seconds since Start."""
    since_start = run("vacuum-decay", DECAY)
    epoch = [[1_764_670_000 + t, v] for t, v in DECAY["samples"]]
    from_epoch = run("vacuum-decay", vary(DECAY, samples=epoch))
    assert from_epoch.outputs["time_to_limit_s"] == since_start.outputs["time_to_limit_s"]
    assert from_epoch.margin == since_start.margin


def test_times_in_milliseconds_fail_the_schedule() -> None:
    millis = [[1_764_670_000_000 + t * 1000, v] for t, v in DECAY["samples"]]
    assert run("vacuum-decay", vary(DECAY, samples=millis)).governing == "schedule"


def test_times_a_hair_apart_fail_the_schedule_not_the_server() -> None:
    result = run("vacuum-decay", vary(DECAY, samples=[[0, 60.0], [1e-300, 60.0], [2e-300, 60.0]]))
    assert result.governing == "schedule"


def test_sample_already_below_the_limit_fails() -> None:
    result = run(
        "vacuum-decay",
        vary(
            DECAY,
            samples=[[0, 45.0], [60, 42.0], [120, 39.0], [180, 38.0]],
        ),
    )
    assert result.verdict == "fail"
    assert result.outputs["lowest_sample_kpa"] == 38.0
    assert any("reading 3" in step for step in result.steps)


def test_below_limit_governs_even_when_the_schedule_also_fails() -> None:
    result = run("vacuum-decay", vary(DECAY, samples=[[0, 30.0], [60, 35.0], [70, 38.0]]))
    assert result.verdict == "fail"
    assert result.governing == "sample_below_limit"
    assert result.margin == pytest.approx(30.0 / 40.0 - 1)


def test_zero_reading_skips_the_exponential_fit() -> None:
    result = run(
        "vacuum-decay",
        vary(DECAY, samples=[[0, 50.0], [60, 20.0], [120, 10.0], [180, 0.0]]),
    )
    assert result.verdict == "fail"
    assert result.outputs["exponential_r2"] is None
    assert any("no logarithm" in step for step in result.steps)


@given(
    v0=st.floats(30.0, 100.0),
    rate=st.floats(0.0001, 0.1),
    extra=st.floats(0.001, 0.1),
)
def test_faster_leak_never_lengthens_the_hold(v0: float, rate: float, extra: float) -> None:
    times = [0.0, 60.0, 120.0, 180.0]

    def hold(r: float) -> float:
        samples = [[t, max(v0 - r * t, 0.0)] for t in times]
        out = run("vacuum-decay", {**DECAY, "samples": samples, "min_vacuum_kpa": 1.0}).outputs
        value = out["time_to_limit_s"]
        assert isinstance(value, float)
        return value

    assert hold(rate + extra) <= hold(rate) + 1e-9


def test_a_reading_exactly_at_the_edge_of_its_tolerance_keeps_the_schedule() -> None:
    """Times kept to 0.1 s: 22.1 - 10.1 is 12.000000000000002 in binary floating point."""
    assert (
        schedule_problems([0.0, 10.1, 22.1], interval_s=10.0, tolerance_s=2.0, min_duration_s=20.0)
        == []
    )


def _leak(start_kpa: float) -> list[list[float]]:
    """0.083 kPa/s from `start_kpa`, a reading every 30 s for 180 s (hand-worked series)."""
    return [[t, start_kpa - 0.083 * t] for t in range(0, 181, 30)]


WORKING = {
    "min_vacuum_kpa": 20.8,
    "required_hold_s": 300.0,
    "interval_s": 30.0,
    "interval_tolerance_s": 10.0,
    "min_duration_s": 180.0,
    "max_extrapolation": 2.0,
    "min_r2": 0.8,
    "working_vacuum_kpa": 40.0,
    "start_tolerance_kpa": 2.0,
}


def test_a_test_started_far_above_the_working_vacuum_predicts_nothing() -> None:
    """From 95 kPa the leak would pass (capped at 360 s); the robot works at 40 kPa, where the
    same leak reaches 20.8 kPa in (25.06 - 20.8) / 0.083 = 51 s (hand)."""
    result = run("vacuum-decay", {**WORKING, "samples": _leak(95.0)})
    assert (result.verdict, result.governing, result.margin) == ("fail", "start", None)
    assert result.reason == (
        "The test started at 95 kPa but the robot works at 40 kPa: repeat it from the working"
        " vacuum (its first reading within 2 kPa of it)."
    )
    assert result.outputs["start_offset_kpa"] == pytest.approx(55.0, rel=1e-12)
    assert result.outputs["time_to_limit_s"] is None
    from_working = run("vacuum-decay", {**WORKING, "samples": _leak(40.0)})
    assert from_working.governing == "hold_time"
    assert from_working.outputs["time_to_limit_s"] == pytest.approx(
        (40.0 - 0.083 * 180 - 20.8) / 0.083, rel=1e-9
    )


def test_a_test_within_the_start_tolerance_is_judged_as_before() -> None:
    inside = run("vacuum-decay", {**WORKING, "samples": _leak(41.5)})
    without = {
        k: v for k, v in WORKING.items() if k not in ("working_vacuum_kpa", "start_tolerance_kpa")
    }
    assert inside.governing == "hold_time"
    assert inside.margin == run("vacuum-decay", {**without, "samples": _leak(41.5)}).margin
    assert inside.outputs["start_offset_kpa"] == pytest.approx(1.5, rel=1e-12)


def test_a_test_started_below_the_working_vacuum_is_refused_too() -> None:
    result = run("vacuum-decay", {**WORKING, "samples": _leak(37.0)})
    assert result.governing == "start"
    assert result.reason.startswith("The test started at 37 kPa but the robot works at 40 kPa")


def test_a_reading_below_the_limit_still_governs_a_test_off_its_start() -> None:
    result = run("vacuum-decay", {**WORKING, "samples": _leak(30.0)})
    assert result.governing == "sample_below_limit"


def test_the_working_vacuum_needs_its_tolerance() -> None:
    from compliance.engineering import CalcInputError

    with pytest.raises(CalcInputError) as caught:
        run("vacuum-decay", {**WORKING, "samples": _leak(40.0), "start_tolerance_kpa": None})
    assert caught.value.field == "start_tolerance_kpa"


QUIET = {
    "min_vacuum_kpa": 23.25,
    "required_hold_s": 300.0,
    "interval_s": 30.0,
    "interval_tolerance_s": 10.0,
    "min_duration_s": 180.0,
    "max_extrapolation": 2.0,
    "min_r2": 0.8,
    "gauge_resolution_kpa": 0.5,
}


def _every_30_s(*vacua: float) -> list[list[float]]:
    return [[30.0 * i, v] for i, v in enumerate(vacua)]


@pytest.mark.parametrize(
    "vacua",
    [(62, 62, 62, 62, 62, 62, 61.5), (62, 62, 61.5, 62, 61.5, 61.5, 61.5)],
)
def test_a_series_within_the_gauge_resolution_shows_no_measurable_leak(vacua) -> None:
    """R² 0.37 and 0.52 here: they measure the gauge's 0.5 kPa steps, not a leak. The fastest
    leak the readings allow is (0.5 + 0.5) kPa / 180 s; from 61.5 - 0.5 = 61 kPa the limit of
    23.25 kPa is (61 - 23.25) × 180 s = 6795 s away, capped at 2 × 180 s = 360 s (hand)."""
    without = {k: v for k, v in QUIET.items() if k != "gauge_resolution_kpa"}
    before = run("vacuum-decay", {**without, "samples": _every_30_s(*vacua)})
    assert before.governing == "fit_quality"
    result = run("vacuum-decay", {**QUIET, "samples": _every_30_s(*vacua)})
    assert result.verdict == "pass"
    assert result.outputs["fit"] == "gauge resolution"
    assert result.outputs["predicted_time_to_limit_s"] == pytest.approx(
        (61.0 - 23.25) * 180.0, rel=1e-12
    )
    assert result.outputs["time_to_limit_s"] == pytest.approx(360.0, rel=1e-12)
    assert result.margin == pytest.approx(360.0 / 300.0 - 1.0, rel=1e-12)


def test_within_the_resolution_near_the_limit_still_fails() -> None:
    """From 61.5 - 0.5 = 61 kPa to 60.5 kPa at 1 kPa per 180 s: 90 s (hand)."""
    result = run(
        "vacuum-decay",
        {
            **QUIET,
            "min_vacuum_kpa": 60.5,
            "samples": _every_30_s(62, 62, 61.5, 62, 61.5, 61.5, 61.5),
        },
    )
    assert result.verdict == "fail"
    assert result.outputs["time_to_limit_s"] == pytest.approx(90.0, rel=1e-12)


def test_a_step_up_within_the_resolution_is_not_a_rise() -> None:
    result = run("vacuum-decay", {**QUIET, "samples": _every_30_s(61.5, 61.5, 62, 62, 62, 62, 62)})
    assert result.verdict == "pass"
    assert result.governing == "hold_time"


def test_a_fall_beyond_the_resolution_is_judged_by_its_fits() -> None:
    scattered = _every_30_s(60, 57, 59.5, 56, 59, 57.5, 57)
    result = run("vacuum-decay", {**QUIET, "samples": scattered})
    assert result.governing == "fit_quality"
    assert result.outputs["spread_kpa"] == pytest.approx(4.0, rel=1e-12)

"""vacuum-decay: least-squares fits, the pessimistic prediction and the edge cases."""

from __future__ import annotations

import math

import numpy as np
import pint
import pytest
from hypothesis import given
from hypothesis import strategies as st

from compliance.engineering import run
from compliance.engineering.decay import fit_line

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
    samples = [[t, 80.0 * math.exp(-t / 1000.0)] for t in (0, 100, 200, 300)]
    out = run("vacuum-decay", vary(DECAY, samples=samples)).outputs
    assert out["exponential_tau_s"] == pytest.approx(1000.0, rel=1e-9)
    assert out["exponential_v0_kpa"] == pytest.approx(80.0, rel=1e-9)
    assert out["exponential_r2"] == pytest.approx(1.0, abs=1e-12)
    assert out["exponential_time_to_limit_s"] == pytest.approx(
        1000.0 * math.log(2.0) - 300.0, rel=1e-9
    )


def test_the_shorter_prediction_governs() -> None:
    """Pessimistic choice: the model that reaches the limit first governs."""
    for samples in (
        [[t, 80.0 * math.exp(-t / 1000.0)] for t in (0, 100, 200, 300)],
        [[0, 60.0], [60, 57.0], [120, 54.0], [180, 51.0]],
    ):
        out = run("vacuum-decay", vary(DECAY, samples=samples)).outputs
        lin, exp = out["linear_time_to_limit_s"], out["exponential_time_to_limit_s"]
        assert isinstance(lin, float) and isinstance(exp, float)
        assert out["time_to_limit_s"] == min(lin, exp)
        assert out["fit"] == ("linear" if lin <= exp else "exponential")


def test_short_hold_fails() -> None:
    result = run("vacuum-decay", vary(DECAY, required_hold_s=300.0))
    assert result.verdict == "fail"
    assert result.governing == "hold_time"
    assert result.margin == pytest.approx(220.0 / 300.0 - 1)


def test_leak_rate_in_mbar_litre_per_second() -> None:
    """Q = V·Δp/Δt (pressure-decay practice, from memory); units checked with pint."""
    out = run("vacuum-decay", DECAY).outputs
    q = (2.0 * ureg.L * 0.05 * ureg.kPa / ureg.s).to("mbar*L/s").magnitude
    assert out["leak_rate_mbar_l_per_s"] == pytest.approx(q, rel=1e-12)
    assert (
        run("vacuum-decay", vary(DECAY, system_volume_l=None)).outputs["leak_rate_mbar_l_per_s"]
        is None
    )


def test_flat_series_has_no_limit_and_passes() -> None:
    result = run("vacuum-decay", vary(DECAY, samples=[[0, 50.1], [60, 50.1], [120, 50.1]]))
    out = result.outputs
    assert result.verdict == "pass"
    assert out["time_to_limit_s"] is None
    assert out["fit"] == "none"
    assert out["leak_rate_kpa_per_min"] == 0.0
    assert out["linear_r2"] is None and out["exponential_r2"] is None
    assert result.margin is None
    assert any("unbounded" in step for step in result.steps)
    assert result.to_dict()["outputs"]["time_to_limit_s"] is None  # type: ignore[index]


def test_rising_series_passes_with_no_limit() -> None:
    result = run("vacuum-decay", vary(DECAY, samples=[[0, 50.0], [60, 51.0], [120, 52.5]]))
    assert result.verdict == "pass"
    assert result.outputs["time_to_limit_s"] is None
    leak = result.outputs["leak_rate_kpa_per_min"]
    assert isinstance(leak, float) and leak < 0


def test_sample_already_below_the_limit_fails() -> None:
    result = run("vacuum-decay", vary(DECAY, samples=[[0, 45.0], [30, 42.0], [60, 39.0]]))
    assert result.verdict == "fail"
    assert result.outputs["lowest_sample_kpa"] == 39.0
    assert any("sample 3" in step for step in result.steps)


def test_below_limit_fails_even_when_the_trend_rises() -> None:
    result = run("vacuum-decay", vary(DECAY, samples=[[0, 30.0], [60, 35.0], [120, 38.0]]))
    assert result.verdict == "fail"
    assert result.governing == "sample_below_limit"
    assert result.margin == pytest.approx(30.0 / 40.0 - 1)


def test_zero_reading_skips_the_exponential_fit() -> None:
    result = run("vacuum-decay", vary(DECAY, samples=[[0, 50.0], [60, 20.0], [120, 0.0]]))
    assert result.verdict == "fail"
    assert result.outputs["exponential_r2"] is None
    assert any("no logarithm" in step for step in result.steps)


@given(
    v0=st.floats(30.0, 100.0),
    rate=st.floats(0.0001, 0.2),
    extra=st.floats(0.001, 0.1),
)
def test_faster_leak_never_lengthens_the_hold(v0: float, rate: float, extra: float) -> None:
    times = [0.0, 30.0, 60.0, 90.0]

    def hold(r: float) -> float:
        samples = [[t, max(v0 - r * t, 0.0)] for t in times]
        out = run("vacuum-decay", {**DECAY, "samples": samples, "min_vacuum_kpa": 1.0}).outputs
        value = out["time_to_limit_s"]
        assert isinstance(value, float)
        return value

    assert hold(rate + extra) <= hold(rate) + 1e-9

"""suction-hold: clamp force, friction capacity and the least vacuum that holds."""

from __future__ import annotations

import math

import pint
import pytest
from hypothesis import assume, given
from hypothesis import strategies as st

from compliance.engineering import run
from compliance.engineering.constants import G

from .examples import SUCTION, vary

ureg = pint.UnitRegistry()


def suction(**changes: object) -> dict[str, object]:
    result = run("suction-hold", vary(SUCTION, **changes))
    return {"verdict": result.verdict, "margin": result.margin, **result.outputs}


def test_clamp_force_is_vacuum_times_area_times_cups() -> None:
    """Pressure × area (definition of pressure); units checked with pint: kPa × m² → N."""
    out = suction()
    area = math.pi * 0.12**2 / 4
    expected = (21.0 * ureg.kPa * area * ureg.m**2 * 4).to(ureg.N).magnitude
    assert out["effective_area_m2"] == pytest.approx(area, rel=1e-12)
    assert out["clamp_force_n"] == pytest.approx(expected, rel=1e-12)


def test_friction_capacity_and_demand_by_hand() -> None:
    """Coulomb friction: capacity = μ × normal force; demand = m·g + process force (g = 9.80665,
    ISO 80000-3)."""
    out = suction(wind_outward_n=100.0)
    clamp = 21e3 * math.pi * 0.12**2 / 4 * 4
    assert out["net_clamp_force_n"] == pytest.approx(clamp - 100.0)
    assert out["shear_capacity_n"] == pytest.approx(0.5 * (clamp - 100.0))
    assert out["shear_demand_n"] == pytest.approx(20.0 * 9.80665 + 30.0)
    assert out["achieved_safety_factor"] == pytest.approx(
        0.5 * (clamp - 100.0) / (20.0 * 9.80665 + 30.0)
    )


def test_passing_hold_margin_is_achieved_over_required_minus_one() -> None:
    result = run("suction-hold", SUCTION)
    achieved = result.outputs["achieved_safety_factor"]
    assert isinstance(achieved, float)
    assert result.verdict == "pass"
    assert result.governing == "safety_factor"
    assert result.margin == pytest.approx(achieved / 2.0 - 1.0)


def test_low_vacuum_fails_on_the_factor() -> None:
    result = run("suction-hold", vary(SUCTION, vacuum_kpa=15.0))
    assert result.verdict == "fail"
    assert result.governing == "safety_factor"
    assert result.margin is not None and result.margin < 0


def test_outward_pull_beyond_clamp_over_factor_fails() -> None:
    """Hand check: clamp 30 kPa × π·0.1²/4 × 4 = 942.5 N; allowed outward 942.5 / 2 = 471.2 N."""
    inputs = {"vacuum_kpa": 30, "cup_diameter_m": 0.1, "cups": 4, "friction": 0.8, "mass_kg": 10}
    ok = run("suction-hold", {**inputs, "wind_outward_n": 400})
    bad = run("suction-hold", {**inputs, "wind_outward_n": 500})
    assert ok.verdict == "pass"
    assert bad.verdict == "fail"
    assert bad.governing == "outward_pull"
    assert bad.outputs["clamp_force_n"] == pytest.approx(942.4778, rel=1e-6)
    assert bad.outputs["outward_limit_n"] == pytest.approx(471.2389, rel=1e-6)
    assert bad.margin == pytest.approx(942.4778 / 2 / 500 - 1, rel=1e-6)


def test_no_vacuum_holds_nothing() -> None:
    out = suction(vacuum_kpa=0.0)
    assert out["clamp_force_n"] == 0.0
    assert out["achieved_safety_factor"] == 0.0
    assert out["verdict"] == "fail"


def test_effective_area_ratio_scales_the_clamp() -> None:
    full = suction()["clamp_force_n"]
    assert isinstance(full, float)
    assert suction(effective_area_ratio=0.5)["clamp_force_n"] == pytest.approx(full / 2)


def test_default_safety_factor_is_two() -> None:
    assert run("suction-hold", SUCTION).inputs["safety_factor"] == 2.0


def test_unreachable_vacuum_is_explained() -> None:
    result = run("suction-hold", vary(SUCTION, cup_diameter_m=0.02, cups=1))
    min_vacuum = result.outputs["min_vacuum_kpa"]
    assert isinstance(min_vacuum, float) and min_vacuum > 101.325
    assert any("exceeds the atmosphere" in s for s in result.steps)


def test_min_vacuum_fed_back_meets_the_factor_exactly() -> None:
    out = suction(safety_factor=2.5)
    back = suction(safety_factor=2.5, vacuum_kpa=out["min_vacuum_kpa"])
    assert back["achieved_safety_factor"] == pytest.approx(2.5, rel=1e-12)


def test_min_vacuum_when_the_outward_check_governs() -> None:
    """With μ large the outward check sets the least vacuum: outward = clamp / factor."""
    base = {"cup_diameter_m": 0.1, "cups": 4, "friction": 2.0, "mass_kg": 1, "wind_outward_n": 500}
    first = run("suction-hold", {**base, "vacuum_kpa": 50})
    back = run("suction-hold", {**base, "vacuum_kpa": first.outputs["min_vacuum_kpa"]})
    assert back.outputs["outward_limit_n"] == pytest.approx(500.0, rel=1e-12)
    assert back.outputs["achieved_safety_factor"] >= 2.0  # type: ignore[operator]


vacuum = st.floats(min_value=0.0, max_value=101.325)
diameter = st.floats(min_value=0.01, max_value=0.5)
mu = st.floats(min_value=0.05, max_value=2.0)
mass = st.floats(min_value=0.5, max_value=200.0)
force = st.floats(min_value=0.0, max_value=2000.0)


@given(v1=vacuum, v2=vacuum, d=diameter, f=mu, m=mass, w=force)
def test_more_vacuum_never_lowers_capacity(
    v1: float, v2: float, d: float, f: float, m: float, w: float
) -> None:
    low, high = sorted((v1, v2))
    common = {"cup_diameter_m": d, "cups": 3, "friction": f, "mass_kg": m, "wind_outward_n": w}
    a = run("suction-hold", {**common, "vacuum_kpa": low}).outputs
    b = run("suction-hold", {**common, "vacuum_kpa": high}).outputs
    assert b["shear_capacity_n"] >= a["shear_capacity_n"]  # type: ignore[operator]
    assert b["achieved_safety_factor"] >= a["achieved_safety_factor"]  # type: ignore[operator]


@given(n1=st.integers(1, 40), n2=st.integers(1, 40), v=vacuum, d=diameter, f=mu, w=force)
def test_more_cups_never_lower_capacity(
    n1: int, n2: int, v: float, d: float, f: float, w: float
) -> None:
    low, high = sorted((n1, n2))
    common = {
        "vacuum_kpa": v,
        "cup_diameter_m": d,
        "friction": f,
        "mass_kg": 10,
        "wind_outward_n": w,
    }
    a = run("suction-hold", {**common, "cups": low}).outputs
    b = run("suction-hold", {**common, "cups": high}).outputs
    assert b["shear_capacity_n"] >= a["shear_capacity_n"]  # type: ignore[operator]


@given(w1=force, w2=force, v=vacuum, d=diameter)
def test_more_outward_pull_never_raises_capacity(w1: float, w2: float, v: float, d: float) -> None:
    low, high = sorted((w1, w2))
    common = {"vacuum_kpa": v, "cup_diameter_m": d, "cups": 4, "friction": 0.6, "mass_kg": 10}
    a = run("suction-hold", {**common, "wind_outward_n": low}).outputs
    b = run("suction-hold", {**common, "wind_outward_n": high}).outputs
    assert b["shear_capacity_n"] <= a["shear_capacity_n"]  # type: ignore[operator]


@given(d=diameter, n=st.integers(1, 12), f=mu, m=mass, w=force, p=force, sf=st.floats(1.0, 5.0))
def test_min_vacuum_reproduces_the_required_factor(
    d: float, n: int, f: float, m: float, w: float, p: float, sf: float
) -> None:
    common = {
        "cup_diameter_m": d,
        "cups": n,
        "friction": f,
        "mass_kg": m,
        "wind_outward_n": w,
        "process_force_n": p,
        "safety_factor": sf,
    }
    first = run("suction-hold", {**common, "vacuum_kpa": 50.0}).outputs
    min_vacuum = first["min_vacuum_kpa"]
    assert isinstance(min_vacuum, float)
    assume(min_vacuum <= 101.325)
    back = run("suction-hold", {**common, "vacuum_kpa": min_vacuum})
    achieved = back.outputs["achieved_safety_factor"]
    outward_limit = back.outputs["outward_limit_n"]
    assert isinstance(achieved, float) and isinstance(outward_limit, float)
    # Both checks hold and at least one is exactly at its limit.
    assert achieved >= sf * (1 - 1e-9)
    assert outward_limit >= w * (1 - 1e-9)
    assert math.isclose(achieved, sf, rel_tol=1e-9) or math.isclose(outward_limit, w, rel_tol=1e-9)
    assert back.margin is not None and abs(back.margin) < 1e-9


def test_weight_uses_standard_gravity() -> None:
    """g = 9.80665 m/s² (CGPM 1901), as pint defines standard_gravity."""
    assert (1 * ureg.standard_gravity).to("m/s**2").magnitude == G

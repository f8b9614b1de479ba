"""suction-hold: the clamp against weight, brush and wind on wet glass, zone by zone, and peel."""

from __future__ import annotations

import math

import pint
import pytest
from hypothesis import given
from hypothesis import strategies as st

from compliance.engineering import run
from compliance.engineering.constants import G
from compliance.engineering.suction import facade_zone

from .examples import SUCTION, vary

ureg = pint.UnitRegistry()


def suction(**changes: object) -> dict[str, object]:
    result = run("suction-hold", vary(SUCTION, **changes))
    return {"verdict": result.verdict, "margin": result.margin, **result.outputs}


def test_clamp_force_is_vacuum_times_area_times_cups() -> None:
    """F = p·A·n with A = π·d²/4 (hand); units checked with pint (kPa × m² → N)."""
    out = suction()
    area = math.pi * 0.12**2 / 4
    expected = (21 * ureg.kPa * area * ureg.m**2 * 4).to("N").magnitude
    assert out["clamp_force_n"] == pytest.approx(expected, rel=1e-12)


def test_still_air_is_the_old_friction_check() -> None:
    """No wind, one row: factor = μ·clamp / (m·g + brush) (Coulomb friction, hand)."""
    out = suction()
    clamp = 21000 * math.pi * 0.12**2 / 4 * 4
    assert out["achieved_safety_factor"] == pytest.approx(0.5 * clamp / (20 * G + 30), rel=1e-12)


def test_zones_along_a_side_wall() -> None:
    """EN 1991-1-4 7.2.2 (seen): e = min(b, 2h); zone A within e/5 of the windward corner,
    B to e, C beyond."""
    assert facade_zone(corner_distance_m=2, building_depth_m=24, building_height_m=150) == (
        "A",
        24,
    )
    assert facade_zone(corner_distance_m=4.8, building_depth_m=24, building_height_m=150)[0] == "B"
    assert facade_zone(corner_distance_m=24, building_depth_m=24, building_height_m=150)[0] == "C"
    assert facade_zone(corner_distance_m=9, building_depth_m=100, building_height_m=10) == ("B", 20)
    assert facade_zone(corner_distance_m=40, building_depth_m=None, building_height_m=10)[0] == "A"


def test_the_wind_pulls_harder_near_a_corner() -> None:
    """Suction qp·|cpe|·A with cpe,1 -1.4 in zone A and -1.1 in B (EN 1991-1-4 Table 7.1,
    from memory); the free-stream drag coefficient no longer sets the outward pull."""
    near = suction(peak_pressure_pa=500.0, corner_distance_m=1.0, building_depth_m=20.0)
    mid = suction(peak_pressure_pa=500.0, corner_distance_m=10.0, building_depth_m=20.0)
    assert near["facade_zone"] == "A" and mid["facade_zone"] == "B"
    assert near["wind_suction_n"] == pytest.approx(500 * 1.4 * 0.3, rel=1e-12)
    assert mid["wind_suction_n"] == pytest.approx(500 * 1.1 * 0.3, rel=1e-12)
    assert near["achieved_safety_factor"] < mid["achieved_safety_factor"]  # type: ignore[operator]


def test_wind_along_the_facade_and_on_the_hose_adds_to_the_in_plane_load() -> None:
    """In-plane load √((m·g + brush)² + (qp·Cd·A_side + qp·1.2·D·L/2)²): the weight acts down the
    wall, the wind along it; half of the hanging hose's drag reaches the robot (hand)."""
    out = suction(peak_pressure_pa=300.0, hose_od_mm=20.0, hanging_hose_m=50.0)
    along = 300 * 1.2 * 0.1 + 300 * 1.2 * 0.02 * 50 / 2
    assert out["in_plane_load_n"] == pytest.approx(math.hypot(20 * G + 30, along), rel=1e-12)


def test_the_wind_is_under_the_safety_factor() -> None:
    """The least vacuum holds SF × (outward + in-plane / μ), wind included: fed back, it meets
    the factor exactly."""
    windy = {"peak_pressure_pa": 800.0, "safety_factor": 2.5}
    out = suction(**windy)
    back = suction(**windy, vacuum_kpa=out["min_vacuum_kpa"])
    assert back["achieved_safety_factor"] == pytest.approx(2.5, rel=1e-12)


def test_the_peel_of_an_offset_centre_of_mass_loads_the_top_row() -> None:
    """Moment m·g·e about the bottom row, taken by the top row s above it: m·g·e/s (statics)."""
    out = suction(cup_rows=2, row_spacing_m=0.4, com_offset_m=0.2)
    assert out["peel_n"] == pytest.approx(20 * G * 0.2 / 0.4, rel=1e-12)
    failing = run("suction-hold", vary(SUCTION, cup_rows=2, row_spacing_m=0.05, com_offset_m=1.0))
    assert failing.verdict == "fail"
    assert failing.governing == "top_row"
    assert failing.reason.startswith("The top row of cups would be pulled with about")


def test_wet_glass_friction_is_named_and_governs() -> None:
    result = run("suction-hold", vary(SUCTION, wet_glass_friction=0.1))
    assert result.verdict == "fail"
    assert result.reason.endswith("on wet glass, a factor of 0.42 where 2 is required.")


def test_no_vacuum_holds_nothing() -> None:
    out = suction(vacuum_kpa=0.0)
    assert out["clamp_force_n"] == 0.0
    assert out["verdict"] == "fail"


def test_effective_area_ratio_scales_the_clamp() -> None:
    full = suction()["clamp_force_n"]
    assert isinstance(full, float)
    assert suction(effective_area_ratio=0.5)["clamp_force_n"] == pytest.approx(full / 2)


def test_unreachable_vacuum_is_explained() -> None:
    result = run("suction-hold", vary(SUCTION, cup_diameter_m=0.02, cups=1))
    min_vacuum = result.outputs["min_vacuum_kpa"]
    assert isinstance(min_vacuum, float) and min_vacuum > 101.325
    assert any("exceeds the atmosphere" in s for s in result.steps)


def test_weight_uses_standard_gravity() -> None:
    """g = 9.80665 m/s² (CGPM 1901), as pint defines standard_gravity."""
    assert (1 * ureg.standard_gravity).to("m/s**2").magnitude == G


vacua = st.floats(1.0, 100.0)
pressures = st.floats(0.0, 2000.0)


@given(v1=vacua, v2=vacua, qp=pressures)
def test_more_vacuum_never_lowers_the_factor(v1: float, v2: float, qp: float) -> None:
    low, high = sorted((v1, v2))
    a = suction(vacuum_kpa=low, peak_pressure_pa=qp)["achieved_safety_factor"]
    b = suction(vacuum_kpa=high, peak_pressure_pa=qp)["achieved_safety_factor"]
    assert b >= a  # type: ignore[operator]


@given(q1=pressures, q2=pressures, x=st.floats(0.0, 100.0))
def test_more_wind_never_raises_the_factor(q1: float, q2: float, x: float) -> None:
    low, high = sorted((q1, q2))
    a = suction(peak_pressure_pa=low, corner_distance_m=x)["achieved_safety_factor"]
    b = suction(peak_pressure_pa=high, corner_distance_m=x)["achieved_safety_factor"]
    assert b <= a  # type: ignore[operator]


@given(qp=pressures, sf=st.floats(1.0, 5.0), rows=st.integers(1, 4))
def test_min_vacuum_reproduces_the_required_factor(qp: float, sf: float, rows: int) -> None:
    common = {
        "peak_pressure_pa": qp,
        "safety_factor": sf,
        "cup_rows": rows,
        "row_spacing_m": 0.3 if rows > 1 else 0.0,
        "com_offset_m": 0.1,
    }
    first = suction(**common)
    least = first["min_vacuum_kpa"]
    assert isinstance(least, float)
    back = run("suction-hold", vary(SUCTION, **common, vacuum_kpa=min(least, 101.325)))
    if least <= 101.325:
        assert back.margin == pytest.approx(0.0, abs=1e-9)
    else:
        assert back.verdict == "fail"


def test_a_typed_calm_cannot_lift_the_hold_above_the_stop_work_gust() -> None:
    """Work goes on until the stop-work gust, so the hold is checked at qp = ½·ρ·v² of that gust
    (EN 1991-1-4 4.5 with the gust's speed; ρ 1.225 kg/m³, ISA sea level, from memory): a
    reading of calm gives the same margin as a reading at the gust itself."""
    calm = suction(peak_pressure_pa=0.0, stop_work_gust_ms=14.0)
    at_gust = suction(peak_pressure_pa=0.5 * 1.225 * 14.0**2, stop_work_gust_ms=14.0)
    assert calm["wind_governing"] == "stop-work gust"
    assert calm["pressure_used_pa"] == pytest.approx(0.5 * 1.225 * 14.0**2, rel=1e-12)
    assert calm["margin"] == pytest.approx(at_gust["margin"], rel=1e-12)
    assert calm["margin"] < suction(peak_pressure_pa=0.0)["margin"]


def test_a_reading_above_the_stop_work_gust_governs() -> None:
    """The higher pressure governs (hand: ½ × 1.225 × 10² = 61.25 Pa < 300 Pa)."""
    out = suction(peak_pressure_pa=300.0, stop_work_gust_ms=10.0)
    assert out["wind_governing"] == "wind reading"
    assert out["pressure_used_pa"] == 300.0
    assert out["stop_work_pressure_pa"] == pytest.approx(61.25, rel=1e-12)


def test_the_working_says_which_wind_governed() -> None:
    result = run("suction-hold", vary(SUCTION, peak_pressure_pa=0.0, stop_work_gust_ms=14.0))
    assert result.steps[0].startswith("wind: qp at the stop-work gust of 14 m/s")
    assert result.steps[0].endswith("the stop-work gust governs, since work goes on until it")
    weak = run(
        "suction-hold", vary(SUCTION, vacuum_kpa=5.0, peak_pressure_pa=0.0, stop_work_gust_ms=14.0)
    )
    assert "and the wind at the stop-work gust of 14 m/s need" in weak.reason

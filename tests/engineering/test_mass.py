"""suspended-mass: what hangs from the tether against the lesser limit."""

from __future__ import annotations

import math

import pint
import pytest
from hypothesis import given
from hypothesis import strategies as st

from compliance.engineering import run
from compliance.engineering.water_properties import density_kgm3

from .examples import MASS, vary

ureg = pint.UnitRegistry()


def test_totals_by_hand() -> None:
    """Hand sum: 30 kg robot + water 998.2 × π·0.0127²/4 × 45 + 0.2 × 45 + 0.08 × 45."""
    result = run("suspended-mass", MASS)
    water = 998.2 * math.pi * 0.0127**2 / 4 * 45
    total = 30.0 + water + 9.0 + 3.6
    assert result.outputs["water_kg"] == pytest.approx(water, rel=1e-12)
    assert result.outputs["total_kg"] == pytest.approx(total, rel=1e-12)
    assert result.outputs["rated_load_kg"] == 100.0
    assert result.outputs["margin_kg"] == pytest.approx(100.0 - total, rel=1e-12)
    assert result.verdict == "pass"
    assert result.margin == pytest.approx(
        min(100.0 / total - 1, run_margin_of_tether(total)), rel=1e-12
    )
    assert result.inputs["water_density_kgm3"] == 998.2


def run_margin_of_tether(total_kg: float) -> float:
    """WLL / √((DF·m·g)² + (½·ρ·v²·Cd·d·L)²) - 1: drag equation (ISA density 1.225 kg/m³,
    Cd 1.2 for a circular cylinder across the flow, from memory: Hoerner, Fluid-Dynamic Drag)."""
    drag = 0.5 * 1.225 * 14.0**2 * 1.2 * 0.011 * 45.0
    return 2000.0 / math.hypot(1.25 * total_kg * 9.80665, drag) - 1


def test_the_dynamic_factor_and_the_wind_load_the_tether() -> None:
    """Units with pint: kg × standard gravity → N; the drag adds across the weight."""
    out = run("suspended-mass", MASS).outputs
    total = out["total_kg"]
    assert isinstance(total, float)
    weight = (total * ureg.kg * ureg.standard_gravity).to("kN").magnitude
    assert out["dynamic_load_kn"] == pytest.approx(1.25 * weight, rel=1e-12)
    drag = 0.5 * 1.225 * 14.0**2 * 1.2 * 0.011 * 45.0
    assert out["tether_wind_n"] == pytest.approx(drag, rel=1e-12)
    assert out["tether_tension_kn"] == pytest.approx(
        math.hypot(1.25 * weight, drag / 1000), rel=1e-12
    )


def test_weak_tether_fails_and_governs() -> None:
    result = run("suspended-mass", vary(MASS, tether_wll_kn=0.4))
    assert result.verdict == "fail"
    assert result.governing == "tether_wll"
    assert result.reason.startswith("With starts and stops (× 1.25) and a 14 m/s gust")


def test_the_maker_rated_load_replaces_the_profile_placeholder() -> None:
    """The profile's 250 kg placeholder acted as a real limit; the maker's rated load governs."""
    result = run("suspended-mass", vary(MASS, rated_load_kg=40.0))
    assert result.verdict == "fail"
    assert result.governing == "rated_load"
    assert result.reason.endswith("the maker rates it for 40 kg.")


def test_temperature_sets_the_water_density() -> None:
    out = run("suspended-mass", vary(MASS, water_temp_c=50.0)).outputs
    assert out["water_density_kgm3"] == pytest.approx(density_kgm3(50.0))


def test_payload_adds_one_for_one() -> None:
    base = run("suspended-mass", MASS).outputs["total_kg"]
    more = run("suspended-mass", vary(MASS, payload_kg=5.0)).outputs["total_kg"]
    assert more == pytest.approx(base + 5.0)  # type: ignore[operator]


@given(l1=st.floats(0.0, 300.0), l2=st.floats(0.0, 300.0))
def test_more_hose_never_lowers_the_total(l1: float, l2: float) -> None:
    low, high = sorted((l1, l2))
    a = run("suspended-mass", vary(MASS, hose_length_m=low)).outputs["total_kg"]
    b = run("suspended-mass", vary(MASS, hose_length_m=high)).outputs["total_kg"]
    assert b >= a  # type: ignore[operator]

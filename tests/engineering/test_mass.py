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
    assert result.outputs["limit_kg"] == 100.0
    assert result.outputs["margin_kg"] == pytest.approx(100.0 - total, rel=1e-12)
    assert result.verdict == "pass"
    assert result.governing == "mass_limit"
    assert result.margin == pytest.approx(100.0 / total - 1, rel=1e-12)
    assert result.inputs["water_density_kgm3"] == 998.2


def test_tether_wll_as_mass_uses_standard_gravity() -> None:
    """WLL in kN as a mass: kN / standard gravity → kg (pint)."""
    out = run("suspended-mass", vary(MASS, tether_wll_kn=0.4)).outputs
    expected = (0.4 * ureg.kN / ureg.standard_gravity).to("kg").magnitude
    assert out["tether_wll_kg"] == pytest.approx(expected, rel=1e-12)
    assert out["limit_kg"] == pytest.approx(expected, rel=1e-12)


def test_weak_tether_fails_and_governs() -> None:
    result = run("suspended-mass", vary(MASS, tether_wll_kn=0.4))
    assert result.verdict == "fail"
    assert result.governing == "tether_wll"
    margin_kg = result.outputs["margin_kg"]
    assert isinstance(margin_kg, float) and margin_kg < 0


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

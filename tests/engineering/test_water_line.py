"""water-line: static head, Darcy-Weisbach friction loss and the valve pressure."""

from __future__ import annotations

import math

import fluids
import fluids.friction
import pint
import pytest
from hypothesis import given
from hypothesis import strategies as st
from iapws import IAPWS95

from compliance.engineering import run
from compliance.engineering.water import colebrook, friction_factor

from .examples import WATER, vary

ureg = pint.UnitRegistry()


def water(**changes: object) -> dict[str, object]:
    result = run("water-line", vary(WATER, **changes))
    return {"verdict": result.verdict, "margin": result.margin, **result.outputs}


@pytest.mark.parametrize("reynolds", [2300.0, 4000.0, 1e4, 1e5, 1e6, 1e8])
@pytest.mark.parametrize("relative_roughness", [0.0, 1e-6, 1e-4, 1e-3, 1e-2, 0.05])
def test_colebrook_against_fluids(reynolds: float, relative_roughness: float) -> None:
    """fluids.friction.Colebrook solves Colebrook-White exactly (Lambert W); ours iterates."""
    expected = fluids.friction.Colebrook(reynolds, relative_roughness)
    assert colebrook(reynolds, relative_roughness) == pytest.approx(expected, rel=1e-12)


@pytest.mark.parametrize("reynolds", [1e4, 1e5, 1e6])
def test_turbulent_factor_against_clamond(reynolds: float) -> None:
    """fluids.friction_factor (Clamond's solution of Colebrook-White, the library default)."""
    f, regime = friction_factor(reynolds, 1e-4)
    assert regime == "turbulent"
    assert f == pytest.approx(fluids.friction_factor(Re=reynolds, eD=1e-4), rel=1e-12)


def test_swamee_jain_is_close_but_not_used() -> None:
    """Swamee-Jain (1976) is within about 1-2 % of Colebrook-White (fluids.Swamee_Jain_1976)."""
    sj = fluids.friction.Swamee_Jain_1976(1e5, 1e-4)
    assert colebrook(1e5, 1e-4) == pytest.approx(sj, rel=0.02)


def test_laminar_is_64_over_re() -> None:
    """Hagen-Poiseuille: f = 64/Re (fluids.friction.friction_laminar)."""
    f, regime = friction_factor(1000.0, 1e-3)
    assert regime == "laminar"
    assert f == pytest.approx(fluids.friction.friction_laminar(1000.0), rel=1e-15)


def test_transitional_band_takes_the_larger_factor() -> None:
    """Our convention (no source): between Re 2300 and 4000 the larger of 64/Re and Colebrook
    is used, so the loss is never under-stated; Colebrook is the larger throughout the band."""
    for reynolds in (2300.0, 3000.0, 3999.0):
        f, regime = friction_factor(reynolds, 0.0)
        assert regime == "transitional"
        assert f == pytest.approx(
            max(64 / reynolds, fluids.friction.Colebrook(reynolds, 0.0)), rel=1e-12
        )
        assert f >= 64 / reynolds


def test_static_pressure_is_rho_g_h() -> None:
    """Hydrostatics p = ρ·g·h with IAPWS-95 density at 15 °C; units checked with pint."""
    rho = IAPWS95(T=288.15, P=0.101325).rho
    expected = (rho * ureg("kg/m**3") * ureg.standard_gravity * 40 * ureg.m).to("kPa").magnitude
    assert water()["static_foot_kpa"] == pytest.approx(expected, rel=1e-5)
    assert water(top_head_m=10.0)["static_top_kpa"] == pytest.approx(expected / 4, rel=1e-5)


def test_friction_loss_against_fluids_one_phase_dp() -> None:
    """fluids.friction.one_phase_dP (Darcy-Weisbach with Clamond's Colebrook) with IAPWS-95
    properties; the tolerance covers our correlations' 0.05 % viscosity deviation."""
    state = IAPWS95(T=288.15, P=0.101325)
    flow_m3s = 4.0 / 60000
    dp = fluids.friction.one_phase_dP(
        m=flow_m3s * state.rho, rho=state.rho, mu=state.mu, D=0.0127, roughness=1.5e-6, L=45.0
    )
    out = water()
    assert out["flow_regime"] == "turbulent"
    assert out["friction_loss_kpa"] == pytest.approx(dp / 1000, rel=1e-3)
    assert out["reynolds"] == pytest.approx(
        fluids.Reynolds(
            V=flow_m3s / (math.pi * 0.0127**2 / 4), D=0.0127, rho=state.rho, mu=state.mu
        ),
        rel=1e-3,
    )
    assert out["flowing_top_kpa"] == pytest.approx(
        out["static_top_kpa"] - out["friction_loss_kpa"]  # type: ignore[operator]
    )


def test_laminar_loss_is_hagen_poiseuille() -> None:
    """Hagen-Poiseuille Δp = 128·μ·L·Q/(π·D⁴) (White, Fluid Mechanics, laminar pipe flow;
    from memory), with our own μ."""
    out = water(flow_lpm=0.5)
    assert out["flow_regime"] == "laminar"
    mu = out["water_viscosity_pa_s"]
    assert isinstance(mu, float)
    q = 0.5 / 60000
    expected = 128 * mu * 45.0 * q / (math.pi * 0.0127**4) / 1000
    assert out["friction_loss_kpa"] == pytest.approx(expected, rel=1e-12)


def test_max_drop_and_water_in_hose() -> None:
    out = water()
    rho = out["water_density_kgm3"]
    assert isinstance(rho, float)
    surge = out["surge_kpa"]
    assert isinstance(surge, float)
    assert out["max_drop_m"] == pytest.approx((1000 - surge) * 1e3 / (rho * 9.80665), rel=1e-12)
    assert out["water_in_hose_kg"] == pytest.approx(rho * math.pi * 0.0127**2 / 4 * 45, rel=1e-12)


def test_static_over_the_rating_fails() -> None:
    out = water(drop_m=120.0)
    assert out["verdict"] == "fail"
    assert run("water-line", vary(WATER, drop_m=120.0)).governing == "hose_rating"


def test_friction_eats_the_head_and_fails_at_the_nozzle() -> None:
    result = run(
        "water-line",
        vary(
            WATER,
            drop_m=10.0,
            top_head_m=10.0,
            hose_id_mm=10.0,
            hose_length_m=60.0,
            flow_lpm=8.0,
        ),
    )
    flowing = result.outputs["flowing_top_kpa"]
    assert isinstance(flowing, float) and flowing < 0
    assert result.verdict == "fail"
    assert result.governing == "nozzle_pressure"
    assert any("the supply cannot drive this flow" in s for s in result.steps)


def test_creeping_flow_stays_finite() -> None:
    out = water(flow_lpm=1e-300)
    assert out["friction_loss_kpa"] == pytest.approx(0.0, abs=1e-200)
    assert out["flowing_top_kpa"] == pytest.approx(out["static_top_kpa"])


def test_no_flow_has_no_loss() -> None:
    out = water(flow_lpm=0.0)
    assert out["friction_loss_kpa"] == 0.0
    assert out["friction_factor"] is None
    assert out["flowing_top_kpa"] == out["static_top_kpa"]


def test_tank_level_valve_has_no_static_margin_limit() -> None:
    result = run("water-line", vary(WATER, drop_m=0.0, top_head_m=0.0, flow_lpm=0.0))
    assert result.verdict == "fail"  # no head at all: the nozzles get nothing
    assert result.governing == "nozzle_pressure"


lengths = st.floats(0.5, 300.0)
flows = st.floats(0.0, 60.0)


@given(l1=lengths, l2=lengths, q=flows, temp=st.floats(0.0, 60.0))
def test_longer_hose_never_lowers_friction_loss(
    l1: float, l2: float, q: float, temp: float
) -> None:
    low, high = sorted((l1, l2))
    a = water(hose_length_m=low, flow_lpm=q, water_temp_c=temp)
    b = water(hose_length_m=high, flow_lpm=q, water_temp_c=temp)
    assert b["friction_loss_kpa"] >= a["friction_loss_kpa"]  # type: ignore[operator]


@given(q1=flows, q2=flows, d=st.floats(5.0, 50.0), e=st.floats(0.0, 0.2))
def test_more_flow_never_lowers_friction_loss(q1: float, q2: float, d: float, e: float) -> None:
    low, high = sorted((q1, q2))
    a = water(flow_lpm=low, hose_id_mm=d, roughness_mm=e)
    b = water(flow_lpm=high, hose_id_mm=d, roughness_mm=e)
    assert b["friction_loss_kpa"] >= a["friction_loss_kpa"]  # type: ignore[operator]


@given(h1=st.floats(0.0, 300.0), h2=st.floats(0.0, 300.0))
def test_deeper_valve_never_lowers_static_pressure(h1: float, h2: float) -> None:
    low, high = sorted((h1, h2))
    higher = water(drop_m=high, top_head_m=0.0)["static_foot_kpa"]
    lower = water(drop_m=low, top_head_m=0.0)["static_foot_kpa"]
    assert higher >= lower  # type: ignore[operator]


@given(re=st.floats(4000.0, 1e8), rr=st.floats(0.0, 0.05))
def test_colebrook_against_fluids_everywhere(re: float, rr: float) -> None:
    """fluids.friction.Colebrook across the turbulent range."""
    assert colebrook(re, rr) == pytest.approx(fluids.friction.Colebrook(re, rr), rel=1e-10)


def test_the_nozzles_are_checked_at_the_top_of_the_drop() -> None:
    """A roof tank 3 m above the valve at the top of an 80 m drop gives about 29 kPa there
    (ρ·g·h, hydrostatics): the nozzles' 150 kPa fails, though the foot has 780 kPa."""
    result = run("water-line", vary(WATER, drop_m=80.0, top_head_m=3.0))
    assert result.governing == "nozzle_pressure"
    assert result.verdict == "fail"
    assert result.reason.startswith("At the top of the drop the nozzles would get about")


def test_a_flow_the_supply_cannot_drive_is_not_given_as_a_pressure_below_zero() -> None:
    """With no head and no pump at the top, every friction loss leaves the top below zero:
    "the nozzles would get about -47.7 kPa" read as a figure. It says no water arrives."""
    result = run("water-line", vary(WATER, top_head_m=0.0, supply_kpa=0.0))
    assert result.outputs["flowing_top_kpa"] < 0.0  # type: ignore[operator]
    assert result.governing == "nozzle_pressure" and result.verdict == "fail"
    assert result.reason.startswith("No water would reach the nozzles at the top of the drop:")
    assert "-" not in result.reason


def test_the_surge_of_a_fast_valve_counts_at_the_foot() -> None:
    """Joukowsky Δp = ρ·a·v (from memory, pressure surge in pipes) for a valve that shuts
    within the wave's round trip 2L/a; slower closure gives Δp·(2L/a)/t_c."""
    fast = run("water-line", vary(WATER, valve_closure_s=0.1)).outputs
    rho, v = fast["water_density_kgm3"], fast["velocity_ms"]
    assert isinstance(rho, float) and isinstance(v, float)
    assert fast["surge_kpa"] == pytest.approx(rho * 300.0 * v / 1000, rel=1e-12)
    slow = run("water-line", vary(WATER, valve_closure_s=3.0)).outputs
    assert slow["surge_kpa"] == pytest.approx(rho * 300.0 * v / 1000 * (90.0 / 300.0) / 3.0)
    assert fast["peak_foot_kpa"] == pytest.approx(fast["static_foot_kpa"] + fast["surge_kpa"])  # type: ignore[operator]


def test_a_surge_over_the_rating_fails_the_hose() -> None:
    result = run(
        "water-line",
        vary(
            WATER, drop_m=70.0, top_head_m=2.0, supply_kpa=250.0, flow_lpm=8.0, valve_closure_s=0.1
        ),
    )
    static = result.outputs["static_foot_kpa"]
    assert isinstance(static, float) and static < 1000.0
    assert result.governing == "hose_rating"
    assert result.verdict == "fail"


def test_fittings_lose_k_velocity_heads() -> None:
    """Minor losses Δp = K·ρ·v²/2 (Crane Technical Paper 410, resistance coefficients; from
    memory)."""
    out = water(fittings_k=6.0)
    rho, v = out["water_density_kgm3"], out["velocity_ms"]
    assert isinstance(rho, float) and isinstance(v, float)
    assert out["fittings_loss_kpa"] == pytest.approx(6.0 * rho * v * v / 2 / 1000, rel=1e-12)

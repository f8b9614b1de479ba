"""arrest-load: energy balance of a linear-elastic safety line catching a falling robot."""

from __future__ import annotations

import math

import pint
import pytest
from hypothesis import given
from hypothesis import strategies as st

from compliance.engineering import run
from compliance.engineering.arrest import peak_force_n
from compliance.engineering.constants import G

from .examples import ARREST, vary

ureg = pint.UnitRegistry()


def arrest(**changes: object) -> dict[str, object]:
    result = run("arrest-load", vary(ARREST, **changes))
    return {"verdict": result.verdict, "margin": result.margin, **result.outputs}


def test_load_taken_up_with_no_slack_doubles_the_static_force() -> None:
    """Work-energy principle for a linear spring (Meriam and Kraige, Engineering Mechanics:
    Dynamics, chapter on work and energy; from memory): a load applied suddenly to a linear
    spring reaches twice its static deflection, so F = 2·m·g when h = 0, whatever the stiffness."""
    for ea in (1.0, 150.0, 1e6):
        out = arrest(free_fall_m=0.0, line_ea_kn=ea)
        assert out["peak_force_kn"] == pytest.approx(2 * 25.0 * G / 1000, rel=1e-12)
        assert out["dynamic_factor"] == pytest.approx(2.0, rel=1e-12)


def test_energy_is_conserved_at_peak_stretch() -> None:
    """Energy balance: m·g·(h + x) = ½·k·x² at the lowest point."""
    out = arrest()
    k = 150e3 / 30.0
    x = out["line_stretch_m"]
    assert isinstance(x, float)
    assert 25.0 * G * (0.5 + x) == pytest.approx(0.5 * k * x**2, rel=1e-12)
    assert out["total_drop_m"] == pytest.approx(0.5 + x, rel=1e-12)


def test_matches_the_fall_factor_form_of_the_rope_impact_formula() -> None:
    """Rope impact force in fall-factor form, F = mg + √((mg)² + 2·mg·EA·(h/L)), as used for
    dynamic rope tests (from memory: the classical belay analysis); the same model restated."""
    m, h, length, ea = 80.0, 2.0, 4.0, 20e3
    mg = m * G
    expected = mg + math.sqrt(mg**2 + 2 * mg * ea * (h / length))
    out = run(
        "arrest-load",
        vary(
            ARREST,
            mass_kg=m,
            free_fall_m=h,
            line_length_m=length,
            shortest_line_m=length,
            line_ea_kn=ea / 1000,
        ),
    ).outputs
    assert out["peak_force_kn"] == pytest.approx(expected / 1000, rel=1e-12)


def test_very_stiff_line_tends_to_the_rigid_limit() -> None:
    """As k grows F ≈ √(2·m·g·k·h): a rigid line gives an unbounded force (physics)."""
    mg = 25.0 * G
    for k in (1e8, 1e10, 1e12):
        force = peak_force_n(weight_n=mg, stiffness_n_per_m=k, free_fall_m=0.5)
        # F / √(2·m·g·k·h) - 1 ≈ √(m·g / (2·k·h)), which vanishes as k grows.
        bound = 1.01 * math.sqrt(mg / (2 * k * 0.5))
        assert force / math.sqrt(2 * mg * k * 0.5) - 1 == pytest.approx(0.0, abs=bound)


def test_very_soft_line_tends_to_twice_the_weight() -> None:
    """As k → 0 the term 2·m·g·k·h vanishes and F → 2·m·g (limit of the formula)."""
    mg = 25.0 * G
    assert peak_force_n(weight_n=mg, stiffness_n_per_m=1e-9, free_fall_m=1.0) == pytest.approx(
        2 * mg, rel=1e-9
    )


def test_elongation_form_gives_the_same_stiffness() -> None:
    """EA = load / strain: 3 % elongation at 4.5 kN is EA = 150 kN (hand calculation)."""
    by_ea = arrest()
    by_elongation = run(
        "arrest-load",
        vary(ARREST, line_ea_kn=None, elongation_pct=3.0, elongation_load_kn=4.5),
    ).outputs
    assert by_elongation["line_ea_kn"] == pytest.approx(150.0, rel=1e-12)
    assert by_elongation["peak_force_kn"] == pytest.approx(by_ea["peak_force_kn"], rel=1e-12)


def test_factors_and_verdict() -> None:
    out = arrest()
    peak = out["peak_force_kn"]
    assert isinstance(peak, float)
    assert out["anchor_factor"] == pytest.approx(15.0 / peak)
    assert out["line_factor"] == pytest.approx(22.0 / peak)
    assert out["verdict"] == "pass"
    assert out["margin"] == pytest.approx(15.0 / peak / 2.0 - 1)


def test_stiff_line_and_long_slack_fail_on_the_anchor() -> None:
    """OSHA 1926.502(d)(15) anchor of 22.2 kN with a safety factor of two; 100 kg falling 2 m
    onto a 100 kN/m line: F = 980.665 + √(980.665² + 2 × 980.665 × 100000 × 2) = 20 811 N (hand
    calculation), so the anchor factor 22.2 / 20.81 = 1.07 is short of 2."""
    result = run(
        "arrest-load",
        vary(
            ARREST,
            mass_kg=100.0,
            free_fall_m=2.0,
            line_length_m=5.0,
            shortest_line_m=5.0,
            line_ea_kn=500.0,
            anchor_rating_kn=22.2,
            line_mbs_kn=60.0,
        ),
    )
    assert result.outputs["peak_force_kn"] == pytest.approx(20.811, rel=1e-4)
    assert result.verdict == "fail"
    assert result.governing == "anchor"


def test_max_slack_is_zero_when_no_slack_is_safe() -> None:
    out = arrest(mass_kg=200.0, anchor_rating_kn=6.0)
    assert out["allowed_force_kn"] == pytest.approx(3.0)
    assert out["max_slack_m"] == 0.0


def test_max_slack_fed_back_gives_the_required_factor() -> None:
    out = arrest()
    back = arrest(free_fall_m=out["max_slack_m"])
    assert back["anchor_factor"] == pytest.approx(2.0, rel=1e-9)
    assert back["margin"] == pytest.approx(0.0, abs=1e-9)


def test_force_units_with_pint() -> None:
    """Units: kN/m × m → kN, kg × standard gravity → N."""
    assert (150 * ureg.kN / (30 * ureg.m) * (1 * ureg.m)).to("kN").magnitude == pytest.approx(
        arrest()["line_stiffness_kn_per_m"]
    )
    assert (25 * ureg.kg * ureg.standard_gravity).to("kN").magnitude == pytest.approx(
        arrest()["static_force_kn"], rel=1e-12
    )


masses = st.floats(1.0, 300.0)
falls = st.floats(0.0, 5.0)
stiffness = st.floats(1.0, 5000.0)
lengths = st.floats(0.5, 200.0)


@given(m=masses, h1=falls, h2=falls, ea=stiffness, length=lengths)
def test_more_slack_never_lowers_peak_force(
    m: float, h1: float, h2: float, ea: float, length: float
) -> None:
    low, high = sorted((h1, h2))
    a = run(
        "arrest-load",
        vary(
            ARREST,
            mass_kg=m,
            free_fall_m=low,
            line_ea_kn=ea,
            line_length_m=length,
            shortest_line_m=length,
        ),
    ).outputs
    b = run(
        "arrest-load",
        vary(
            ARREST,
            mass_kg=m,
            free_fall_m=high,
            line_ea_kn=ea,
            line_length_m=length,
            shortest_line_m=length,
        ),
    ).outputs
    assert b["peak_force_kn"] >= a["peak_force_kn"]  # type: ignore[operator]


@given(m=masses, h=falls, ea1=stiffness, ea2=stiffness, length=lengths)
def test_stiffer_line_never_lowers_peak_force(
    m: float, h: float, ea1: float, ea2: float, length: float
) -> None:
    low, high = sorted((ea1, ea2))
    a = run(
        "arrest-load",
        vary(
            ARREST,
            mass_kg=m,
            free_fall_m=h,
            line_ea_kn=low,
            line_length_m=length,
            shortest_line_m=length,
        ),
    ).outputs
    b = run(
        "arrest-load",
        vary(
            ARREST,
            mass_kg=m,
            free_fall_m=h,
            line_ea_kn=high,
            line_length_m=length,
            shortest_line_m=length,
        ),
    ).outputs
    assert b["peak_force_kn"] >= a["peak_force_kn"]  # type: ignore[operator]


@given(
    m=masses,
    h=falls,
    ea=stiffness,
    length=lengths,
    anchor=st.floats(1.0, 50.0),
    mbs=st.floats(1.0, 50.0),
)
def test_max_slack_fed_back_meets_the_governing_factor(
    m: float, h: float, ea: float, length: float, anchor: float, mbs: float
) -> None:
    common = vary(
        ARREST,
        mass_kg=m,
        line_ea_kn=ea,
        line_length_m=length,
        shortest_line_m=length,
        clearance_below_m=1e9,
        anchor_rating_kn=anchor,
        line_mbs_kn=mbs,
    )
    first = run("arrest-load", {**common, "free_fall_m": h}).outputs
    slack = first["max_slack_m"]
    assert isinstance(slack, float)
    back = run("arrest-load", {**common, "free_fall_m": slack})
    if slack > 0:
        assert back.margin == pytest.approx(0.0, abs=1e-9)
    else:
        assert back.verdict == "fail" or back.margin == pytest.approx(0.0, abs=1e-9)


RIG = {
    "mass_kg": 58.0,
    "free_fall_m": 0.4,
    "shortest_line_m": 3.0,
    "line_length_m": 146.0,
    "line_ea_kn": 600.0,
    "anchor_rating_kn": 15.0,
    "line_mbs_kn": 40.0,
    "anchor_safety_factor": 2.0,
    "line_safety_factor": 2.0,
    "clearance_below_m": 3.0,
}


def test_the_top_of_the_drop_governs_the_anchor_load() -> None:
    """58 kg on 0.4 m of slack, EA 600 kN: F = m·g + √((m·g)² + 2·m·g·(EA/L)·h) gives 2.05 kN
    on 146 m of line and 10.1 kN on 3 m (hand calculation of the energy balance). Checked only
    at the full length, a 15 kN anchor passed with a factor of 7.3; at the top it is 1.48."""
    result = run("arrest-load", RIG)
    assert result.outputs["peak_force_foot_kn"] == pytest.approx(2.0498, rel=1e-4)
    assert result.outputs["peak_force_top_kn"] == pytest.approx(10.125, rel=1e-4)
    assert result.outputs["governing_position"] == "top of the drop"
    assert result.verdict == "fail"
    assert result.governing == "anchor"
    assert result.margin == pytest.approx(15.0 / 10.125 / 2.0 - 1, rel=1e-3)
    assert result.reason.startswith("A fall at the top of the drop would load the anchor")


def test_the_falling_mass_includes_payload_water_and_the_hose_carried() -> None:
    """Water in a 12.7 mm bore: 998.2 kg/m³ × π × 0.0127² / 4 = 0.1264 kg/m (hand)."""
    out = run(
        "arrest-load",
        vary(RIG, payload_kg=4.0, water_on_board_kg=6.0, hose_kg_per_m=0.25, hose_id_mm=12.7),
    ).outputs
    per_m = 0.25 + 998.2 * math.pi * 0.0127**2 / 4
    assert out["falling_mass_top_kg"] == pytest.approx(68.0 + per_m * 3.0, rel=1e-12)
    assert out["falling_mass_foot_kg"] == pytest.approx(68.0 + per_m * 146.0, rel=1e-12)


def test_a_drop_deeper_than_the_clearance_below_fails() -> None:
    result = run("arrest-load", vary(RIG, anchor_rating_kn=40.0, clearance_below_m=0.5))
    drop = result.outputs["total_drop_m"]
    assert isinstance(drop, float) and drop > 0.5
    assert result.governing == "clearance"
    assert result.margin == pytest.approx(0.5 / drop - 1, rel=1e-12)


def test_an_energy_absorber_caps_the_force_and_conserves_energy() -> None:
    """With the force held at F_a the work done by gravity equals the line's strain energy plus
    the absorber's F_a·d (energy balance)."""
    result = run("arrest-load", vary(RIG, absorber_arrest_force_kn=4.0, absorber_deployment_m=1.2))
    out = result.outputs
    assert out["peak_force_kn"] == pytest.approx(4.0, rel=1e-12)
    d = out["absorber_deployment_needed_m"]
    assert isinstance(d, float)
    k, w, xa = 600e3 / 3.0, 58.0 * G, 4000.0 / (600e3 / 3.0)
    assert w * (0.4 + xa + d) == pytest.approx(0.5 * k * xa**2 + 4000.0 * d, rel=1e-12)
    assert result.verdict == "pass"


def test_an_absorber_weaker_than_the_weight_cannot_stop_the_fall() -> None:
    result = run("arrest-load", vary(RIG, absorber_arrest_force_kn=0.5, absorber_deployment_m=2.0))
    assert result.verdict == "fail"
    assert result.governing == "absorber"


def test_a_huge_mass_fails_on_the_anchor_instead_of_overflowing() -> None:
    """(m·g)² overflowed for m = 1.1e279 kg before; written as √(m·g)·√(m·g + 2·k·h) it stays
    finite, and the verdict is the plain one: the anchor cannot hold it."""
    result = run("arrest-load", vary(RIG, mass_kg=1.1e279))
    assert result.verdict == "fail"
    assert result.governing == "anchor"

"""wind-at-height: EN 1991-1-4 log profile, power law, Beaufort force and drag force."""

from __future__ import annotations

import math

import pint
import pytest
from hypothesis import given
from hypothesis import strategies as st

from compliance.engineering import run
from compliance.engineering.wind import TERRAIN_Z0_ZMIN_M, beaufort, default_alpha, terrain_factor

from .examples import WIND, vary

ureg = pint.UnitRegistry()


def wind(**changes: object) -> dict[str, object]:
    result = run("wind-at-height", vary(WIND, **changes))
    return {"verdict": result.verdict, "margin": result.margin, **result.outputs}


def test_terrain_table_is_en_1991_1_4_table_4_1() -> None:
    """EN 1991-1-4 Table 4.1: z0 and zmin per terrain category (recommended values)."""
    assert TERRAIN_Z0_ZMIN_M == {
        "0": (0.003, 1.0),
        "I": (0.01, 1.0),
        "II": (0.05, 2.0),
        "III": (0.3, 5.0),
        "IV": (1.0, 10.0),
    }


def test_terrain_factor_formula() -> None:
    """EN 1991-1-4 (4.5): kr = 0.19·(z0/z0,II)^0.07, so kr = 0.19 exactly for category II."""
    assert terrain_factor(0.05) == pytest.approx(0.19, rel=1e-15)
    assert terrain_factor(1.0) == pytest.approx(0.19 * 20**0.07, rel=1e-15)


def test_log_law_by_hand() -> None:
    """EN 1991-1-4 (4.4): cr(z) = kr·ln(z/z0); from 10 m to 50 m in category II the ratio is
    ln(50/0.05) / ln(10/0.05) = 1.3038 (hand calculation)."""
    out = wind(terrain="II", measured_at_m=10.0, working_height_m=50.0, speed_ms=8.0)
    ratio = math.log(1000.0) / math.log(200.0)
    assert out["profile_ratio"] == pytest.approx(ratio, rel=1e-12)
    assert out["speed_at_height_ms"] == pytest.approx(8.0 * ratio, rel=1e-12)
    assert ratio == pytest.approx(1.3038, rel=1e-4)


def test_same_height_gives_the_reading() -> None:
    for method in ("log", "power"):
        out = wind(method=method, working_height_m=60.0)
        assert out["speed_at_height_ms"] == pytest.approx(6.0, rel=1e-15)


def test_below_zmin_the_profile_is_constant() -> None:
    """EN 1991-1-4 (4.4): cr(z) = cr(zmin) for z ≤ zmin (zmin = 5 m in category III)."""
    out = wind(terrain="III", measured_at_m=2.0, working_height_m=4.0)
    assert out["speed_at_height_ms"] == pytest.approx(6.0, rel=1e-15)


def test_power_law_with_a_given_exponent() -> None:
    """Power law v(z) = v_ref·(z/z_ref)^α (common practice, from memory); 4^0.15 by hand."""
    out = wind(method="power", alpha=0.15, measured_at_m=10.0, working_height_m=40.0, speed_ms=5.0)
    assert out["speed_at_height_ms"] == pytest.approx(5.0 * 4**0.15, rel=1e-12)
    assert out["alpha"] == 0.15


def test_default_exponent_matches_the_log_profile_from_10_to_100_m() -> None:
    """Our own fit (no source): α chosen so the power law equals the EN log law from 10 m to
    100 m. It lands near the commonly quoted 1/7 for open country (from memory)."""
    for terrain in TERRAIN_Z0_ZMIN_M:
        log = wind(terrain=terrain, measured_at_m=10.0, working_height_m=100.0)
        power = wind(terrain=terrain, measured_at_m=10.0, working_height_m=100.0, method="power")
        assert power["speed_at_height_ms"] == pytest.approx(log["speed_at_height_ms"], rel=1e-12)
    assert 0.10 < default_alpha(0.05) < 0.20


@pytest.mark.parametrize(
    ("speed", "force"),
    [
        (0.0, 0),
        (0.29, 0),
        (0.3, 1),
        (1.5, 1),
        (1.6, 2),
        (3.3, 2),
        (3.4, 3),
        (5.4, 3),
        (5.5, 4),
        (7.9, 4),
        (8.0, 5),
        (10.7, 5),
        (10.8, 6),
        (13.8, 6),
        (13.9, 7),
        (17.1, 7),
        (17.2, 8),
        (20.7, 8),
        (20.8, 9),
        (24.4, 9),
        (24.5, 10),
        (28.4, 10),
        (28.5, 11),
        (32.6, 11),
        (32.7, 12),
        (60.0, 12),
    ],
)
def test_beaufort_bands(speed: float, force: int) -> None:
    """WMO Beaufort scale, mean wind in m/s (band edges as tabulated)."""
    assert beaufort(speed) == force


def test_gust_factor_and_limit() -> None:
    out = wind(gust_factor=1.5)
    mean = out["speed_at_height_ms"]
    assert isinstance(mean, float)
    assert out["gust_at_height_ms"] == pytest.approx(1.5 * mean)
    assert out["margin"] == pytest.approx(12.0 / (1.5 * mean) - 1)
    failing = wind(gust_factor=1.5, limit_ms=7.0)
    assert failing["verdict"] == "fail"


def test_without_a_gust_factor_the_gust_comes_from_the_turbulence_intensity() -> None:
    """EN 1991-1-4 4.4 and 4.5 (seen): Iv = kI/(c0·ln(z/z0)) with kI = c0 = 1; terrain IV
    (z0 = 1 m) at 30 m gives Iv = 1/ln 30 = 0.2940 and a peak gust of vm·√(1 + 7·Iv) = 1.748·vm
    (hand). Before, a missing gust factor defaulted to 1.0: the gust was the mean."""
    out = wind()
    assert out["turbulence_intensity"] == pytest.approx(1 / math.log(30.0), rel=1e-12)
    vm = out["speed_at_height_ms"]
    assert isinstance(vm, float)
    assert out["gust_at_height_ms"] == pytest.approx(vm * math.sqrt(1 + 7 / math.log(30.0)))
    assert out["gust_at_height_ms"] > 1.7 * vm


def test_peak_velocity_pressure() -> None:
    """EN 1991-1-4 4.5 (seen): qp = (1 + 7·Iv)·½·ρ·vm², ρ = 1.225 kg/m³ here."""
    out = wind()
    vm = out["speed_at_height_ms"]
    assert isinstance(vm, float)
    iv = 1 / math.log(30.0)
    assert out["peak_velocity_pressure_pa"] == pytest.approx((1 + 7 * iv) * 0.5 * 1.225 * vm**2)


def test_a_measured_gust_over_the_limit_stops_work() -> None:
    """A calm mean with a 15 m/s gust read on the roof, against a 14 m/s gust limit."""
    result = run(
        "wind-at-height",
        vary(WIND, speed_ms=5.5, measured_at_m=30.0, measured_gust_ms=15.0, limit_ms=14.0),
    )
    assert result.outputs["gust_at_height_ms"] == pytest.approx(15.0)
    assert result.verdict == "fail"
    assert result.reason == (
        "Gusts at working height reach about 15 m/s (from the gust measured on the"
        " anemometer); the limit is 14 m/s."
    )


def test_drag_force() -> None:
    """F = ½·ρ·v²·Cd·A (drag equation; ISA sea-level density 1.225 kg/m³, from memory); units
    checked with pint."""
    out = wind(area_m2=0.6, drag_coefficient=1.2, gust_factor=1.5)
    gust = out["gust_at_height_ms"]
    assert isinstance(gust, float)
    expected = (
        0.5 * 1.225 * ureg("kg/m**3") * (gust * ureg("m/s")) ** 2 * 1.2 * 0.6 * ureg("m**2")
    ).to("N")
    assert out["force_n"] == pytest.approx(expected.magnitude, rel=1e-12)
    assert wind()["force_n"] is None


def test_calm_air_has_no_margin_to_report() -> None:
    out = wind(speed_ms=0.0)
    assert out["verdict"] == "pass"
    assert out["margin"] is None


heights = st.floats(0.5, 200.0)


@given(
    terrain=st.sampled_from(list(TERRAIN_Z0_ZMIN_M)),
    method=st.sampled_from(["log", "power"]),
    z_ref=heights,
    z1=heights,
    z2=heights,
    speed=st.floats(0.0, 40.0),
)
def test_higher_working_height_never_lowers_the_wind(
    terrain: str, method: str, z_ref: float, z1: float, z2: float, speed: float
) -> None:
    low, high = sorted((z1, z2))
    common = vary(WIND, terrain=terrain, method=method, measured_at_m=z_ref, speed_ms=speed)
    a = run("wind-at-height", {**common, "working_height_m": low}).outputs
    b = run("wind-at-height", {**common, "working_height_m": high}).outputs
    assert b["speed_at_height_ms"] >= a["speed_at_height_ms"]  # type: ignore[operator]
    assert b["beaufort"] >= a["beaufort"]  # type: ignore[operator]

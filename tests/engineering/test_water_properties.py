"""Water density and viscosity correlations against IAPWS-95 / IAPWS-97 (the `iapws` package)."""

from __future__ import annotations

import pytest
from hypothesis import given
from hypothesis import strategies as st
from iapws import IAPWS95, IAPWS97

from compliance.engineering.water_properties import density_kgm3, viscosity_pas

ATM_MPA = 0.101325
TEMPS_C = [0.01, 1.0, 4.0, 10.0, 15.0, 20.0, 25.0, 30.0, 35.0, 40.0, 45.0, 50.0, 55.0, 60.0]

DENSITY_TOL_KGM3 = 0.01
"""Kell's correlation is within 0.005 kg/m³ of IAPWS-95 here; we hold it to 0.01 kg/m³."""

VISCOSITY_REL_TOL = 1e-3
"""Our quartic fit is within 0.05 % of the IAPWS formulation; we hold it to 0.1 %."""


@pytest.mark.parametrize("temp_c", TEMPS_C)
def test_density_against_iapws95(temp_c: float) -> None:
    """IAPWS-95 (iapws.IAPWS95) at 1 atm."""
    reference = IAPWS95(T=temp_c + 273.15, P=ATM_MPA).rho
    assert density_kgm3(temp_c) == pytest.approx(reference, abs=DENSITY_TOL_KGM3)


@pytest.mark.parametrize("temp_c", TEMPS_C)
def test_density_against_iapws97(temp_c: float) -> None:
    """IAPWS-IF97 (iapws.IAPWS97) at 1 atm; IF97 itself differs from IAPWS-95 by up to
    0.015 kg/m³ here, so the tolerance is wider."""
    reference = IAPWS97(T=temp_c + 273.15, P=ATM_MPA).rho
    assert density_kgm3(temp_c) == pytest.approx(reference, abs=0.03)


@pytest.mark.parametrize("temp_c", TEMPS_C)
def test_viscosity_against_iapws(temp_c: float) -> None:
    """IAPWS 2008 viscosity as computed by iapws.IAPWS95 at 1 atm."""
    reference = IAPWS95(T=temp_c + 273.15, P=ATM_MPA).mu
    assert viscosity_pas(temp_c) == pytest.approx(reference, rel=VISCOSITY_REL_TOL)


def test_iapws_values_at_20_c() -> None:
    """About 998.2 kg/m³ and 1.0016 mPa·s at 20 °C and 1 atm (IAPWS-95 density and the IAPWS
    2008 viscosity formulation, as the `iapws` package computes them)."""
    assert density_kgm3(20.0) == pytest.approx(998.2, abs=0.01)
    assert viscosity_pas(20.0) == pytest.approx(1.0016e-3, rel=1e-3)


def test_density_peaks_near_4_c() -> None:
    """Water is densest near 3.98 °C at 1 atm (IAPWS-95)."""
    assert density_kgm3(4.0) > density_kgm3(0.0)
    assert density_kgm3(4.0) > density_kgm3(8.0)


@given(a=st.floats(0.0, 60.0), b=st.floats(0.0, 60.0))
def test_viscosity_falls_as_water_warms(a: float, b: float) -> None:
    low, high = sorted((a, b))
    # Falls, to within the rounding of the fit's last bit (60 °C and the float just below it
    # differ by one unit in the last place).
    assert viscosity_pas(high) <= viscosity_pas(low) * (1 + 1e-15)


@pytest.mark.parametrize("temp_c", [-0.1, 60.1])
def test_outside_the_range_is_refused(temp_c: float) -> None:
    with pytest.raises(ValueError):
        density_kgm3(temp_c)
    with pytest.raises(ValueError):
        viscosity_pas(temp_c)

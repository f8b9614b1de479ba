"""Density and dynamic viscosity of liquid water at 1 atm, 0-60 °C.

Density: Kell's (1975) rational polynomial (coefficients from memory), within 0.005 kg/m³ of
IAPWS-95 over this range. Viscosity: our own least-squares fit of ln(μ / mPa·s) as a quartic in
temperature to the IAPWS 2008 formulation as computed by the `iapws` package at 0.101325 MPa,
0-60 °C; within 0.05 %. The tests check both against `iapws` at many temperatures.
"""

from __future__ import annotations

import math
from typing import Final

MIN_TEMP_C: Final = 0.0
MAX_TEMP_C: Final = 60.0

_KELL_NUMERATOR: Final = (
    999.83952,
    16.945176,
    -7.9870401e-3,
    -46.170461e-6,
    105.56302e-9,
    -280.54253e-12,
)
_KELL_DENOMINATOR_T: Final = 16.879850e-3

_LN_VISCOSITY_MPAS: Final = (0.582731, -0.0345766, 0.000328173, -2.89592e-06, 1.33337e-08)


def _check_range(temp_c: float) -> None:
    if not MIN_TEMP_C <= temp_c <= MAX_TEMP_C:
        raise ValueError(f"water property model covers {MIN_TEMP_C}-{MAX_TEMP_C} °C, not {temp_c}")


def _poly(coefficients: tuple[float, ...], x: float) -> float:
    total = 0.0
    for c in reversed(coefficients):
        total = total * x + c
    return total


def density_kgm3(temp_c: float) -> float:
    """Density of liquid water at 1 atm in kg/m³."""
    _check_range(temp_c)
    return _poly(_KELL_NUMERATOR, temp_c) / (1.0 + _KELL_DENOMINATOR_T * temp_c)


def viscosity_pas(temp_c: float) -> float:
    """Dynamic viscosity of liquid water at 1 atm in Pa·s."""
    _check_range(temp_c)
    return math.exp(_poly(_LN_VISCOSITY_MPAS, temp_c)) * 1e-3

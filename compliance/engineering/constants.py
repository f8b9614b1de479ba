"""Physical constants and unit factors shared by the calculations (SI throughout)."""

from typing import Final

G: Final = 9.80665
"""Standard gravity in m/s² (CGPM 1901; ISO 80000-3)."""

ATMOSPHERE_KPA: Final = 101.325
"""Standard atmosphere at sea level in kPa; no gauge vacuum can be deeper than this."""

AIR_DENSITY_KGM3: Final = 1.225
"""International Standard Atmosphere air density at sea level, 15 °C, in kg/m³."""

WATER_DENSITY_20C_KGM3: Final = 998.2
"""Density of water at 20 °C and 1 atm in kg/m³, the default when no temperature is given."""

PA_PER_KPA: Final = 1000.0
N_PER_KN: Final = 1000.0
M_PER_MM: Final = 0.001
M3_PER_L: Final = 0.001
S_PER_MIN: Final = 60.0
MBAR_PER_KPA: Final = 10.0

CAUTION: Final = (
    "This calculation supports, and does not replace, the equipment maker's limits, "
    "the local code and a licensed engineer's design."
)

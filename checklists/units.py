"""Conversions accepted at the edge: an operator's gauge may read bar or psi, the record is SI.

Factors are exact by definition or from NIST SP 811 (Guide for the Use of the SI), appendix B.
"""

import math

# to_unit -> {from_unit: factor}: value_in_to = value_in_from * factor
CONVERSIONS: dict[str, dict[str, float]] = {
    "kPa": {"kPa": 1.0, "bar": 100.0, "mbar": 0.1, "Pa": 0.001, "psi": 6.894757293168361},
    "m/s": {"m/s": 1.0, "km/h": 1 / 3.6, "kn": 1852 / 3600},
    "kN": {"kN": 1.0, "N": 0.001, "lbf": 0.0044482216152605},
    "m": {"m": 1.0, "mm": 0.001, "ft": 0.3048},
    "°C": {"°C": 1.0},
    "s": {"s": 1.0, "min": 60.0, "h": 3600.0},
    "mm": {"mm": 1.0, "m": 1000.0},
    "%": {"%": 1.0},
    "L": {"L": 1.0},
}


class UnitMismatch(ValueError):
    pass


class BeyondRange(UnitMismatch):
    """A finite reading that is not a finite number once converted (1e307 bar is 1e309 kPa)."""


def to_unit(value: float, given: str, wanted: str) -> float:
    """Convert ``value`` from ``given`` to ``wanted`` or raise UnitMismatch (BeyondRange when
    the converted value is not a finite number)."""
    if given == wanted:
        return value
    factor = CONVERSIONS.get(wanted, {}).get(given)
    if factor is None:
        accepted = ", ".join(CONVERSIONS.get(wanted, {wanted: 1}))
        raise UnitMismatch(f"Expected a reading in {wanted} (accepted: {accepted}), got {given!r}.")
    converted = value * factor
    if not math.isfinite(converted):
        raise BeyondRange(
            f"{value:g} {given} is beyond the largest number a reading can hold once converted"
            f" to {wanted}; check the value and its unit."
        )
    return converted

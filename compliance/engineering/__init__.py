"""Pure-Python engineering calculations for Parapet: no Django, SI units, typed results.

Run one by name with `run("suction-hold", {...})`; every result carries its verdict, governing
margin and the working as text. Inputs are checked first and a bad one raises CalcInputError
naming the field.
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import Final

from . import arrest, decay, mass, suction, tag, water, water_use, wind
from .calculation import Calculation, UnknownCalculation
from .inputs import CalcInputError, Field
from .result import CalcResult

CALCULATIONS: Final[dict[str, Calculation]] = {
    c.name: c
    for c in (
        suction.CALCULATION,
        decay.CALCULATION,
        arrest.CALCULATION,
        wind.CALCULATION,
        water.CALCULATION,
        mass.CALCULATION,
        water_use.CALCULATION,
        tag.CALCULATION,
    )
}


def run(name: str, inputs: Mapping[str, object]) -> CalcResult:
    """Run the calculation called `name`; raises UnknownCalculation or CalcInputError."""
    try:
        calculation = CALCULATIONS[name]
    except (KeyError, TypeError):
        raise UnknownCalculation(str(name)) from None
    return calculation.run(inputs)


__all__ = [
    "CALCULATIONS",
    "CalcInputError",
    "CalcResult",
    "Calculation",
    "Field",
    "UnknownCalculation",
    "run",
]

"""water-use: how much water a facade needs and whether the tank holds it.

Margin: supply / litres needed - 1; with no supply given there is nothing to check and the
verdict is pass with no margin.
"""

from __future__ import annotations

from collections.abc import Mapping

from .calculation import Calculation, OutOfRange, build_result
from .inputs import Inputs, number
from .result import CalcResult, Check, OutputValue
from .working import num

NAME = "water-use"

FIELDS = (
    number("area_m2", "m²", "facade area to clean", greater_than=0.0),
    number("litres_per_m2", "L/m²", "water used per square metre", greater_than=0.0),
    number("rate_m2_per_h", "m²/h", "area cleaned per hour", greater_than=0.0),
    number("supply_l", "L", "water available (tank capacity)", greater_than=0.0, optional=True),
)


def compute(values: Inputs) -> CalcResult:
    area_m2 = values.number("area_m2")
    per_m2 = values.number("litres_per_m2")
    rate = values.number("rate_m2_per_h")
    supply_l = values.optional_number("supply_l")

    per_hour = per_m2 * rate
    hours = area_m2 / rate
    litres = area_m2 * per_m2
    steps = [
        f"water per hour = {num(per_m2)} L/m² × {num(rate)} m²/h = {num(per_hour)} L/h",
        f"time = {num(area_m2)} m² / {num(rate)} m²/h = {num(hours)} h",
        f"water needed = {num(area_m2)} m² × {num(per_m2)} L/m² = {num(litres)} L",
    ]
    outputs: dict[str, OutputValue] = {
        "litres_per_hour_l_per_h": per_hour,
        "hours_h": hours,
        "litres_l": litres,
        "supply_hours_h": None,
    }
    checks: list[Check] = []
    if supply_l is not None:
        if litres == 0.0:
            raise OutOfRange("litres_l", litres)
        if per_hour == 0.0:
            raise OutOfRange("litres_per_hour_l_per_h", per_hour)
        outputs["supply_hours_h"] = supply_l / per_hour
        steps.append(
            f"supply lasts {num(supply_l)} L / {num(per_hour)} L/h = {num(supply_l / per_hour)} h"
            f" against {num(litres)} L needed"
        )
        checks.append(Check("supply", supply_l / litres - 1.0))
    else:
        steps.append("no supply given: nothing to check against")
    return build_result(
        name=NAME, inputs=values.as_dict(), outputs=outputs, checks=checks, steps=steps
    )


CALCULATION = Calculation(name=NAME, title="Water use", fields=FIELDS, rules=(), compute=compute)


def water_use(inputs: Mapping[str, object]) -> CalcResult:
    """Validate `inputs` and run the water-use calculation."""
    return CALCULATION.run(inputs)

"""suction-hold: can the vacuum cups hold the robot on a vertical glass wall?

The cups press the robot onto the glass with vacuum × area; friction on that clamp force
carries the weight and the brush reaction along the wall. Wind suction pulling the robot off
the wall reduces the clamp force. Margin: achieved/required safety factor - 1, or, if it is
smaller, (clamp force / required factor) / outward pull - 1.
"""

from __future__ import annotations

import math
from collections.abc import Mapping

from .calculation import Calculation, OutOfRange, build_result
from .constants import ATMOSPHERE_KPA, PA_PER_KPA, G
from .inputs import Inputs, integer, number
from .result import CalcResult, Check, OutputValue, ratio_margin
from .working import num

NAME = "suction-hold"

FIELDS = (
    number(
        "vacuum_kpa",
        "kPa",
        "vacuum in the cups, gauge, below atmosphere",
        at_least=0.0,
        at_most=ATMOSPHERE_KPA,
        limit_reason="a gauge vacuum cannot be deeper than the standard atmosphere",
    ),
    number(
        "cup_diameter_m",
        "m",
        "sealing diameter of one cup",
        greater_than=0.0,
        at_most=2.0,
        limit_reason="plausibility bound for one cup",
    ),
    integer("cups", "", "cups engaged on the glass at once", at_least=1),
    number(
        "friction",
        "",
        "friction coefficient of cup on glass",
        greater_than=0.0,
        at_most=2.0,
        limit_reason="no cup-on-glass friction coefficient is this high",
    ),
    number("mass_kg", "kg", "robot mass carried by the cups", greater_than=0.0),
    number(
        "wind_outward_n",
        "N",
        "wind suction pulling the robot off the wall",
        at_least=0.0,
        default=0.0,
    ),
    number("process_force_n", "N", "brush reaction along the wall", at_least=0.0, default=0.0),
    number("safety_factor", "", "required safety factor on the hold", at_least=1.0, default=2.0),
    number(
        "effective_area_ratio",
        "",
        "fraction of the cup's disc area the vacuum acts on",
        greater_than=0.0,
        at_most=1.0,
        limit_reason="the vacuum cannot act on more than the cup's own area",
        default=1.0,
    ),
)


def compute(values: Inputs) -> CalcResult:
    vacuum_kpa = values.number("vacuum_kpa")
    diameter_m = values.number("cup_diameter_m")
    cups = values.integer("cups")
    friction = values.number("friction")
    mass_kg = values.number("mass_kg")
    outward_n = values.number("wind_outward_n")
    process_n = values.number("process_force_n")
    required = values.number("safety_factor")
    area_ratio = values.number("effective_area_ratio")

    area_m2 = area_ratio * math.pi * diameter_m**2 / 4.0
    if area_m2 == 0.0:
        raise OutOfRange("effective_area_m2", area_m2)
    clamp_n = vacuum_kpa * PA_PER_KPA * area_m2 * cups
    net_clamp_n = clamp_n - outward_n
    capacity_n = friction * max(net_clamp_n, 0.0)
    weight_n = mass_kg * G
    demand_n = weight_n + process_n
    achieved = capacity_n / demand_n
    outward_limit_n = clamp_n / required
    for_shear_kpa = (required * demand_n / friction + outward_n) / (area_m2 * cups) / PA_PER_KPA
    for_outward_kpa = required * outward_n / (area_m2 * cups) / PA_PER_KPA
    min_vacuum_kpa = max(for_shear_kpa, for_outward_kpa)

    steps = [
        f"effective area per cup = {num(area_ratio)} × π × ({num(diameter_m)} m)² / 4"
        f" = {num(area_m2)} m²",
        f"clamp force = {num(vacuum_kpa)} kPa × {num(area_m2)} m² × {cups} = {num(clamp_n)} N",
        f"net clamp force = {num(clamp_n)} N - {num(outward_n)} N outward = {num(net_clamp_n)} N",
        f"shear capacity = {num(friction)} × {num(max(net_clamp_n, 0.0))} N = {num(capacity_n)} N",
        f"shear demand = {num(mass_kg)} kg × {num(G)} m/s² + {num(process_n)} N"
        f" = {num(demand_n)} N",
        f"achieved safety factor = {num(capacity_n)} N / {num(demand_n)} N = {num(achieved)}"
        f" (required {num(required)})",
        f"outward pull allowed = {num(clamp_n)} N / {num(required)} = {num(outward_limit_n)} N"
        f" (acting {num(outward_n)} N)",
        f"least vacuum for the shear check = ({num(required)} × {num(demand_n)} N"
        f" / {num(friction)} + {num(outward_n)} N) / ({num(area_m2)} m² × {cups})"
        f" = {num(for_shear_kpa)} kPa",
        f"least vacuum for the outward check = {num(required)} × {num(outward_n)} N"
        f" / ({num(area_m2)} m² × {cups}) = {num(for_outward_kpa)} kPa",
        f"least vacuum = {num(min_vacuum_kpa)} kPa (reading {num(vacuum_kpa)} kPa)",
    ]
    if min_vacuum_kpa > ATMOSPHERE_KPA:
        steps.append(
            f"the least vacuum exceeds the atmosphere ({num(ATMOSPHERE_KPA)} kPa): "
            "no vacuum can hold with these cups"
        )
    outputs: dict[str, OutputValue] = {
        "effective_area_m2": area_m2,
        "clamp_force_n": clamp_n,
        "net_clamp_force_n": net_clamp_n,
        "shear_capacity_n": capacity_n,
        "weight_n": weight_n,
        "shear_demand_n": demand_n,
        "achieved_safety_factor": achieved,
        "outward_limit_n": outward_limit_n,
        "min_vacuum_kpa": min_vacuum_kpa,
    }
    checks = [
        Check("safety_factor", achieved / required - 1.0),
        Check("outward_pull", ratio_margin(outward_limit_n, outward_n)),
    ]
    return build_result(
        name=NAME, inputs=values.as_dict(), outputs=outputs, checks=checks, steps=steps
    )


CALCULATION = Calculation(
    name=NAME, title="Suction hold on glass", fields=FIELDS, rules=(), compute=compute
)


def suction_hold(inputs: Mapping[str, object]) -> CalcResult:
    """Validate `inputs` and run the suction-hold calculation."""
    return CALCULATION.run(inputs)

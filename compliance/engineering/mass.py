"""suspended-mass: everything hanging from the tether against the lesser of two limits.

Robot, payload, the water filling the deployed hose, and the self-weight of the deployed hose
and line, against the profile's mass limit and the tether's working load limit (as mass,
WLL / g). Margin: limit / total - 1 for whichever limit is lower.
"""

from __future__ import annotations

import math
from collections.abc import Mapping

from .calculation import Calculation, build_result
from .constants import M_PER_MM, N_PER_KN, WATER_DENSITY_20C_KGM3, G
from .inputs import AtMostOne, Inputs, number
from .result import CalcResult, Check, InputValue, OutputValue
from .water_properties import density_kgm3
from .working import num

NAME = "suspended-mass"

FIELDS = (
    number("robot_kg", "kg", "robot mass", greater_than=0.0),
    number("payload_kg", "kg", "anything else carried", at_least=0.0, default=0.0),
    number("hose_length_m", "m", "deployed hose length", at_least=0.0),
    number(
        "hose_id_mm",
        "mm",
        "hose inside diameter",
        greater_than=0.0,
        at_most=300.0,
        limit_reason="plausibility bound",
    ),
    number("hose_kg_per_m", "kg/m", "empty hose mass per metre", at_least=0.0),
    number("line_length_m", "m", "deployed line length", at_least=0.0),
    number("line_kg_per_m", "kg/m", "line mass per metre", at_least=0.0),
    number(
        "water_density_kgm3",
        "kg/m³",
        f"water density (default {WATER_DENSITY_20C_KGM3})",
        at_least=900.0,
        at_most=1100.0,
        limit_reason="outside any water this rig carries",
        optional=True,
    ),
    number(
        "water_temp_c",
        "°C",
        "water temperature, instead of a density",
        at_least=0.0,
        at_most=60.0,
        limit_reason="the water property model covers 0-60 °C",
        optional=True,
    ),
    number("mass_limit_kg", "kg", "suspended mass limit of the profile", greater_than=0.0),
    number("tether_wll_kn", "kN", "tether working load limit", greater_than=0.0),
)

RULES = (AtMostOne(("water_density_kgm3", "water_temp_c")),)


def compute(values: Inputs) -> CalcResult:
    robot_kg = values.number("robot_kg")
    payload_kg = values.number("payload_kg")
    hose_m = values.number("hose_length_m")
    diameter_m = values.number("hose_id_mm") * M_PER_MM
    hose_kg_m = values.number("hose_kg_per_m")
    line_m = values.number("line_length_m")
    line_kg_m = values.number("line_kg_per_m")
    mass_limit_kg = values.number("mass_limit_kg")
    wll_kn = values.number("tether_wll_kn")

    normalised: dict[str, InputValue] = values.as_dict()
    temp_c = values.optional_number("water_temp_c")
    steps: list[str] = []
    if temp_c is not None:
        rho = density_kgm3(temp_c)
        steps.append(f"water at {num(temp_c)} °C: ρ = {num(rho)} kg/m³")
    else:
        given = values.optional_number("water_density_kgm3")
        rho = WATER_DENSITY_20C_KGM3 if given is None else given
        normalised["water_density_kgm3"] = rho

    water_kg = rho * math.pi * diameter_m**2 / 4.0 * hose_m
    hose_kg = hose_kg_m * hose_m
    line_kg = line_kg_m * line_m
    total_kg = robot_kg + payload_kg + water_kg + hose_kg + line_kg
    wll_kg = wll_kn * N_PER_KN / G
    limit_kg = min(mass_limit_kg, wll_kg)
    steps += [
        f"water in hose = {num(rho)} kg/m³ × π × ({num(diameter_m)} m)² / 4 × {num(hose_m)} m"
        f" = {num(water_kg)} kg",
        f"hose = {num(hose_kg_m)} kg/m × {num(hose_m)} m = {num(hose_kg)} kg",
        f"line = {num(line_kg_m)} kg/m × {num(line_m)} m = {num(line_kg)} kg",
        f"total = {num(robot_kg)} + {num(payload_kg)} + {num(water_kg)} + {num(hose_kg)} +"
        f" {num(line_kg)} = {num(total_kg)} kg",
        f"tether WLL as mass = {num(wll_kn)} kN × 1000 / {num(G)} = {num(wll_kg)} kg",
        f"limit = min({num(mass_limit_kg)}, {num(wll_kg)}) = {num(limit_kg)} kg;"
        f" margin {num(limit_kg - total_kg)} kg",
    ]
    outputs: dict[str, OutputValue] = {
        "water_kg": water_kg,
        "hose_kg": hose_kg,
        "line_kg": line_kg,
        "total_kg": total_kg,
        "tether_wll_kg": wll_kg,
        "limit_kg": limit_kg,
        "margin_kg": limit_kg - total_kg,
        "water_density_kgm3": rho,
    }
    checks = [
        Check("mass_limit", mass_limit_kg / total_kg - 1.0),
        Check("tether_wll", wll_kg / total_kg - 1.0),
    ]
    return build_result(name=NAME, inputs=normalised, outputs=outputs, checks=checks, steps=steps)


CALCULATION = Calculation(
    name=NAME, title="Suspended mass", fields=FIELDS, rules=RULES, compute=compute
)


def suspended_mass(inputs: Mapping[str, object]) -> CalcResult:
    """Validate `inputs` and run the suspended-mass calculation."""
    return CALCULATION.run(inputs)

"""suspended-mass: everything hanging from the tether, against the maker's rated load and the
tether's working load limit.

Robot, payload, water on board, the water filling the deployed hose, and the self-weight of the
deployed hose and line make the suspended mass, held to the maker's rated load. The tether
carries that weight times a dynamic factor (starts, stops, a snag) and, across it, the wind's
drag on the deployed tether at the stop-work gust, F = ½·ρ·v²·Cd·d·L; the resultant
√((DF·m·g)² + F²) is held to its working load limit. Margins: rated load / total - 1 and
WLL / tension - 1.
"""

from __future__ import annotations

import math
from collections.abc import Mapping

from .calculation import Calculation, build_result
from .constants import M_PER_MM, N_PER_KN, WATER_DENSITY_20C_KGM3, G
from .inputs import AtMostOne, Inputs, number
from .result import CalcResult, Check, InputValue, OutputValue
from .water_properties import density_kgm3
from .wind import AIR_DENSITY
from .working import num

NAME = "suspended-mass"

FIELDS = (
    number("robot_kg", "kg", "robot mass", greater_than=0.0),
    number("payload_kg", "kg", "anything else carried", at_least=0.0, default=0.0),
    number("water_on_board_kg", "kg", "water carried on the robot", at_least=0.0, default=0.0),
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
    number("rated_load_kg", "kg", "maker's rated suspended load", greater_than=0.0),
    number(
        "dynamic_factor",
        "",
        "allowance for starts, stops and snags on the tether's load",
        at_least=1.0,
        at_most=5.0,
        limit_reason="plausibility bound",
    ),
    number("tether_wll_kn", "kN", "tether working load limit", greater_than=0.0),
    number(
        "tether_diameter_mm",
        "mm",
        "tether diameter, facing the wind",
        greater_than=0.0,
        at_most=100.0,
        limit_reason="plausibility bound",
    ),
    number(
        "wind_ms",
        "m/s",
        "gust the tether must take: the stop-work gust",
        at_least=0.0,
        at_most=120.0,
        limit_reason="plausibility bound, above any recorded surface gust",
    ),
    number(
        "drag_coefficient",
        "",
        "drag coefficient of the tether across the wind (a round cylinder: about 1.2)",
        greater_than=0.0,
        at_most=3.0,
        limit_reason="plausibility bound",
        default=1.2,
    ),
    AIR_DENSITY,
)

RULES = (AtMostOne(("water_density_kgm3", "water_temp_c")),)


def compute(values: Inputs) -> CalcResult:
    robot_kg = values.number("robot_kg")
    payload_kg = values.number("payload_kg")
    on_board_kg = values.number("water_on_board_kg")
    hose_m = values.number("hose_length_m")
    diameter_m = values.number("hose_id_mm") * M_PER_MM
    hose_kg_m = values.number("hose_kg_per_m")
    line_m = values.number("line_length_m")
    line_kg_m = values.number("line_kg_per_m")
    rated_kg = values.number("rated_load_kg")
    dynamic = values.number("dynamic_factor")
    wll_kn = values.number("tether_wll_kn")
    tether_d_m = values.number("tether_diameter_mm") * M_PER_MM
    wind_ms = values.number("wind_ms")
    cd = values.number("drag_coefficient")
    rho_air = values.number("air_density_kgm3")

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
    total_kg = robot_kg + payload_kg + on_board_kg + water_kg + hose_kg + line_kg
    weight_n = total_kg * G
    dynamic_n = dynamic * weight_n
    drag_n = 0.5 * rho_air * wind_ms**2 * cd * tether_d_m * line_m
    tension_n = math.hypot(dynamic_n, drag_n)
    wll_n = wll_kn * N_PER_KN
    steps += [
        f"water in hose = {num(rho)} kg/m³ × π × ({num(diameter_m)} m)² / 4 × {num(hose_m)} m"
        f" = {num(water_kg)} kg",
        f"hose = {num(hose_kg_m)} kg/m × {num(hose_m)} m = {num(hose_kg)} kg",
        f"line = {num(line_kg_m)} kg/m × {num(line_m)} m = {num(line_kg)} kg",
        f"total = {num(robot_kg)} + {num(payload_kg)} + {num(on_board_kg)} + {num(water_kg)} +"
        f" {num(hose_kg)} + {num(line_kg)} = {num(total_kg)} kg (maker's rated load"
        f" {num(rated_kg)} kg)",
        f"tether load with the dynamic factor = {num(dynamic)} × {num(total_kg)} kg ×"
        f" {num(G)} m/s² = {num(dynamic_n / N_PER_KN)} kN",
        f"wind on the tether = ½ × {num(rho_air)} kg/m³ × ({num(wind_ms)} m/s)² × {num(cd)} ×"
        f" {num(tether_d_m)} m × {num(line_m)} m = {num(drag_n)} N",
        f"tension = √({num(dynamic_n)}² + {num(drag_n)}²) N = {num(tension_n / N_PER_KN)} kN"
        f" (working load limit {num(wll_kn)} kN)",
    ]
    outputs: dict[str, OutputValue] = {
        "water_kg": water_kg,
        "hose_kg": hose_kg,
        "line_kg": line_kg,
        "total_kg": total_kg,
        "rated_load_kg": rated_kg,
        "margin_kg": rated_kg - total_kg,
        "dynamic_load_kn": dynamic_n / N_PER_KN,
        "tether_wind_n": drag_n,
        "tether_tension_kn": tension_n / N_PER_KN,
        "water_density_kgm3": rho,
    }
    checks = [
        Check(
            "rated_load",
            rated_kg / total_kg - 1.0,
            reason=(
                f"The robot and everything hanging from it weigh about {num(total_kg, 3)} kg;"
                f" the maker rates it for {num(rated_kg, 3)} kg."
            ),
        ),
        Check(
            "tether_wll",
            wll_n / tension_n - 1.0,
            reason=(
                f"With starts and stops (× {num(dynamic, 3)}) and a {num(wind_ms, 3)} m/s gust on"
                f" the tether it would carry about {num(tension_n / N_PER_KN, 3)} kN; its working"
                f" load limit is {num(wll_kn, 3)} kN."
            ),
        ),
    ]
    return build_result(name=NAME, inputs=normalised, outputs=outputs, checks=checks, steps=steps)


CALCULATION = Calculation(
    name=NAME, title="Suspended mass", fields=FIELDS, rules=RULES, compute=compute
)


def suspended_mass(inputs: Mapping[str, object]) -> CalcResult:
    """Validate `inputs` and run the suspended-mass calculation."""
    return CALCULATION.run(inputs)

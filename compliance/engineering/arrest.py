"""arrest-load: if the grip fails, what peak force reaches the safety line and its anchor?

A linear-elastic line of stiffness k = EA/L catches the robot after a free fall h. Energy
balance m·g·(h + x) = ½·k·x² gives the peak force F = m·g + √((m·g)² + 2·m·g·k·h) and the
stretch x = F/k. Margin: the lesser of anchor factor / required - 1 and line factor /
required - 1.
"""

from __future__ import annotations

import math
from collections.abc import Mapping

from .calculation import Calculation
from .constants import N_PER_KN, G
from .inputs import ExactlyOne, Inputs, number
from .result import CalcResult, Check, OutputValue
from .working import num

NAME = "arrest-load"

FIELDS = (
    number("mass_kg", "kg", "mass the safety line must catch", greater_than=0.0),
    number("free_fall_m", "m", "slack before the line takes load", at_least=0.0),
    number("line_length_m", "m", "deployed line length that stretches", greater_than=0.0),
    number(
        "line_ea_kn",
        "kN",
        "line axial stiffness EA (force per unit strain)",
        greater_than=0.0,
        optional=True,
    ),
    number(
        "elongation_pct",
        "%",
        "line elongation at elongation_load_kn",
        greater_than=0.0,
        at_most=100.0,
        limit_reason="beyond doubling its length a line is not linear-elastic",
        optional=True,
    ),
    number(
        "elongation_load_kn",
        "kN",
        "load at which elongation_pct is stated",
        greater_than=0.0,
        optional=True,
    ),
    number("anchor_rating_kn", "kN", "anchor rated capacity", greater_than=0.0),
    number("line_mbs_kn", "kN", "safety line minimum breaking strength", greater_than=0.0),
    number(
        "anchor_safety_factor",
        "",
        "required factor of anchor rating over peak force",
        at_least=1.0,
    ),
    number(
        "line_safety_factor",
        "",
        "required factor of line strength over peak force",
        at_least=1.0,
    ),
)

RULES = (ExactlyOne((("line_ea_kn",), ("elongation_pct", "elongation_load_kn"))),)


def peak_force_n(*, weight_n: float, stiffness_n_per_m: float, free_fall_m: float) -> float:
    """Peak line force of a linear-elastic arrest, from the energy balance."""
    return weight_n + math.sqrt(weight_n**2 + 2.0 * weight_n * stiffness_n_per_m * free_fall_m)


def compute(values: Inputs) -> CalcResult:
    mass_kg = values.number("mass_kg")
    fall_m = values.number("free_fall_m")
    length_m = values.number("line_length_m")
    anchor_kn = values.number("anchor_rating_kn")
    mbs_kn = values.number("line_mbs_kn")
    anchor_sf = values.number("anchor_safety_factor")
    line_sf = values.number("line_safety_factor")

    steps: list[str] = []
    given_ea = values.optional_number("line_ea_kn")
    if given_ea is None:
        pct = values.number("elongation_pct")
        load_kn = values.number("elongation_load_kn")
        ea_kn = load_kn / (pct / 100.0)
        steps.append(f"EA = {num(load_kn)} kN / ({num(pct)} % / 100) = {num(ea_kn)} kN")
    else:
        ea_kn = given_ea
    k = ea_kn * N_PER_KN / length_m
    weight_n = mass_kg * G
    force_n = peak_force_n(weight_n=weight_n, stiffness_n_per_m=k, free_fall_m=fall_m)
    stretch_m = force_n / k
    drop_m = fall_m + stretch_m
    anchor_factor = anchor_kn * N_PER_KN / force_n
    line_factor = mbs_kn * N_PER_KN / force_n
    allowed_n = min(anchor_kn / anchor_sf, mbs_kn / line_sf) * N_PER_KN
    if allowed_n >= 2.0 * weight_n:
        max_slack_m = (allowed_n**2 - 2.0 * allowed_n * weight_n) / (2.0 * weight_n * k)
    else:
        max_slack_m = 0.0

    steps += [
        f"k = EA / L = {num(ea_kn)} kN / {num(length_m)} m = {num(k / N_PER_KN)} kN/m",
        f"m·g = {num(mass_kg)} kg × {num(G)} m/s² = {num(weight_n)} N",
        f"F = m·g + √((m·g)² + 2·m·g·k·h) = {num(weight_n)} + √({num(weight_n)}² + 2 ×"
        f" {num(weight_n)} × {num(k)} × {num(fall_m)}) = {num(force_n)} N",
        f"stretch x = F / k = {num(force_n)} N / {num(k)} N/m = {num(stretch_m)} m",
        f"energy check: m·g·(h + x) = {num(weight_n * drop_m)} J;"
        f" ½·k·x² = {num(0.5 * k * stretch_m**2)} J",
        f"total drop = {num(fall_m)} m + {num(stretch_m)} m = {num(drop_m)} m"
        " (clearance needed below the point where the line starts to take load)",
        f"anchor factor = {num(anchor_kn)} kN / {num(force_n / N_PER_KN)} kN"
        f" = {num(anchor_factor)} (required {num(anchor_sf)})",
        f"line factor = {num(mbs_kn)} kN / {num(force_n / N_PER_KN)} kN"
        f" = {num(line_factor)} (required {num(line_sf)})",
        f"allowed peak force = min({num(anchor_kn)} / {num(anchor_sf)},"
        f" {num(mbs_kn)} / {num(line_sf)}) kN = {num(allowed_n / N_PER_KN)} kN",
    ]
    if allowed_n >= 2.0 * weight_n:
        steps.append(
            f"most slack = (F² - 2·F·m·g) / (2·m·g·k) = ({num(allowed_n)}² - 2 ×"
            f" {num(allowed_n)} × {num(weight_n)}) / (2 × {num(weight_n)} × {num(k)})"
            f" = {num(max_slack_m)} m"
        )
    else:
        steps.append(
            f"most slack = 0 m: the allowed force {num(allowed_n)} N is below 2·m·g ="
            f" {num(2.0 * weight_n)} N, the force of a load taken up with no slack at all"
        )
    outputs: dict[str, OutputValue] = {
        "line_ea_kn": ea_kn,
        "line_stiffness_kn_per_m": k / N_PER_KN,
        "static_force_kn": weight_n / N_PER_KN,
        "peak_force_kn": force_n / N_PER_KN,
        "dynamic_factor": force_n / weight_n,
        "line_stretch_m": stretch_m,
        "total_drop_m": drop_m,
        "anchor_factor": anchor_factor,
        "line_factor": line_factor,
        "allowed_force_kn": allowed_n / N_PER_KN,
        "max_slack_m": max_slack_m,
    }
    checks = [
        Check("anchor", anchor_factor / anchor_sf - 1.0),
        Check("line", line_factor / line_sf - 1.0),
    ]
    return CalcResult.build(
        name=NAME, inputs=values.as_dict(), outputs=outputs, checks=checks, steps=steps
    )


CALCULATION = Calculation(
    name=NAME, title="Fall arrest load", fields=FIELDS, rules=RULES, compute=compute
)


def arrest_load(inputs: Mapping[str, object]) -> CalcResult:
    """Validate `inputs` and run the arrest-load calculation."""
    return CALCULATION.run(inputs)

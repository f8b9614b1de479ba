"""arrest-load: if the grip fails, what peak force reaches the safety line and its anchor?

A linear-elastic line of stiffness k = EA/L catches the falling mass after a free fall h. Energy
balance m·g·(h + x) = ½·k·x² gives the peak force F = m·g + √((m·g)² + 2·m·g·k·h) and the
stretch x = F/k. The line is shortest, so stiffest and hardest on the anchor, at the top of the
drop, and longest, so stretching furthest, at its foot: both are evaluated and the worse
governs each check. The falling mass is the robot, its payload and water on board, and the
hose it carries (as long as the deployed line, filled with water when its bore is given).

An energy absorber, where fitted, holds the force at its rated arrest force F_a once the line
reaches it; it then pays out d = (m·g·(h + x_a) - ½·k·x_a²) / (F_a - m·g), x_a = F_a/k, which
must stay within its rated deployment. The total drop h + x + d at the foot of the drop must fit
in the clearance below. Margins: anchor factor / required - 1, line factor / required - 1,
clearance / drop - 1, rated deployment / deployment needed - 1.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass

from .calculation import Calculation, OutOfRange, build_result
from .constants import M_PER_MM, N_PER_KN, WATER_DENSITY_20C_KGM3, G
from .inputs import AtMostFractionOf, ExactlyOne, Inputs, Together, number
from .result import CalcResult, Check, OutputValue
from .working import num

NAME = "arrest-load"

FIELDS = (
    number("mass_kg", "kg", "robot's own mass, without water", greater_than=0.0),
    number("payload_kg", "kg", "payload and tools carried on the robot", at_least=0.0, default=0.0),
    number("water_on_board_kg", "kg", "water carried on the robot", at_least=0.0, default=0.0),
    number(
        "hose_kg_per_m",
        "kg/m",
        "self-weight of the hose the robot carries, per metre",
        at_least=0.0,
        default=0.0,
    ),
    number(
        "hose_id_mm",
        "mm",
        "inner diameter of that hose, to add the water it holds",
        greater_than=0.0,
        at_most=500.0,
        limit_reason="plausibility bound",
        optional=True,
    ),
    number("free_fall_m", "m", "slack before the line takes load", at_least=0.0),
    number(
        "shortest_line_m",
        "m",
        "deployed line length at the top of the drop, anchor to robot",
        greater_than=0.0,
    ),
    number("line_length_m", "m", "deployed line length at the foot of the drop", greater_than=0.0),
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
    number(
        "clearance_below_m",
        "m",
        "clear height below the robot at the lowest point of the drop",
        at_least=0.0,
    ),
    number(
        "absorber_arrest_force_kn",
        "kN",
        "energy absorber's rated arrest force, where one is fitted",
        greater_than=0.0,
        optional=True,
    ),
    number(
        "absorber_deployment_m",
        "m",
        "energy absorber's rated deployment length",
        greater_than=0.0,
        optional=True,
    ),
)

RULES = (
    ExactlyOne((("line_ea_kn",), ("elongation_pct", "elongation_load_kn"))),
    AtMostFractionOf(
        "shortest_line_m",
        "line_length_m",
        1.0,
        "the line at the top of the drop is not longer than at its foot",
    ),
    Together(("absorber_arrest_force_kn", "absorber_deployment_m")),
)


def peak_force_n(*, weight_n: float, stiffness_n_per_m: float, free_fall_m: float) -> float:
    """Peak line force of a linear-elastic arrest, from the energy balance.

    √((m·g)² + 2·m·g·k·h) is written √(m·g)·√(m·g + 2·k·h), so a huge weight gives an infinite
    force (caught as out of range) rather than an overflow error."""
    return weight_n + math.sqrt(weight_n) * math.sqrt(
        weight_n + 2.0 * stiffness_n_per_m * free_fall_m
    )


@dataclass(frozen=True)
class Arrest:
    """The arrest at one deployed length."""

    where: str
    length_m: float
    mass_kg: float
    stiffness_n_per_m: float
    force_n: float
    stretch_m: float
    deployment_m: float
    absorber_bottoms_out: bool

    @property
    def drop_m(self) -> float:
        return self.stretch_m + self.deployment_m


def arrest_at(
    *,
    where: str,
    length_m: float,
    mass_kg: float,
    ea_n: float,
    free_fall_m: float,
    absorber_n: float | None,
) -> Arrest:
    """The peak force, stretch and absorber pay-out of a fall caught on `length_m` of line."""
    weight_n = mass_kg * G
    k = ea_n / length_m
    if k == 0.0:
        raise OutOfRange("line_stiffness_kn_per_m", k)
    force_n = peak_force_n(weight_n=weight_n, stiffness_n_per_m=k, free_fall_m=free_fall_m)
    deployment_m = 0.0
    bottoms_out = False
    if absorber_n is not None and force_n > absorber_n:
        if absorber_n <= weight_n:
            bottoms_out = True
        else:
            stretch_a = absorber_n / k
            energy = weight_n * (free_fall_m + stretch_a) - 0.5 * k * stretch_a**2
            deployment_m = max(energy / (absorber_n - weight_n), 0.0)
            force_n = absorber_n
    return Arrest(
        where=where,
        length_m=length_m,
        mass_kg=mass_kg,
        stiffness_n_per_m=k,
        force_n=force_n,
        stretch_m=force_n / k,
        deployment_m=deployment_m,
        absorber_bottoms_out=bottoms_out,
    )


def compute(values: Inputs) -> CalcResult:
    robot_kg = values.number("mass_kg")
    payload_kg = values.number("payload_kg")
    water_kg = values.number("water_on_board_kg")
    hose_kg_per_m = values.number("hose_kg_per_m")
    hose_id_mm = values.optional_number("hose_id_mm")
    fall_m = values.number("free_fall_m")
    short_m = values.number("shortest_line_m")
    full_m = values.number("line_length_m")
    anchor_kn = values.number("anchor_rating_kn")
    mbs_kn = values.number("line_mbs_kn")
    anchor_sf = values.number("anchor_safety_factor")
    line_sf = values.number("line_safety_factor")
    clearance_m = values.number("clearance_below_m")
    absorber_kn = values.optional_number("absorber_arrest_force_kn")
    absorber_m = values.optional_number("absorber_deployment_m")

    steps: list[str] = []
    given_ea = values.optional_number("line_ea_kn")
    if given_ea is None:
        pct = values.number("elongation_pct")
        load_kn = values.number("elongation_load_kn")
        ea_kn = load_kn / (pct / 100.0)
        steps.append(f"EA = {num(load_kn)} kN / ({num(pct)} % / 100) = {num(ea_kn)} kN")
    else:
        ea_kn = given_ea
    water_per_m = 0.0
    if hose_id_mm is not None:
        water_per_m = WATER_DENSITY_20C_KGM3 * math.pi * (hose_id_mm * M_PER_MM) ** 2 / 4.0
        steps.append(
            f"water in the hose = 998.2 kg/m³ × π × ({num(hose_id_mm)} mm)² / 4"
            f" = {num(water_per_m)} kg/m"
        )
    carried_per_m = hose_kg_per_m + water_per_m
    fixed_kg = robot_kg + payload_kg + water_kg
    absorber_n = None if absorber_kn is None else absorber_kn * N_PER_KN
    arrests = []
    for where, length_m in (("top of the drop", short_m), ("foot of the drop", full_m)):
        mass_kg = fixed_kg + carried_per_m * length_m
        a = arrest_at(
            where=where,
            length_m=length_m,
            mass_kg=mass_kg,
            ea_n=ea_kn * N_PER_KN,
            free_fall_m=fall_m,
            absorber_n=absorber_n,
        )
        arrests.append(a)
        weight_n = mass_kg * G
        steps += [
            f"{where}: falling mass = {num(robot_kg)} + {num(payload_kg)} + {num(water_kg)} kg"
            f" + {num(carried_per_m)} kg/m × {num(length_m)} m of hose = {num(mass_kg)} kg",
            f"{where}: k = EA / L = {num(ea_kn)} kN / {num(length_m)} m"
            f" = {num(a.stiffness_n_per_m / N_PER_KN)} kN/m; F = m·g + √((m·g)² + 2·m·g·k·h)"
            f" = {num(weight_n)} + √({num(weight_n)}² + 2 × {num(weight_n)} ×"
            f" {num(a.stiffness_n_per_m)} × {num(fall_m)}) N",
        ]
        if a.absorber_bottoms_out:
            steps.append(
                f"{where}: the absorber's {num(absorber_kn or 0.0)} kN is no more than the weight"
                f" {num(weight_n / N_PER_KN)} kN: it cannot stop the fall"
            )
        elif a.deployment_m > 0.0:
            steps.append(
                f"{where}: the absorber holds the force at {num(a.force_n / N_PER_KN)} kN and pays"
                f" out {num(a.deployment_m)} m (energy balance)"
            )
        steps.append(
            f"{where}: peak force {num(a.force_n / N_PER_KN)} kN, stretch {num(a.stretch_m)} m"
        )
    top, foot = arrests
    worst = max(arrests, key=lambda a: a.force_n)
    force_n = worst.force_n
    drop_m = fall_m + foot.drop_m
    anchor_factor = anchor_kn * N_PER_KN / force_n
    line_factor = mbs_kn * N_PER_KN / force_n
    allowed_n = min(anchor_kn / anchor_sf, mbs_kn / line_sf) * N_PER_KN
    top_weight_n = top.mass_kg * G
    if allowed_n >= 2.0 * top_weight_n:
        max_slack_m = (allowed_n**2 - 2.0 * allowed_n * top_weight_n) / (
            2.0 * top_weight_n * top.stiffness_n_per_m
        )
    else:
        max_slack_m = 0.0
    steps += [
        f"governing force: {worst.where}, {num(force_n / N_PER_KN)} kN",
        f"anchor factor = {num(anchor_kn)} kN / {num(force_n / N_PER_KN)} kN"
        f" = {num(anchor_factor)} (required {num(anchor_sf)})",
        f"line factor = {num(mbs_kn)} kN / {num(force_n / N_PER_KN)} kN"
        f" = {num(line_factor)} (required {num(line_sf)})",
        f"total drop at the foot = {num(fall_m)} m free fall + {num(foot.stretch_m)} m stretch"
        f" + {num(foot.deployment_m)} m absorber = {num(drop_m)} m"
        f" (clearance below {num(clearance_m)} m)",
        f"most slack at the top of the drop = {num(max_slack_m)} m"
        f" (allowed force {num(allowed_n / N_PER_KN)} kN)",
    ]
    outputs: dict[str, OutputValue] = {
        "line_ea_kn": ea_kn,
        "line_stiffness_kn_per_m": worst.stiffness_n_per_m / N_PER_KN,
        "falling_mass_top_kg": top.mass_kg,
        "falling_mass_foot_kg": foot.mass_kg,
        "peak_force_top_kn": top.force_n / N_PER_KN,
        "peak_force_foot_kn": foot.force_n / N_PER_KN,
        "peak_force_kn": force_n / N_PER_KN,
        "governing_position": worst.where,
        "static_force_kn": worst.mass_kg * G / N_PER_KN,
        "dynamic_factor": force_n / (worst.mass_kg * G),
        "line_stretch_m": foot.stretch_m,
        "absorber_deployment_needed_m": max(top.deployment_m, foot.deployment_m)
        if absorber_n is not None
        else None,
        "total_drop_m": drop_m,
        "anchor_factor": anchor_factor,
        "line_factor": line_factor,
        "allowed_force_kn": allowed_n / N_PER_KN,
        "max_slack_m": max_slack_m,
    }
    kn = force_n / N_PER_KN
    checks = [
        Check(
            "anchor",
            anchor_factor / anchor_sf - 1.0,
            reason=(
                f"A fall at the {worst.where} would load the anchor with about {num(kn, 3)} kN;"
                f" its {num(anchor_kn, 3)} kN rating leaves a factor of {num(anchor_factor, 2)},"
                f" {num(anchor_sf, 2)} is required."
            ),
        ),
        Check(
            "line",
            line_factor / line_sf - 1.0,
            reason=(
                f"A fall at the {worst.where} would load the safety line with about"
                f" {num(kn, 3)} kN; its {num(mbs_kn, 3)} kN strength leaves a factor of"
                f" {num(line_factor, 2)}, {num(line_sf, 2)} is required."
            ),
        ),
        Check(
            "clearance",
            None if drop_m == 0.0 else clearance_m / drop_m - 1.0,
            reason=(
                f"A fall at the foot of the drop would drop the robot about {num(drop_m, 2)} m;"
                f" only {num(clearance_m, 2)} m are clear below it."
            ),
        ),
    ]
    if absorber_n is not None and absorber_m is not None:
        if any(a.absorber_bottoms_out for a in arrests):
            checks.append(
                Check(
                    "absorber",
                    -1.0,
                    gate=True,
                    reason=(
                        f"The absorber's {num(absorber_kn or 0.0, 3)} kN arrest force does not"
                        " exceed the falling weight: it cannot stop the fall."
                    ),
                )
            )
        needed_m = max(top.deployment_m, foot.deployment_m)
        checks.append(
            Check(
                "absorber_deployment",
                None if needed_m == 0.0 else absorber_m / needed_m - 1.0,
                reason=(
                    f"The absorber would need to pay out about {num(needed_m, 2)} m;"
                    f" it is rated for {num(absorber_m, 2)} m."
                ),
            )
        )
    return build_result(
        name=NAME, inputs=values.as_dict(), outputs=outputs, checks=checks, steps=steps
    )


CALCULATION = Calculation(
    name=NAME, title="Fall arrest load", fields=FIELDS, rules=RULES, compute=compute
)


def arrest_load(inputs: Mapping[str, object]) -> CalcResult:
    """Validate `inputs` and run the arrest-load calculation."""
    return CALCULATION.run(inputs)

"""water-line: pressure at the robot's valve on a hose fed from the roof, top and foot of a drop.

The hose is fed on the roof from a tank or a pump (`supply_kpa`, zero for a tank). Static
pressure at the valve = supply + ρ·g·h. Friction loss by Darcy-Weisbach, f = 64/Re below Re
2300, Colebrook-White (solved by iteration) from Re 4000, and in the band between the larger
of the two, so the loss is never under-stated; fittings lose K·ρ·v²/2 more.

The nozzles are checked where the head is least, at the top of the drop: flowing = static
- friction - fittings. The hose is checked where the head is greatest, at the foot, with the
surge of the valve closing (Joukowsky): Δp = ρ·a·v when it closes within the wave's round trip
2·L/a, else ρ·a·v·(2·L/a)/t_c. Margins: hose rating / (static + surge) - 1 at the foot and
flowing / nozzle minimum - 1 at the top.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from typing import Final

from .calculation import Calculation, OutOfRange, build_result
from .constants import M3_PER_L, M_PER_MM, PA_PER_KPA, S_PER_MIN, G
from .inputs import AtMostFractionOf, Inputs, number
from .result import CalcResult, Check, OutputValue, ratio_margin
from .water_properties import density_kgm3, viscosity_pas
from .working import num

NAME = "water-line"

LAMINAR_BELOW_RE: Final = 2300.0
TURBULENT_FROM_RE: Final = 4000.0
"""Transitional band 2300-4000: common practice, from memory (e.g. White, Fluid Mechanics, on
the transition in pipe flow)."""


def colebrook(reynolds: float, relative_roughness: float) -> float:
    """Darcy friction factor from Colebrook-White, 1/√f = -2·log10(ε/(3.7·D) + 2.51/(Re·√f)).

    Solved by fixed-point iteration on 1/√f from the Swamee-Jain (1976) estimate; converges to
    machine precision in a few steps for Re above 2000.
    """
    a = relative_roughness / 3.7
    b = 2.51 / reynolds
    x = -2.0 * math.log10(a + 5.74 / reynolds**0.9)
    for _ in range(100):
        nxt = -2.0 * math.log10(a + b * x)
        if abs(nxt - x) <= 1e-15 * abs(nxt):
            x = nxt
            break
        x = nxt
    return 1.0 / (x * x)


def friction_factor(reynolds: float, relative_roughness: float) -> tuple[float, str]:
    """Darcy friction factor and flow regime ('laminar', 'transitional', 'turbulent')."""
    if reynolds < LAMINAR_BELOW_RE:
        return 64.0 / reynolds, "laminar"
    turbulent = colebrook(reynolds, relative_roughness)
    if reynolds < TURBULENT_FROM_RE:
        return max(64.0 / reynolds, turbulent), "transitional"
    return turbulent, "turbulent"


FIELDS = (
    number(
        "drop_m",
        "m",
        "height of the supply above the valve at the foot of the drop",
        at_least=0.0,
        at_most=1000.0,
        limit_reason="plausibility bound",
    ),
    number(
        "top_head_m",
        "m",
        "height of the supply above the valve at the top of the drop",
        at_least=0.0,
        at_most=1000.0,
        limit_reason="plausibility bound",
    ),
    number(
        "supply_kpa",
        "kPa",
        "pressure the roof pump adds at the hose inlet (zero for a tank)",
        at_least=0.0,
        default=0.0,
    ),
    number(
        "hose_id_mm",
        "mm",
        "hose inside diameter",
        greater_than=0.0,
        at_most=300.0,
        limit_reason="plausibility bound",
    ),
    number("hose_length_m", "m", "hose length from the supply to the valve", greater_than=0.0),
    number("flow_lpm", "L/min", "water flow through the hose", at_least=0.0),
    number("roughness_mm", "mm", "hose wall absolute roughness", at_least=0.0),
    number(
        "water_temp_c",
        "°C",
        "water temperature",
        at_least=0.0,
        at_most=60.0,
        limit_reason="the water property model covers 0-60 °C",
    ),
    number(
        "fittings_k",
        "",
        "sum of the loss coefficients of couplings, valve and bends",
        at_least=0.0,
        at_most=1000.0,
        limit_reason="plausibility bound",
    ),
    number(
        "wave_speed_ms",
        "m/s",
        "pressure wave speed in the filled hose",
        greater_than=0.0,
        at_most=1500.0,
        limit_reason="no wave runs faster than sound in water",
    ),
    number("valve_closure_s", "s", "time the robot's valve takes to close", at_least=0.0),
    number("hose_rating_kpa", "kPa", "hose working pressure rating", greater_than=0.0),
    number("nozzle_min_kpa", "kPa", "least pressure the nozzles need", greater_than=0.0),
)

RULES = (
    AtMostFractionOf(
        "roughness_mm", "hose_id_mm", 0.05, "relative roughness beyond the Moody chart's range"
    ),
    AtMostFractionOf(
        "top_head_m", "drop_m", 1.0, "the valve is no lower at the top of the drop than at its foot"
    ),
)


def surge_kpa(
    *, density: float, wave_speed_ms: float, velocity_ms: float, length_m: float, closure_s: float
) -> tuple[float, float]:
    """Joukowsky's surge for a valve closing in `closure_s`, and the wave's round trip 2·L/a."""
    round_trip_s = 2.0 * length_m / wave_speed_ms
    full = density * wave_speed_ms * velocity_ms / PA_PER_KPA
    if closure_s <= round_trip_s:
        return full, round_trip_s
    return full * round_trip_s / closure_s, round_trip_s


def compute(values: Inputs) -> CalcResult:
    drop_m = values.number("drop_m")
    top_m = values.number("top_head_m")
    supply_kpa = values.number("supply_kpa")
    diameter_m = values.number("hose_id_mm") * M_PER_MM
    length_m = values.number("hose_length_m")
    flow_lpm = values.number("flow_lpm")
    roughness_m = values.number("roughness_mm") * M_PER_MM
    temp_c = values.number("water_temp_c")
    fittings_k = values.number("fittings_k")
    wave_ms = values.number("wave_speed_ms")
    closure_s = values.number("valve_closure_s")
    rating_kpa = values.number("hose_rating_kpa")
    nozzle_kpa = values.number("nozzle_min_kpa")

    rho = density_kgm3(temp_c)
    mu = viscosity_pas(temp_c)
    area_m2 = math.pi * diameter_m**2 / 4.0
    if area_m2 == 0.0:
        raise OutOfRange("hose_area_m2", area_m2)
    flow_m3s = flow_lpm * M3_PER_L / S_PER_MIN
    velocity = flow_m3s / area_m2
    reynolds = rho * velocity * diameter_m / mu
    if not math.isfinite(reynolds):
        # Colebrook-White has no answer here: with a smooth wall log10(0) is undefined.
        raise OutOfRange("reynolds", reynolds)
    static_top_kpa = supply_kpa + rho * G * top_m / PA_PER_KPA
    static_foot_kpa = supply_kpa + rho * G * drop_m / PA_PER_KPA
    steps = [
        f"water at {num(temp_c)} °C: ρ = {num(rho)} kg/m³, μ = {num(mu)} Pa·s",
        f"standing pressure at the top = {num(supply_kpa)} kPa + ρ·g·h = {num(supply_kpa)} +"
        f" {num(rho)} × {num(G)} × {num(top_m)} m / 1000 = {num(static_top_kpa)} kPa",
        f"standing pressure at the foot = {num(supply_kpa)} + {num(rho)} × {num(G)} ×"
        f" {num(drop_m)} m / 1000 = {num(static_foot_kpa)} kPa",
        f"velocity = {num(flow_lpm)} L/min / 60000 / (π × ({num(diameter_m)} m)² / 4)"
        f" = {num(velocity)} m/s",
        f"Re = ρ·v·D/μ = {num(rho)} × {num(velocity)} × {num(diameter_m)} / {num(mu)}"
        f" = {num(reynolds)}",
    ]
    f: float | None
    if reynolds == 0.0:
        f, regime, loss_kpa = None, "none", 0.0
        steps.append("no flow: no friction loss")
    else:
        f, regime = friction_factor(reynolds, roughness_m / diameter_m)
        if regime == "laminar":
            steps.append(f"laminar (Re < 2300): f = 64 / {num(reynolds)} = {num(f)}")
        elif regime == "transitional":
            steps.append(
                f"transitional (2300 ≤ Re < 4000): f = larger of 64/Re = {num(64.0 / reynolds)}"
                f" and Colebrook-White = {num(colebrook(reynolds, roughness_m / diameter_m))},"
                f" so {num(f)} (never under-states the loss)"
            )
        else:
            steps.append(
                f"turbulent (Re ≥ 4000): Colebrook-White with ε/D = {num(roughness_m)} /"
                f" {num(diameter_m)} = {num(roughness_m / diameter_m)}, solved by iteration:"
                f" f = {num(f)}"
            )
        if regime == "laminar":
            # f·(L/D)·ρ·v²/2 with f = 64/Re, written so a creeping flow cannot overflow.
            loss_kpa = 32.0 * mu * length_m * velocity / diameter_m**2 / PA_PER_KPA
        else:
            loss_kpa = f * (length_m / diameter_m) * rho * (velocity * velocity) / 2.0 / PA_PER_KPA
        steps.append(
            f"friction loss = f·(L/D)·ρ·v²/2 = {num(f)} × ({num(length_m)} / {num(diameter_m)})"
            f" × {num(rho)} × {num(velocity)}² / 2 = {num(loss_kpa)} kPa"
        )
    fittings_kpa = fittings_k * rho * (velocity * velocity) / 2.0 / PA_PER_KPA
    flowing_top_kpa = static_top_kpa - loss_kpa - fittings_kpa
    surge, round_trip_s = surge_kpa(
        density=rho,
        wave_speed_ms=wave_ms,
        velocity_ms=velocity,
        length_m=length_m,
        closure_s=closure_s,
    )
    peak_foot_kpa = static_foot_kpa + surge
    max_drop_m = max(rating_kpa - supply_kpa - surge, 0.0) * PA_PER_KPA / (rho * G)
    water_kg = rho * area_m2 * length_m
    closing = (
        f"the valve closes in {num(closure_s)} s, within the wave's round trip 2·L/a ="
        f" {num(round_trip_s)} s: Δp = ρ·a·v = {num(rho)} × {num(wave_ms)} × {num(velocity)}"
        if closure_s <= round_trip_s
        else f"the valve closes in {num(closure_s)} s, slower than the wave's round trip 2·L/a"
        f" = {num(round_trip_s)} s: Δp = ρ·a·v × {num(round_trip_s)} / {num(closure_s)}"
    )
    steps += [
        f"fittings loss = K·ρ·v²/2 = {num(fittings_k)} × {num(rho)} × {num(velocity)}² / 2"
        f" = {num(fittings_kpa)} kPa",
        f"flowing at the top = {num(static_top_kpa)} - {num(loss_kpa)} - {num(fittings_kpa)}"
        f" = {num(flowing_top_kpa)} kPa (nozzles need {num(nozzle_kpa)} kPa)",
        f"surge (Joukowsky): {closing} = {num(surge)} kPa",
        f"peak at the foot = {num(static_foot_kpa)} + {num(surge)} = {num(peak_foot_kpa)} kPa"
        f" (hose rated {num(rating_kpa)} kPa)",
        f"deepest valve within the rating = ({num(rating_kpa)} - {num(supply_kpa)} -"
        f" {num(surge)}) kPa × 1000 / ({num(rho)} × {num(G)}) = {num(max_drop_m)} m",
        f"water in hose = {num(rho)} × {num(area_m2)} m² × {num(length_m)} m = {num(water_kg)} kg",
    ]
    if flowing_top_kpa < 0.0:
        steps.append("the losses exceed the head at the top: the supply cannot drive this flow")
    outputs: dict[str, OutputValue] = {
        "static_top_kpa": static_top_kpa,
        "flowing_top_kpa": flowing_top_kpa,
        "static_foot_kpa": static_foot_kpa,
        "surge_kpa": surge,
        "peak_foot_kpa": peak_foot_kpa,
        "friction_loss_kpa": loss_kpa,
        "fittings_loss_kpa": fittings_kpa,
        "wave_round_trip_s": round_trip_s,
        "reynolds": reynolds,
        "flow_regime": regime,
        "velocity_ms": velocity,
        "friction_factor": f,
        "max_drop_m": max_drop_m,
        "water_in_hose_kg": water_kg,
        "water_density_kgm3": rho,
        "water_viscosity_pa_s": mu,
    }
    checks = [
        Check(
            "hose_rating",
            ratio_margin(rating_kpa, peak_foot_kpa),
            reason=(
                f"At the foot of the drop the hose would see about {num(peak_foot_kpa, 3)} kPa"
                f" when the valve shuts ({num(static_foot_kpa, 3)} kPa standing and"
                f" {num(surge, 3)} kPa of surge); it is rated {num(rating_kpa, 3)} kPa."
            ),
        ),
        Check(
            "nozzle_pressure",
            flowing_top_kpa / nozzle_kpa - 1.0,
            reason=(
                f"At the top of the drop the nozzles would get about {num(flowing_top_kpa, 3)}"
                f" kPa while flowing; they need {num(nozzle_kpa, 3)} kPa."
                if flowing_top_kpa >= 0.0
                # A pressure below zero is no pressure a nozzle gets: the flow does not arrive.
                else "No water would reach the nozzles at the top of the drop: the supply cannot"
                f" drive {num(flow_lpm, 3)} L/min through the hose's losses; they need"
                f" {num(nozzle_kpa, 3)} kPa."
            ),
        ),
    ]
    return build_result(
        name=NAME, inputs=values.as_dict(), outputs=outputs, checks=checks, steps=steps
    )


CALCULATION = Calculation(
    name=NAME, title="Water line pressure", fields=FIELDS, rules=RULES, compute=compute
)


def water_line(inputs: Mapping[str, object]) -> CalcResult:
    """Validate `inputs` and run the water-line calculation."""
    return CALCULATION.run(inputs)

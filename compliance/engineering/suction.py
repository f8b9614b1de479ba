"""suction-hold: can the vacuum cups hold the robot on a vertical glass wall, in the wind?

Loads on the robot:
- its weight and the brush's drag along the wall (`process_force_n`), in the plane of the glass;
- the wind along the facade on the robot's side (qp·Cd·A_side) and on the hanging hose, half of
  whose drag qp·Cd·D·L reaches the robot, also in the plane of the glass;
- the wind's suction off the wall, qp·|cpe|·A_face, with the external pressure coefficient of
  the facade zone the drop is in (EN 1991-1-4 7.2.2: zones A, B, C along a side wall from its
  windward corner, e = min(b, 2h); either end of the facade can be the windward corner, so the
  distance to the nearer corner decides), and the brush pushing the robot off the glass;
- the peel moment of the weight acting at the centre of mass's offset from the glass, which
  loads the top row of cups by m·g·e / (row spacing).

The wind is taken at the higher of the reading's peak pressure and the pressure of the robot's
stop-work gust, ½·ρ·v² (EN 1991-1-4 4.5 with the gust's speed): work goes on until that gust,
so the grip must hold in it, and no reading of calm can lift the hold above it.

Every action is under the safety factor: the cups' clamp force must carry SF times the outward
pull plus SF times the in-plane load divided by the wet-glass friction; the top row alone must
carry SF times its share of the outward pull plus the peel. Margins: achieved / required
factor - 1 for the whole robot and for the top row.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from typing import Final

from .calculation import Calculation, OutOfRange, build_result
from .constants import ATMOSPHERE_KPA, PA_PER_KPA, G
from .inputs import CalcInputError, Inputs, integer, number
from .result import CalcResult, Check, OutputValue
from .wind import AIR_DENSITY
from .working import num

NAME = "suction-hold"

CPE_1: Final[dict[str, float]] = {"A": -1.4, "B": -1.1, "C": -0.7}
"""External pressure coefficients for loaded areas of 1 m² or less on a side wall, EN 1991-1-4
Table 7.1 cpe,1 (from memory): A -1.4, B -1.1; zone C is -0.5 there, taken here as -0.7, the
leeward wall's worst value, since the facade can also be the leeward face. Check against the
standard and its national annex before relying on them."""

HOSE_DRAG_COEFFICIENT: Final = 1.2
"""A round hose across the wind, subcritical flow (from memory: a circular cylinder's drag
coefficient near 1.2 at these Reynolds numbers)."""


def facade_zone(
    *, corner_distance_m: float, building_depth_m: float | None, building_height_m: float
) -> tuple[str, float | None]:
    """EN 1991-1-4 7.2.2 zone of a point on a side wall, by its distance from the windward corner,
    and the scaling length e = min(b, 2h); with no depth known the worst zone, A, is assumed."""
    if building_depth_m is None:
        return "A", None
    e_m = min(building_depth_m, 2.0 * building_height_m)
    if corner_distance_m < e_m / 5.0:
        return "A", e_m
    if corner_distance_m < e_m:
        return "B", e_m
    return "C", e_m


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
    number(
        "effective_area_ratio",
        "",
        "fraction of the cup's disc area the vacuum acts on (inside the lip)",
        greater_than=0.0,
        at_most=1.0,
        limit_reason="the vacuum cannot act on more than the cup's own area",
    ),
    integer("cups", "", "cups engaged on the glass at once", at_least=1),
    integer("cup_rows", "", "rows of cups, one above the other", at_least=1),
    number(
        "row_spacing_m",
        "m",
        "distance from the bottom row of cups to the top row",
        at_least=0.0,
        at_most=10.0,
        limit_reason="plausibility bound",
    ),
    number(
        "wet_glass_friction",
        "",
        "friction coefficient of a cup on wet glass",
        greater_than=0.0,
        at_most=2.0,
        limit_reason="no cup-on-glass friction coefficient is this high",
    ),
    number("mass_kg", "kg", "robot mass carried by the cups", greater_than=0.0),
    number("water_on_board_kg", "kg", "water carried on the robot", at_least=0.0, default=0.0),
    number(
        "com_offset_m",
        "m",
        "distance of the robot's centre of mass from the glass",
        at_least=0.0,
        at_most=5.0,
        limit_reason="plausibility bound",
    ),
    number("process_force_n", "N", "brush drag along the wall", at_least=0.0, default=0.0),
    number("brush_push_n", "N", "brush pushing the robot off the glass", at_least=0.0, default=0.0),
    number(
        "peak_pressure_pa",
        "Pa",
        "peak velocity pressure of the wind at working height",
        at_least=0.0,
    ),
    number(
        "stop_work_gust_ms",
        "m/s",
        "gust at working height at which work stops: the hold must still hold in it",
        greater_than=0.0,
        at_most=120.0,
        limit_reason="plausibility bound, above any recorded surface gust",
        optional=True,
    ),
    AIR_DENSITY,
    number("face_area_m2", "m²", "robot area facing out from the wall", greater_than=0.0),
    number("side_area_m2", "m²", "robot area facing wind along the wall", at_least=0.0),
    number(
        "drag_coefficient",
        "",
        "drag coefficient of the robot's side",
        greater_than=0.0,
        at_most=3.0,
        limit_reason="plausibility bound",
    ),
    number(
        "corner_distance_m",
        "m",
        "distance along the facade from the drop to the nearer corner",
        at_least=0.0,
    ),
    number(
        "building_depth_m",
        "m",
        "building's extent at right angles to the facade (b for wind along it)",
        greater_than=0.0,
        optional=True,
    ),
    number("building_height_m", "m", "building height above ground", greater_than=0.0),
    number(
        "hose_od_mm",
        "mm",
        "outside diameter of the hanging hose",
        at_least=0.0,
        at_most=300.0,
        limit_reason="plausibility bound",
        default=0.0,
    ),
    number(
        "hanging_hose_m",
        "m",
        "length of hose hanging from the roof to the robot",
        at_least=0.0,
        default=0.0,
    ),
    number("safety_factor", "", "required safety factor on the hold", at_least=1.0),
)


def compute(values: Inputs) -> CalcResult:
    vacuum_kpa = values.number("vacuum_kpa")
    diameter_m = values.number("cup_diameter_m")
    area_ratio = values.number("effective_area_ratio")
    cups = values.integer("cups")
    rows = values.integer("cup_rows")
    spacing_m = values.number("row_spacing_m")
    friction = values.number("wet_glass_friction")
    mass_kg = values.number("mass_kg") + values.number("water_on_board_kg")
    offset_m = values.number("com_offset_m")
    process_n = values.number("process_force_n")
    push_n = values.number("brush_push_n")
    reading_qp_pa = values.number("peak_pressure_pa")
    stop_work_ms = values.optional_number("stop_work_gust_ms")
    rho = values.number("air_density_kgm3")
    face_m2 = values.number("face_area_m2")
    side_m2 = values.number("side_area_m2")
    cd = values.number("drag_coefficient")
    corner_m = values.number("corner_distance_m")
    depth_m = values.optional_number("building_depth_m")
    height_m = values.number("building_height_m")
    hose_od_m = values.number("hose_od_mm") / 1000.0
    hose_m = values.number("hanging_hose_m")
    required = values.number("safety_factor")

    if rows > cups:
        raise CalcInputError("cup_rows", f"must be at most the number of cups ({cups})")
    if rows > 1 and spacing_m == 0.0:
        raise CalcInputError(
            "row_spacing_m", "must be greater than zero when there is more than one row of cups"
        )
    area_m2 = area_ratio * math.pi * diameter_m**2 / 4.0
    if area_m2 == 0.0:
        raise OutOfRange("effective_area_m2", area_m2)
    stop_work_qp_pa: float | None = None
    if stop_work_ms is None:
        qp_pa, wind = reading_qp_pa, "wind reading"
        wind_step = (
            f"wind: the reading's peak pressure qp = {num(qp_pa)} Pa (no stop-work gust given)"
        )
        wind_words = ""
    else:
        stop_work_qp_pa = 0.5 * rho * stop_work_ms**2
        stop_text = (
            f"qp at the stop-work gust of {num(stop_work_ms)} m/s = ½ × {num(rho)} kg/m³ ×"
            f" ({num(stop_work_ms)} m/s)² = {num(stop_work_qp_pa)} Pa"
        )
        if stop_work_qp_pa >= reading_qp_pa:
            qp_pa, wind = stop_work_qp_pa, "stop-work gust"
            wind_step = (
                f"wind: {stop_text}, at least the reading's {num(reading_qp_pa)} Pa: the stop-work"
                " gust governs, since work goes on until it"
            )
            wind_words = f" at the stop-work gust of {num(stop_work_ms, 3)} m/s"
        else:
            qp_pa, wind = reading_qp_pa, "wind reading"
            wind_step = (
                f"wind: the reading's qp = {num(reading_qp_pa)} Pa is above {stop_text}:"
                " the reading governs"
            )
            wind_words = ""
    zone, e_m = facade_zone(
        corner_distance_m=corner_m, building_depth_m=depth_m, building_height_m=height_m
    )
    cpe = CPE_1[zone]
    weight_n = mass_kg * G
    suction_n = qp_pa * abs(cpe) * face_m2
    side_n = qp_pa * cd * side_m2
    hose_n = 0.5 * qp_pa * HOSE_DRAG_COEFFICIENT * hose_od_m * hose_m
    outward_n = suction_n + push_n
    in_plane_n = math.hypot(weight_n + process_n, side_n + hose_n)
    clamp_n = vacuum_kpa * PA_PER_KPA * area_m2 * cups
    needed_n = outward_n + in_plane_n / friction
    achieved = clamp_n / needed_n
    per_row = cups / rows
    row_clamp_n = clamp_n / rows
    peel_n = weight_n * offset_m / spacing_m if rows > 1 else 0.0
    row_load_n = outward_n / rows + peel_n
    row_achieved = None if row_load_n == 0.0 else row_clamp_n / row_load_n
    for_all_kpa = required * needed_n / (area_m2 * cups) / PA_PER_KPA
    for_row_kpa = required * row_load_n / (area_m2 * per_row) / PA_PER_KPA
    min_vacuum_kpa = max(for_all_kpa, for_row_kpa)

    place = (
        "no building depth on record: zone A assumed (the worst)"
        if e_m is None
        else f"e = min(b, 2h) = min({num(depth_m or 0.0)}, 2 × {num(height_m)}) = {num(e_m)} m;"
        f" {num(corner_m)} m from the nearer corner is zone {zone}"
    )
    steps = [
        wind_step,
        f"effective area per cup = {num(area_ratio)} × π × ({num(diameter_m)} m)² / 4"
        f" = {num(area_m2)} m²; clamp force = {num(vacuum_kpa)} kPa × {num(area_m2)} m² ×"
        f" {cups} = {num(clamp_n)} N",
        f"facade zone (EN 1991-1-4 7.2.2): {place}; cpe,1 = {num(cpe)}",
        f"wind suction = qp × |cpe| × A = {num(qp_pa)} Pa × {num(abs(cpe))} × {num(face_m2)} m²"
        f" = {num(suction_n)} N; with the brush's push {num(push_n)} N, outward {num(outward_n)} N",
        f"wind along the facade on the robot = {num(qp_pa)} Pa × {num(cd)} × {num(side_m2)} m²"
        f" = {num(side_n)} N; on the hose, half of {num(qp_pa)} Pa × 1.2 ×"
        f" {num(hose_od_m)} m × {num(hose_m)} m = {num(hose_n)} N",
        f"in-plane load = √(({num(weight_n)} N weight + {num(process_n)} N brush)² +"
        f" ({num(side_n)} + {num(hose_n)} N wind)²) = {num(in_plane_n)} N",
        f"clamp needed at a factor of one = {num(outward_n)} N + {num(in_plane_n)} N /"
        f" {num(friction)} (wet glass) = {num(needed_n)} N",
        f"achieved safety factor = {num(clamp_n)} N / {num(needed_n)} N = {num(achieved)}"
        f" (required {num(required)})",
    ]
    if rows > 1:
        steps.append(
            f"peel: {num(weight_n)} N × {num(offset_m)} m / {num(spacing_m)} m = {num(peel_n)} N"
            f" on the top row; its load = {num(outward_n)} N / {rows} + {num(peel_n)} N"
            f" = {num(row_load_n)} N against {num(row_clamp_n)} N of clamp"
        )
    steps.append(
        f"least vacuum = max({num(for_all_kpa)}, {num(for_row_kpa)}) = {num(min_vacuum_kpa)} kPa"
        f" (reading {num(vacuum_kpa)} kPa)"
    )
    if min_vacuum_kpa > ATMOSPHERE_KPA:
        steps.append(
            f"the least vacuum exceeds the atmosphere ({num(ATMOSPHERE_KPA)} kPa): "
            "no vacuum can hold with these cups"
        )
    outputs: dict[str, OutputValue] = {
        "effective_area_m2": area_m2,
        "clamp_force_n": clamp_n,
        "facade_zone": zone,
        "cpe": cpe,
        "wind_suction_n": suction_n,
        "outward_n": outward_n,
        "wind_along_facade_n": side_n,
        "hose_drag_n": hose_n,
        "in_plane_load_n": in_plane_n,
        "weight_n": weight_n,
        "achieved_safety_factor": achieved,
        "peel_n": peel_n,
        "top_row_load_n": row_load_n,
        "top_row_clamp_n": row_clamp_n,
        "min_vacuum_kpa": min_vacuum_kpa,
        "stop_work_pressure_pa": stop_work_qp_pa,
        "pressure_used_pa": qp_pa,
        "wind_governing": wind,
    }
    checks = [
        Check(
            "safety_factor",
            achieved / required - 1.0,
            reason=(
                f"The cups clamp with about {num(clamp_n, 3)} N; the robot's weight, the brush"
                f" and the wind{wind_words} need {num(needed_n, 3)} N on wet glass, a factor of"
                f" {num(achieved, 2)} where {num(required, 2)} is required."
            ),
        ),
        Check(
            "top_row",
            None if row_achieved is None else row_achieved / required - 1.0,
            reason=(
                f"The top row of cups would be pulled with about {num(row_load_n, 3)} N (the"
                f" peel of the robot's weight and its share of the wind) against"
                f" {num(row_clamp_n, 3)} N of clamp: a factor of"
                f" {num(row_achieved or 0.0, 2)} where {num(required, 2)} is required."
            ),
        ),
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

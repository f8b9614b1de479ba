"""wind-at-height: from a roof reading to the mean and gust speed at the working height.

Log law of EN 1991-1-4 (4.3.2): v(z) = v(z_ref)·cr(z)/cr(z_ref), cr(z) = kr·ln(max(z, zmin)/z0),
kr = 0.19·(z0/0.05)^0.07, with z0 and zmin of Table 4.1. Power law: v(z) = v(z_ref)·(z/z_ref)^α,
heights also floored at zmin. Turbulence (4.4): Iv(z) = kI / (c0·ln(max(z, zmin)/z0)); peak
velocity pressure (4.5): qp(z) = (1 + 7·Iv(z))·½·ρ·vm(z)², so the peak gust is
vm·√(1 + 7·Iv). A gust factor given explicitly (the maker's, say) replaces √(1 + 7·Iv); a gust
measured on the anemometer, carried to height by the same profile, governs when it is higher.
Margin: limit / gust at height - 1.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from typing import Final

from .calculation import Calculation, build_result
from .constants import AIR_DENSITY_KGM3
from .inputs import AtMostWhen, Inputs, OnlyWhen, Together, choice, number
from .result import CalcResult, Check, OutputValue, ratio_margin
from .working import num

NAME = "wind-at-height"

TERRAIN_Z0_ZMIN_M: Final[dict[str, tuple[float, float]]] = {
    "0": (0.003, 1.0),
    "I": (0.01, 1.0),
    "II": (0.05, 2.0),
    "III": (0.3, 5.0),
    "IV": (1.0, 10.0),
}
"""EN 1991-1-4 Table 4.1: roughness length z0 and minimum height zmin per terrain category."""

LOG_LAW_MAX_HEIGHT_M: Final = 200.0
"""EN 1991-1-4 gives the roughness factor up to 200 m."""

BEAUFORT_LOWER_BOUNDS_MS: Final = (
    0.3,
    1.6,
    3.4,
    5.5,
    8.0,
    10.8,
    13.9,
    17.2,
    20.8,
    24.5,
    28.5,
    32.7,
)
"""WMO Beaufort scale: the lowest mean speed (m/s) of forces 1 to 12."""


def terrain_factor(z0_m: float) -> float:
    """EN 1991-1-4 (4.5): kr = 0.19·(z0 / z0,II)^0.07 with z0,II = 0.05 m."""
    return 0.19 * math.pow(z0_m / 0.05, 0.07)


def default_alpha(z0_m: float) -> float:
    """Power-law exponent matching the EN log profile between 10 m and 100 m.

    Our own derivation, so the two methods agree over the usual range of building heights; it
    gives about 0.11 for terrain 0, 0.16 for II and 0.30 for IV, in line with the commonly used
    1/7 over open country (from memory).
    """
    return math.log(math.log(100.0 / z0_m) / math.log(10.0 / z0_m)) / math.log(10.0)


def beaufort(mean_ms: float) -> int:
    """Beaufort force for a mean speed; a speed in a gap of the table takes the lower force."""
    return sum(1 for bound in BEAUFORT_LOWER_BOUNDS_MS if mean_ms >= bound)


AIR_DENSITY = number(
    "air_density_kgm3",
    "kg/m³",
    "air density",
    at_least=0.5,
    at_most=1.6,
    limit_reason="plausibility bound for air near the ground",
    default=AIR_DENSITY_KGM3,
)
"""The air density input shared by the calculations that load something with the wind."""

FIELDS = (
    number(
        "speed_ms",
        "m/s",
        "mean wind speed read on the roof",
        at_least=0.0,
        at_most=120.0,
        limit_reason="plausibility bound, above any recorded surface gust",
    ),
    number(
        "measured_at_m",
        "m",
        "height above ground of the reading",
        greater_than=0.0,
        at_most=1000.0,
        limit_reason="plausibility bound",
    ),
    number(
        "working_height_m",
        "m",
        "height above ground where the robot works",
        greater_than=0.0,
        at_most=1000.0,
        limit_reason="plausibility bound",
    ),
    choice("terrain", "EN 1991-1-4 terrain category", tuple(TERRAIN_Z0_ZMIN_M)),
    choice("method", "height profile: log law or power law", ("log", "power"), default="log"),
    number(
        "alpha",
        "",
        "power-law exponent, overriding the terrain default",
        greater_than=0.0,
        at_most=1.0,
        limit_reason="plausibility bound",
        optional=True,
    ),
    number(
        "gust_factor",
        "",
        "gust speed over mean speed, replacing EN 1991-1-4's √(1 + 7·Iv) when given",
        at_least=1.0,
        at_most=5.0,
        limit_reason="plausibility bound",
        optional=True,
    ),
    number(
        "measured_gust_ms",
        "m/s",
        "strongest gust read on the anemometer, at the reading's height",
        at_least=0.0,
        at_most=120.0,
        limit_reason="plausibility bound, above any recorded surface gust",
        optional=True,
    ),
    number(
        "turbulence_factor",
        "",
        "EN 1991-1-4 turbulence factor kI (recommended 1.0)",
        greater_than=0.0,
        at_most=3.0,
        limit_reason="plausibility bound",
        default=1.0,
    ),
    number(
        "orography_factor",
        "",
        "EN 1991-1-4 orography factor c0 (1.0 on flat ground)",
        at_least=0.5,
        at_most=3.0,
        limit_reason="plausibility bound",
        default=1.0,
    ),
    number("limit_ms", "m/s", "stop-work gust speed at working height", greater_than=0.0),
    number("area_m2", "m²", "robot area facing the wind", greater_than=0.0, optional=True),
    number(
        "drag_coefficient",
        "",
        "drag coefficient of the robot",
        greater_than=0.0,
        at_most=3.0,
        limit_reason="plausibility bound",
        optional=True,
    ),
    AIR_DENSITY,
)

RULES = (
    AtMostWhen(
        "measured_at_m",
        LOG_LAW_MAX_HEIGHT_M,
        "method",
        "log",
        "EN 1991-1-4 gives the log profile up to 200 m",
    ),
    AtMostWhen(
        "working_height_m",
        LOG_LAW_MAX_HEIGHT_M,
        "method",
        "log",
        "EN 1991-1-4 gives the log profile up to 200 m",
    ),
    OnlyWhen("alpha", "method", "power"),
    Together(("area_m2", "drag_coefficient")),
)


def compute(values: Inputs) -> CalcResult:
    speed_ms = values.number("speed_ms")
    z_ref_m = values.number("measured_at_m")
    z_m = values.number("working_height_m")
    terrain = values.text("terrain")
    method = values.text("method")
    limit_ms = values.number("limit_ms")
    area_m2 = values.optional_number("area_m2")
    rho = values.number("air_density_kgm3")

    z0_m, zmin_m = TERRAIN_Z0_ZMIN_M[terrain]
    z_ref_eff = max(z_ref_m, zmin_m)
    z_eff = max(z_m, zmin_m)
    steps = [
        f"terrain {terrain}: z0 = {num(z0_m)} m, zmin = {num(zmin_m)} m (EN 1991-1-4 Table 4.1);"
        f" heights used {num(z_ref_eff)} m and {num(z_eff)} m"
    ]
    kr = terrain_factor(z0_m)
    alpha: float | None = None
    if method == "log":
        cr_ref = kr * math.log(z_ref_eff / z0_m)
        cr = kr * math.log(z_eff / z0_m)
        ratio = cr / cr_ref
        steps += [
            f"kr = 0.19 × ({num(z0_m)} / 0.05)^0.07 = {num(kr)}",
            f"cr({num(z_eff)} m) = {num(kr)} × ln({num(z_eff)} / {num(z0_m)}) = {num(cr)};"
            f" cr({num(z_ref_eff)} m) = {num(cr_ref)}",
            f"mean at height = {num(speed_ms)} m/s × {num(cr)} / {num(cr_ref)}"
            f" = {num(speed_ms * ratio)} m/s",
        ]
    else:
        given_alpha = values.optional_number("alpha")
        alpha = default_alpha(z0_m) if given_alpha is None else given_alpha
        source = "given" if given_alpha is not None else "fitted to the EN log profile, 10-100 m"
        ratio = math.pow(z_eff / z_ref_eff, alpha)
        steps.append(
            f"mean at height = {num(speed_ms)} m/s × ({num(z_eff)} / {num(z_ref_eff)})"
            f"^{num(alpha)} = {num(speed_ms * ratio)} m/s (α {source})"
        )
    mean_ms = speed_ms * ratio
    k_i = values.number("turbulence_factor")
    c0 = values.number("orography_factor")
    iv = k_i / (c0 * math.log(z_eff / z0_m))
    steps.append(
        f"Iv = kI / (c0 × ln(z / z0)) = {num(k_i)} / ({num(c0)} × ln({num(z_eff)} /"
        f" {num(z0_m)})) = {num(iv)} (EN 1991-1-4 4.4)"
    )
    given_factor = values.optional_number("gust_factor")
    if given_factor is None:
        gust_factor = math.sqrt(1.0 + 7.0 * iv)
        steps.append(f"gust factor = √(1 + 7 × Iv) = √(1 + 7 × {num(iv)}) = {num(gust_factor)}")
    else:
        gust_factor = given_factor
        steps.append(f"gust factor {num(gust_factor)} as given")
    derived_gust_ms = mean_ms * gust_factor
    steps.append(
        f"gust at height from the mean = {num(mean_ms)} m/s × {num(gust_factor)}"
        f" = {num(derived_gust_ms)} m/s"
    )
    measured_gust_ms = values.optional_number("measured_gust_ms")
    measured_at_height: float | None = None
    gust_ms = derived_gust_ms
    if measured_gust_ms is not None:
        measured_at_height = measured_gust_ms * ratio
        steps.append(
            f"measured gust carried to height = {num(measured_gust_ms)} m/s × {num(ratio)}"
            f" = {num(measured_at_height)} m/s"
        )
        gust_ms = max(derived_gust_ms, measured_at_height)
    qp_pa = 0.5 * rho * gust_ms**2
    force = beaufort(mean_ms)
    steps.append(
        f"gust at height = {num(gust_ms)} m/s (limit {num(limit_ms)} m/s); peak velocity"
        f" pressure qp = ½ × {num(rho)} kg/m³ × ({num(gust_ms)} m/s)² = {num(qp_pa)} Pa"
    )
    steps.append(f"Beaufort force {force} for a mean of {num(mean_ms)} m/s (WMO bands)")
    force_n: float | None = None
    if area_m2 is not None:
        cd = values.number("drag_coefficient")
        force_n = qp_pa * cd * area_m2
        steps.append(
            f"wind force = qp × Cd × A = {num(qp_pa)} Pa × {num(cd)} × {num(area_m2)} m²"
            f" = {num(force_n)} N"
        )
    outputs: dict[str, OutputValue] = {
        "speed_at_height_ms": mean_ms,
        "gust_at_height_ms": gust_ms,
        "gust_from_mean_ms": derived_gust_ms,
        "measured_gust_at_height_ms": measured_at_height,
        "turbulence_intensity": iv,
        "gust_factor": gust_factor,
        "peak_velocity_pressure_pa": qp_pa,
        "beaufort": force,
        "force_n": force_n,
        "profile_ratio": ratio,
        "z0_m": z0_m,
        "zmin_m": zmin_m,
        "terrain_factor_kr": kr,
        "alpha": alpha,
    }
    source = (
        "the gust measured on the anemometer"
        if measured_at_height is not None and measured_at_height >= derived_gust_ms
        else "the mean wind's gusts"
    )
    checks = [
        Check(
            "gust_limit",
            ratio_margin(limit_ms, gust_ms),
            reason=(
                f"Gusts at working height reach about {num(gust_ms, 3)} m/s (from {source});"
                f" the limit is {num(limit_ms, 3)} m/s."
            ),
        )
    ]
    return build_result(
        name=NAME, inputs=values.as_dict(), outputs=outputs, checks=checks, steps=steps
    )


CALCULATION = Calculation(
    name=NAME, title="Wind at working height", fields=FIELDS, rules=RULES, compute=compute
)


def wind_at_height(inputs: Mapping[str, object]) -> CalcResult:
    """Validate `inputs` and run the wind-at-height calculation."""
    return CALCULATION.run(inputs)

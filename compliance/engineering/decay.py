"""vacuum-decay: with the pump isolated, how long does the grip last on its own?

Two least-squares fits of the readings: a straight line v = a + b·t and an exponential
v = v0·exp(-t/tau) (a straight line through ln v). The fit that reaches the hold limit sooner
governs, measured from the last sample. Margin: predicted time to the limit / required hold - 1;
a sample already below the limit fails the test outright (margin: lowest sample / limit - 1).
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass

from .calculation import Calculation
from .constants import ATMOSPHERE_KPA, MBAR_PER_KPA, S_PER_MIN
from .inputs import Inputs, number, series
from .result import CalcResult, Check, OutputValue
from .working import num

NAME = "vacuum-decay"

FIELDS = (
    series(
        "samples",
        "kPa",
        "timed vacuum readings [seconds, vacuum_kpa] with the pump isolated",
        min_items=3,
        at_least=0.0,
        at_most=ATMOSPHERE_KPA,
        limit_reason="a gauge vacuum cannot be deeper than the standard atmosphere",
    ),
    number(
        "min_vacuum_kpa",
        "kPa",
        "hold limit: the least vacuum that still holds the robot",
        greater_than=0.0,
        at_most=ATMOSPHERE_KPA,
        limit_reason="a gauge vacuum cannot be deeper than the standard atmosphere",
    ),
    number(
        "required_hold_s",
        "s",
        "how long the grip must last with the pump stopped",
        greater_than=0.0,
    ),
    number(
        "system_volume_l",
        "L",
        "volume under vacuum, for a leak rate in mbar·L/s",
        greater_than=0.0,
        optional=True,
    ),
)


@dataclass(frozen=True)
class LineFit:
    """Least-squares straight line y = intercept + slope·x; r2 is None for a flat series."""

    intercept: float
    slope: float
    r2: float | None


def fit_line(xs: Sequence[float], ys: Sequence[float]) -> LineFit:
    """Ordinary least squares of y on x (x must not be all equal); all-equal y is exactly flat."""
    if min(ys) == max(ys):
        return LineFit(intercept=ys[0], slope=0.0, r2=None)
    n = len(xs)
    mean_x = sum(xs) / n
    mean_y = sum(ys) / n
    sxx = sum((x - mean_x) ** 2 for x in xs)
    sxy = sum((x - mean_x) * (y - mean_y) for x, y in zip(xs, ys, strict=True))
    slope = sxy / sxx
    intercept = mean_y - slope * mean_x
    ss_tot = sum((y - mean_y) ** 2 for y in ys)
    ss_res = sum((y - (intercept + slope * x)) ** 2 for x, y in zip(xs, ys, strict=True))
    r2 = None if ss_tot == 0.0 else 1.0 - ss_res / ss_tot
    return LineFit(intercept=intercept, slope=slope, r2=r2)


def _finite_or_none(value: float) -> float | None:
    return value if math.isfinite(value) else None


def compute(values: Inputs) -> CalcResult:
    samples = values.series("samples")
    limit_kpa = values.number("min_vacuum_kpa")
    required_s = values.number("required_hold_s")
    volume_l = values.optional_number("system_volume_l")

    times = [t for t, _ in samples]
    vacua = [v for _, v in samples]
    t_last = times[-1]
    steps: list[str] = []

    linear = fit_line(times, vacua)
    r2_text = "undefined (flat series)" if linear.r2 is None else num(linear.r2)
    steps.append(
        f"linear fit: v = {num(linear.intercept)} kPa + ({num(linear.slope)} kPa/s) × t,"
        f" R² = {r2_text}"
    )
    linear_time = math.inf
    if linear.slope < 0.0:
        crossing = (limit_kpa - linear.intercept) / linear.slope
        linear_time = max(crossing - t_last, 0.0)
        steps.append(
            f"linear time to limit = ({num(limit_kpa)} - {num(linear.intercept)}) kPa"
            f" / ({num(linear.slope)} kPa/s) - {num(t_last)} s = {num(linear_time)} s"
        )
    else:
        steps.append("linear fit does not fall: no time to the limit (unbounded)")

    exponential: LineFit | None = None
    exponential_time = math.inf
    v0_kpa: float | None = None
    tau_s: float | None = None
    if min(vacua) > 0.0:
        exponential = fit_line(times, [math.log(v) for v in vacua])
        v0_kpa = math.exp(exponential.intercept)
        r2_text = "undefined (flat series)" if exponential.r2 is None else num(exponential.r2)
        if exponential.slope < 0.0:
            tau_s = -1.0 / exponential.slope
            crossing = tau_s * math.log(v0_kpa / limit_kpa)
            exponential_time = max(crossing - t_last, 0.0)
            steps.append(
                f"exponential fit on ln v: v = {num(v0_kpa)} kPa × exp(-t / {num(tau_s)} s),"
                f" R² (of ln v) = {r2_text}"
            )
            steps.append(
                f"exponential time to limit = {num(tau_s)} s × ln({num(v0_kpa)} /"
                f" {num(limit_kpa)}) - {num(t_last)} s = {num(exponential_time)} s"
            )
        else:
            steps.append(
                f"exponential fit on ln v does not fall (R² of ln v = {r2_text}):"
                " no time to the limit (unbounded)"
            )
    else:
        steps.append("exponential fit skipped: a reading of zero vacuum has no logarithm")

    if math.isinf(linear_time) and math.isinf(exponential_time):
        governing_fit = "none"
        time_to_limit = math.inf
        steps.append(
            "no decay: neither fit falls, so the time to the limit is unbounded (shown as none)"
        )
    elif exponential_time < linear_time:
        governing_fit = "exponential"
        time_to_limit = exponential_time
    else:
        governing_fit = "linear"
        time_to_limit = linear_time
    if governing_fit != "none":
        steps.append(
            f"governing fit: {governing_fit} (the shorter time), {num(time_to_limit)} s from the"
            f" last sample against {num(required_s)} s required"
        )

    leak_kpa_per_s = -linear.slope
    leak_kpa_per_min = leak_kpa_per_s * S_PER_MIN
    steps.append(
        f"leak rate = -({num(linear.slope)} kPa/s) × 60 s/min = {num(leak_kpa_per_min)} kPa/min"
    )
    leak_mbar_l_per_s: float | None = None
    if volume_l is not None:
        leak_mbar_l_per_s = volume_l * leak_kpa_per_s * MBAR_PER_KPA
        steps.append(
            f"Q = V × Δp/Δt = {num(volume_l)} L × {num(leak_kpa_per_s)} kPa/s × 10 mbar/kPa"
            f" = {num(leak_mbar_l_per_s)} mbar·L/s"
        )

    lowest_kpa = min(vacua)
    below = [i for i, v in enumerate(vacua, start=1) if v < limit_kpa]
    if below:
        steps.append(
            f"sample {below[0]} ({num(vacua[below[0] - 1])} kPa) is already below the limit"
            f" of {num(limit_kpa)} kPa"
        )

    outputs: dict[str, OutputValue] = {
        "leak_rate_kpa_per_min": leak_kpa_per_min,
        "leak_rate_mbar_l_per_s": leak_mbar_l_per_s,
        "time_to_limit_s": _finite_or_none(time_to_limit),
        "fit": governing_fit,
        "linear_r2": linear.r2,
        "exponential_r2": None if exponential is None else exponential.r2,
        "linear_time_to_limit_s": _finite_or_none(linear_time),
        "exponential_time_to_limit_s": _finite_or_none(exponential_time),
        "linear_intercept_kpa": linear.intercept,
        "linear_slope_kpa_per_s": linear.slope,
        "exponential_v0_kpa": v0_kpa,
        "exponential_tau_s": tau_s,
        "lowest_sample_kpa": lowest_kpa,
        "test_duration_s": t_last - times[0],
    }
    hold_margin = None if math.isinf(time_to_limit) else time_to_limit / required_s - 1.0
    checks = [
        Check("hold_time", hold_margin),
        Check("sample_below_limit", lowest_kpa / limit_kpa - 1.0, gate=True),
    ]
    return CalcResult.build(
        name=NAME, inputs=values.as_dict(), outputs=outputs, checks=checks, steps=steps
    )


CALCULATION = Calculation(
    name=NAME, title="Vacuum decay test", fields=FIELDS, rules=(), compute=compute
)


def vacuum_decay(inputs: Mapping[str, object]) -> CalcResult:
    """Validate `inputs` and run the vacuum-decay calculation."""
    return CALCULATION.run(inputs)

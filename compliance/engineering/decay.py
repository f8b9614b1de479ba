"""vacuum-decay: with the pump isolated, how long does the grip last on its own?

The test is of the rig as it works: its first reading must lie within `start_tolerance_kpa` of
the working vacuum read with the pump running, else nothing is predicted (a test started at
95 kPa says nothing of a robot that works at 40 kPa). The test runs to a schedule: a reading
every `interval_s` (± `interval_tolerance_s`) for at least `min_duration_s`. Times are taken
relative to the first reading. A rushed or gappy series fails before anything is predicted.

Three predictions of the time left from the last reading to the hold limit: least-squares fits
of a straight line v = a + b·t and of an exponential v = v0·exp(-t/tau) (a straight line through
ln v), and the steepest of the last two intervals projected from the last reading, so a leak
that speeds up is not averaged away. The shortest governs, and no prediction reaches further
beyond the last reading than `max_extrapolation` times the test's own duration. A series that
rises, or that neither fit explains to `min_r2`, is inconclusive: repeat the test. But a series
whose readings all lie within the gauge's resolution (`gauge_resolution_kpa`) shows no
measurable leak, and neither its R² nor its rise means anything: the fastest leak the readings
allow, (spread + resolution) / duration, is projected from the lowest reading less the
resolution instead, and is relied on no further than the same cap.
Margin: time relied on / required hold - 1; a reading already below the limit fails outright.
"""

from __future__ import annotations

import itertools
import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass

from .calculation import Calculation, build_result
from .constants import ATMOSPHERE_KPA, MBAR_PER_KPA, S_PER_MIN
from .inputs import AtMostFractionOf, Inputs, Together, number, series
from .result import CalcResult, Check, OutputValue
from .working import num

NAME = "vacuum-decay"

SLACK_S = 1e-6
"""Rounding allowance on a gap: times kept to 0.1 s differ by float error (22.1 - 10.1 is
12.000000000000002), which must not fail a reading taken exactly at the edge."""

SLACK_KPA = 1e-9
"""Rounding allowance on a difference of two readings kept to 0.1 kPa (61.5 - 59.5 and the like
differ from their decimal value by float error), which must not fail a reading at the edge."""

RECENT_INTERVALS = 2
"""How many of the last intervals are projected on their own (our choice: the last two)."""

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
        "interval_s",
        "s",
        "time between two readings of the schedule",
        at_least=1.0,
        limit_reason="a gauge read by hand is not read more often than once a second",
    ),
    number(
        "interval_tolerance_s",
        "s",
        "how far a reading may be from its scheduled time",
        at_least=0.0,
    ),
    number("min_duration_s", "s", "shortest test, first reading to last", greater_than=0.0),
    number(
        "max_extrapolation",
        "",
        "furthest prediction beyond the last reading, as a multiple of the test's duration",
        at_least=0.0,
        at_most=10.0,
        limit_reason="a trend is not projected ten times further than it was watched",
    ),
    number(
        "min_r2",
        "",
        "least coefficient of determination of the better fit for a conclusive test",
        at_least=0.0,
        at_most=1.0,
        limit_reason="R² is at most 1",
    ),
    number(
        "system_volume_l",
        "L",
        "volume under vacuum, for a leak rate in mbar·L/s",
        greater_than=0.0,
        optional=True,
    ),
    number(
        "working_vacuum_kpa",
        "kPa",
        "working vacuum read on the gauge with the pump running, where the test must start",
        greater_than=0.0,
        at_most=ATMOSPHERE_KPA,
        limit_reason="a gauge vacuum cannot be deeper than the standard atmosphere",
        optional=True,
    ),
    number(
        "start_tolerance_kpa",
        "kPa",
        "how far the first reading may be from the working vacuum",
        at_least=0.0,
        at_most=ATMOSPHERE_KPA,
        limit_reason="a gauge vacuum cannot be deeper than the standard atmosphere",
        optional=True,
    ),
    number(
        "gauge_resolution_kpa",
        "kPa",
        "smallest change the gauge shows: a series within it shows no measurable leak",
        greater_than=0.0,
        at_most=10.0,
        limit_reason="a gauge that cannot show 10 kPa does not time a leak",
        optional=True,
    ),
    number(
        "rescue_time_s",
        "s",
        "time the rescue plan needs to reach the robot at the worst point of its drop",
        greater_than=0.0,
        optional=True,
    ),
)

RULES = (
    AtMostFractionOf(
        "interval_tolerance_s",
        "interval_s",
        0.5,
        "a tolerance over half the interval blurs one reading into the next",
    ),
    Together(("working_vacuum_kpa", "start_tolerance_kpa")),
)


def schedule_problems(
    times: Sequence[float],
    *,
    interval_s: float,
    tolerance_s: float,
    min_duration_s: float,
    min_count: int = 3,
) -> list[str]:
    """What a timed series falls short of, in words (empty when it keeps its schedule).

    Every spacing is within `interval_s` ± `tolerance_s`, the series lasts at least
    `min_duration_s` from its first reading and has at least `min_count` readings.
    """
    problems: list[str] = []
    if len(times) < min_count:
        problems.append(f"{len(times)} readings were taken; at least {min_count} are needed")
    gaps = [b - a for a, b in itertools.pairwise(times)]
    shortest = min(gaps, default=interval_s)
    longest = max(gaps, default=interval_s)
    plan = f"one every {num(interval_s)} s (± {num(tolerance_s)} s)"
    if shortest < interval_s - tolerance_s - SLACK_S:
        problems.append(f"two readings were {num(shortest)} s apart; the test needs {plan}")
    if longest > interval_s + tolerance_s + SLACK_S:
        problems.append(f"two readings were {num(longest)} s apart; the test needs {plan}")
    duration = times[-1] - times[0] if times else 0.0
    if duration < min_duration_s - SLACK_S:
        problems.append(
            f"the test ran {num(duration)} s; it must run at least {num(min_duration_s)} s"
        )
    return problems


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


@dataclass(frozen=True)
class Prediction:
    """Time from the last reading to the hold limit by one method (inf when it never falls)."""

    method: str
    time_s: float


def _recent_interval(
    times: Sequence[float], vacua: Sequence[float], limit_kpa: float
) -> Prediction:
    """The steepest fall among the last intervals, projected straight from the last reading."""
    steepest = 0.0
    for i in range(max(len(times) - 1 - RECENT_INTERVALS, 0), len(times) - 1):
        slope = (vacua[i + 1] - vacua[i]) / (times[i + 1] - times[i])
        steepest = min(steepest, slope)
    if steepest >= 0.0:
        return Prediction("recent interval", math.inf)
    return Prediction("recent interval", max((vacua[-1] - limit_kpa) / -steepest, 0.0))


def compute(values: Inputs) -> CalcResult:
    raw = values.series("samples")
    limit_kpa = values.number("min_vacuum_kpa")
    required_s = values.number("required_hold_s")
    interval_s = values.number("interval_s")
    tolerance_s = values.number("interval_tolerance_s")
    min_duration_s = values.number("min_duration_s")
    max_extrapolation = values.number("max_extrapolation")
    min_r2 = values.number("min_r2")
    volume_l = values.optional_number("system_volume_l")
    rescue_s = values.optional_number("rescue_time_s")
    working_kpa = values.optional_number("working_vacuum_kpa")
    start_tolerance_kpa = values.optional_number("start_tolerance_kpa")
    resolution_kpa = values.optional_number("gauge_resolution_kpa")

    t0 = raw[0][0]
    times = [t - t0 for t, _ in raw]
    vacua = [v for _, v in raw]
    duration_s = times[-1]
    lowest_kpa = min(vacua)
    steps: list[str] = []
    if t0 != 0.0:
        steps.append(f"times taken from the first reading (at {num(t0)} s)")

    outputs: dict[str, OutputValue] = {
        "time_to_limit_s": None,
        "predicted_time_to_limit_s": None,
        "extrapolation_cap_s": max_extrapolation * duration_s,
        "fit": "none",
        "linear_r2": None,
        "exponential_r2": None,
        "linear_time_to_limit_s": None,
        "exponential_time_to_limit_s": None,
        "recent_time_to_limit_s": None,
        "leak_rate_kpa_per_min": None,
        "leak_rate_mbar_l_per_s": None,
        "linear_intercept_kpa": None,
        "linear_slope_kpa_per_s": None,
        "exponential_v0_kpa": None,
        "exponential_tau_s": None,
        "lowest_sample_kpa": lowest_kpa,
        "spread_kpa": max(vacua) - lowest_kpa,
        "start_offset_kpa": None,
        "test_duration_s": duration_s,
        "readings": len(times),
    }
    checks: list[Check] = []
    below = [i for i, v in enumerate(vacua, start=1) if v < limit_kpa]
    if below:
        steps.append(
            f"reading {below[0]} ({num(vacua[below[0] - 1])} kPa) is already below the limit"
            f" of {num(limit_kpa)} kPa"
        )
    checks.append(
        Check(
            "sample_below_limit",
            lowest_kpa / limit_kpa - 1.0,
            gate=True,
            reason=(
                f"The vacuum fell to {num(lowest_kpa)} kPa during the test, below the"
                f" {num(limit_kpa)} kPa that holds the robot."
            ),
        )
    )

    off_start = False
    if working_kpa is not None and start_tolerance_kpa is not None:
        offset_kpa = vacua[0] - working_kpa
        outputs["start_offset_kpa"] = offset_kpa
        off_start = abs(offset_kpa) > start_tolerance_kpa + SLACK_KPA
        where = (
            f"first reading {num(vacua[0])} kPa against the working vacuum of {num(working_kpa)}"
            f" kPa: {num(abs(offset_kpa))} kPa apart (at most {num(start_tolerance_kpa)} kPa)"
        )
        if off_start:
            steps.append(f"{where}: not a test of the rig as it works; nothing is predicted")
            checks.append(
                Check(
                    "start",
                    None,
                    gate=True,
                    inconclusive=True,
                    reason=(
                        f"The test started at {num(vacua[0])} kPa but the robot works at"
                        f" {num(working_kpa)} kPa: repeat it from the working vacuum (its first"
                        f" reading within {num(start_tolerance_kpa)} kPa of it)."
                    ),
                )
            )
        else:
            steps.append(where)

    problems = schedule_problems(
        times, interval_s=interval_s, tolerance_s=tolerance_s, min_duration_s=min_duration_s
    )
    if off_start and not problems:
        return build_result(
            name=NAME, inputs=values.as_dict(), outputs=outputs, checks=checks, steps=steps
        )
    if problems:
        steps.append("schedule not kept: " + "; ".join(problems) + "; nothing is predicted")
        checks.append(
            Check(
                "schedule",
                None,
                gate=True,
                inconclusive=True,
                reason="The decay test did not keep its schedule: "
                + "; ".join(problems)
                + ". Start the test again.",
            )
        )
        return build_result(
            name=NAME, inputs=values.as_dict(), outputs=outputs, checks=checks, steps=steps
        )
    steps.append(
        f"schedule kept: {len(times)} readings over {num(duration_s)} s, one every"
        f" {num(interval_s)} s (± {num(tolerance_s)} s), at least {num(min_duration_s)} s"
    )

    linear = fit_line(times, vacua)
    r2_text = "undefined (flat series)" if linear.r2 is None else num(linear.r2)
    steps.append(
        f"linear fit: v = {num(linear.intercept)} kPa + ({num(linear.slope)} kPa/s) × t,"
        f" R² = {r2_text}"
    )
    predictions: list[Prediction] = []
    linear_time = math.inf
    if linear.slope < 0.0:
        crossing = (limit_kpa - linear.intercept) / linear.slope
        linear_time = max(crossing - duration_s, 0.0)
        steps.append(
            f"linear time to limit = ({num(limit_kpa)} - {num(linear.intercept)}) kPa"
            f" / ({num(linear.slope)} kPa/s) - {num(duration_s)} s = {num(linear_time)} s"
        )
    predictions.append(Prediction("linear", linear_time))

    exponential: LineFit | None = None
    exponential_time = math.inf
    if lowest_kpa > 0.0:
        exponential = fit_line(times, [math.log(v) for v in vacua])
        v0_kpa = math.exp(exponential.intercept)
        outputs["exponential_v0_kpa"] = v0_kpa
        if exponential.slope < 0.0:
            tau_s = -1.0 / exponential.slope
            outputs["exponential_tau_s"] = tau_s
            crossing = tau_s * math.log(v0_kpa / limit_kpa)
            exponential_time = max(crossing - duration_s, 0.0)
            steps.append(
                f"exponential fit on ln v: v = {num(v0_kpa)} kPa × exp(-t / {num(tau_s)} s),"
                f" R² (of ln v) = {'undefined' if exponential.r2 is None else num(exponential.r2)}"
            )
            steps.append(
                f"exponential time to limit = {num(tau_s)} s × ln({num(v0_kpa)} /"
                f" {num(limit_kpa)}) - {num(duration_s)} s = {num(exponential_time)} s"
            )
    else:
        steps.append("exponential fit skipped: a reading of zero vacuum has no logarithm")
    predictions.append(Prediction("exponential", exponential_time))

    recent = _recent_interval(times, vacua, limit_kpa)
    predictions.append(recent)
    if math.isfinite(recent.time_s):
        steps.append(
            f"steepest of the last {RECENT_INTERVALS} intervals, projected from the last reading"
            f" ({num(vacua[-1])} kPa): {num(recent.time_s)} s to the limit"
        )

    spread_kpa = max(vacua) - lowest_kpa
    within_resolution = resolution_kpa is not None and spread_kpa <= resolution_kpa + SLACK_KPA
    if resolution_kpa is not None and within_resolution:
        fastest_kpa_per_s = (spread_kpa + resolution_kpa) / duration_s
        from_kpa = lowest_kpa - resolution_kpa
        bound_s = max((from_kpa - limit_kpa) / fastest_kpa_per_s, 0.0)
        steps.append(
            f"the readings all lie within the gauge's resolution ({num(spread_kpa)} kPa apart at"
            f" most, resolution {num(resolution_kpa)} kPa): no leak shows, and the fits above fit"
            " only the gauge's steps, so their R² means nothing"
        )
        steps.append(
            f"fastest leak the readings allow = ({num(spread_kpa)} + {num(resolution_kpa)}) kPa"
            f" / {num(duration_s)} s = {num(fastest_kpa_per_s)} kPa/s; from the lowest reading"
            f" less the resolution, {num(from_kpa)} kPa, to the limit of {num(limit_kpa)} kPa:"
            f" {num(bound_s)} s"
        )
        governing = Prediction("gauge resolution", bound_s)
    else:
        governing = min(predictions, key=lambda p: p.time_s)
    predicted_s = governing.time_s
    cap_s = max_extrapolation * duration_s
    relied_s = min(predicted_s, cap_s)
    if math.isinf(predicted_s):
        steps.append(
            f"no prediction falls; relied on at most {num(max_extrapolation)} × {num(duration_s)}"
            f" s = {num(cap_s)} s beyond the last reading"
        )
    else:
        steps.append(
            f"governing prediction: {governing.method}, {num(predicted_s)} s from the last"
            f" reading; relied on: min({num(predicted_s)}, {num(max_extrapolation)} ×"
            f" {num(duration_s)}) = {num(relied_s)} s against {num(required_s)} s required"
        )

    leak_kpa_per_s = -linear.slope
    steps.append(
        f"leak rate = -({num(linear.slope)} kPa/s) × 60 s/min"
        f" = {num(leak_kpa_per_s * S_PER_MIN)} kPa/min"
    )
    if volume_l is not None:
        outputs["leak_rate_mbar_l_per_s"] = volume_l * leak_kpa_per_s * MBAR_PER_KPA
        steps.append(
            f"Q = V × Δp/Δt = {num(volume_l)} L × {num(leak_kpa_per_s)} kPa/s × 10 mbar/kPa"
            f" = {num(volume_l * leak_kpa_per_s * MBAR_PER_KPA)} mbar·L/s"
        )

    r2s = [r for r in (linear.r2, None if exponential is None else exponential.r2) if r is not None]
    best_r2 = max(r2s) if r2s else None
    outputs.update(
        {
            "time_to_limit_s": relied_s,
            "predicted_time_to_limit_s": _finite_or_none(predicted_s),
            "fit": governing.method if math.isfinite(predicted_s) else "none",
            "linear_r2": linear.r2,
            "exponential_r2": None if exponential is None else exponential.r2,
            "linear_time_to_limit_s": _finite_or_none(linear_time),
            "exponential_time_to_limit_s": _finite_or_none(exponential_time),
            "recent_time_to_limit_s": _finite_or_none(recent.time_s),
            "leak_rate_kpa_per_min": leak_kpa_per_s * S_PER_MIN,
            "linear_intercept_kpa": linear.intercept,
            "linear_slope_kpa_per_s": linear.slope,
        }
    )

    if within_resolution:
        steps.append("no measurable leak: neither a rise nor the scatter of the readings counts")
    elif linear.slope > 0.0:
        steps.append("the vacuum rose over the test: inconclusive")
        checks.append(
            Check(
                "rising",
                None,
                gate=True,
                inconclusive=True,
                reason=(
                    f"The vacuum rose during the test ({num(vacua[0])} kPa to {num(vacua[-1])}"
                    " kPa): the pump may not be isolated or the gauge is unsteady. Inconclusive:"
                    " repeat the test."
                ),
            )
        )
    elif best_r2 is not None and best_r2 < min_r2:
        steps.append(f"best R² {num(best_r2)} is below {num(min_r2)}: inconclusive")
        checks.append(
            Check(
                "fit_quality",
                None,
                gate=True,
                inconclusive=True,
                reason=(
                    f"The readings scatter too much to predict from (R² {num(best_r2, 2)}, at"
                    f" least {num(min_r2, 2)} needed). Inconclusive: repeat the test."
                ),
            )
        )
    if relied_s < predicted_s and relied_s < required_s:
        hold_reason = (
            f"The test ran {num(duration_s, 3)} s, so at most {num(relied_s, 3)} s beyond it can"
            f" be relied on; {num(required_s, 3)} s are needed. Run the test longer."
        )
    else:
        hold_reason = (
            f"With the pump off the grip lasts about {num(relied_s, 2)} s;"
            f" {num(required_s, 3)} s are needed."
        )
    checks.append(Check("hold_time", relied_s / required_s - 1.0, reason=hold_reason))
    if rescue_s is not None:
        steps.append(
            f"rescue: the grip is relied on for {num(relied_s)} s; the rescue plan needs"
            f" {num(rescue_s)} s to reach the robot"
        )
        checks.append(
            Check(
                "rescue_time",
                relied_s / rescue_s - 1.0,
                reason=(
                    f"With the pump off the grip lasts about {num(relied_s, 2)} s; the rescue"
                    f" plan needs {num(rescue_s, 3)} s to reach the robot. The job cannot start."
                ),
            )
        )
    return build_result(
        name=NAME, inputs=values.as_dict(), outputs=outputs, checks=checks, steps=steps
    )


CALCULATION = Calculation(
    name=NAME, title="Vacuum decay test", fields=FIELDS, rules=RULES, compute=compute
)


def vacuum_decay(inputs: Mapping[str, object]) -> CalcResult:
    """Validate `inputs` and run the vacuum-decay calculation."""
    return CALCULATION.run(inputs)

/** vacuum-decay: with the pump isolated, how long does the grip last? Port of decay.py. */
import { ATMOSPHERE_KPA, MBAR_PER_KPA, S_PER_MIN } from "./constants";
import { buildResult, calculation, number, series, type Inputs, type Rule } from "./inputs";
import { check, type CalcResult, type Check, type OutputValue } from "./result";
import { num } from "./working";

const NAME = "vacuum-decay";

/** Rounding allowance on a gap (22.1 - 10.1 is 12.000000000000002 in floats). */
export const SLACK_S = 1e-6;

/** Rounding allowance on a difference of two readings kept to 0.1 kPa. */
const SLACK_KPA = 1e-9;

/** How many of the last intervals are projected on their own. */
const RECENT_INTERVALS = 2;

const FIELDS = [
  series("samples", "kPa", "timed vacuum readings [seconds, vacuum_kpa] with the pump isolated", {
    minItems: 3, atLeast: 0, atMost: ATMOSPHERE_KPA,
    limitReason: "a gauge vacuum cannot be deeper than the standard atmosphere",
  }),
  number("min_vacuum_kpa", "kPa", "hold limit: the least vacuum that still holds the robot", {
    greaterThan: 0, atMost: ATMOSPHERE_KPA,
    limitReason: "a gauge vacuum cannot be deeper than the standard atmosphere",
  }),
  number("required_hold_s", "s", "how long the grip must last with the pump stopped", { greaterThan: 0 }),
  number("interval_s", "s", "time between two readings of the schedule", {
    atLeast: 1, limitReason: "a gauge read by hand is not read more often than once a second",
  }),
  number("interval_tolerance_s", "s", "how far a reading may be from its scheduled time", { atLeast: 0 }),
  number("min_duration_s", "s", "shortest test, first reading to last", { greaterThan: 0 }),
  number("max_extrapolation", "", "furthest prediction beyond the last reading, as a multiple of the test's duration", {
    atLeast: 0, atMost: 10, limitReason: "a trend is not projected ten times further than it was watched",
  }),
  number("min_r2", "", "least coefficient of determination of the better fit for a conclusive test", {
    atLeast: 0, atMost: 1, limitReason: "R² is at most 1",
  }),
  number("system_volume_l", "L", "volume under vacuum, for a leak rate in mbar·L/s", { greaterThan: 0, optional: true }),
  number("working_vacuum_kpa", "kPa", "working vacuum read on the gauge with the pump running, where the test must start", {
    greaterThan: 0, atMost: ATMOSPHERE_KPA, optional: true,
    limitReason: "a gauge vacuum cannot be deeper than the standard atmosphere",
  }),
  number("start_tolerance_kpa", "kPa", "how far the first reading may be from the working vacuum", {
    atLeast: 0, atMost: ATMOSPHERE_KPA, optional: true,
    limitReason: "a gauge vacuum cannot be deeper than the standard atmosphere",
  }),
  number("gauge_resolution_kpa", "kPa", "smallest change the gauge shows: a series within it shows no measurable leak", {
    greaterThan: 0, atMost: 10, optional: true, limitReason: "a gauge that cannot show 10 kPa does not time a leak",
  }),
  number("rescue_time_s", "s", "time the rescue plan needs to reach the robot at the worst point of its drop", {
    greaterThan: 0, optional: true,
  }),
];

const RULES: Rule[] = [
  { rule: "atMostFractionOf", name: "interval_tolerance_s", other: "interval_s", fraction: 0.5,
    reason: "a tolerance over half the interval blurs one reading into the next" },
  { rule: "together", names: ["working_vacuum_kpa", "start_tolerance_kpa"] },
];

/** What a timed series falls short of, in words; mirrors decay.schedule_problems. */
function scheduleProblems(
  times: number[],
  o: { intervalS: number; toleranceS: number; minDurationS: number; minCount?: number },
): string[] {
  const minCount = o.minCount ?? 3;
  const problems: string[] = [];
  if (times.length < minCount) problems.push(`${times.length} readings were taken; at least ${minCount} are needed`);
  const gaps = times.slice(1).map((t, i) => t - times[i]!);
  const shortest = gaps.length ? Math.min(...gaps) : o.intervalS;
  const longest = gaps.length ? Math.max(...gaps) : o.intervalS;
  const plan = `one every ${num(o.intervalS)} s (± ${num(o.toleranceS)} s)`;
  if (shortest < o.intervalS - o.toleranceS - SLACK_S) problems.push(`two readings were ${num(shortest)} s apart; the test needs ${plan}`);
  if (longest > o.intervalS + o.toleranceS + SLACK_S) problems.push(`two readings were ${num(longest)} s apart; the test needs ${plan}`);
  const duration = times.length ? times[times.length - 1]! - times[0]! : 0;
  if (duration < o.minDurationS - SLACK_S) problems.push(`the test ran ${num(duration)} s; it must run at least ${num(o.minDurationS)} s`);
  return problems;
}

interface LineFit {
  intercept: number;
  slope: number;
  r2: number | null;
}

/** Ordinary least squares of y on x; an all-equal y is exactly flat. */
function fitLine(xs: number[], ys: number[]): LineFit {
  if (Math.min(...ys) === Math.max(...ys)) return { intercept: ys[0]!, slope: 0, r2: null };
  const n = xs.length;
  const sum = (a: number[]) => a.reduce((s, v) => s + v, 0);
  const meanX = sum(xs) / n;
  const meanY = sum(ys) / n;
  const sxx = sum(xs.map((x) => (x - meanX) ** 2));
  const sxy = sum(xs.map((x, i) => (x - meanX) * (ys[i]! - meanY)));
  const slope = sxy / sxx;
  const intercept = meanY - slope * meanX;
  const ssTot = sum(ys.map((y) => (y - meanY) ** 2));
  const ssRes = sum(ys.map((y, i) => (y - (intercept + slope * xs[i]!)) ** 2));
  return { intercept, slope, r2: ssTot === 0 ? null : 1 - ssRes / ssTot };
}

const finiteOrNull = (v: number) => (Number.isFinite(v) ? v : null);

interface Prediction {
  method: string;
  timeS: number;
}

function recentInterval(times: number[], vacua: number[], limitKpa: number): Prediction {
  let steepest = 0;
  for (let i = Math.max(times.length - 1 - RECENT_INTERVALS, 0); i < times.length - 1; i++) {
    steepest = Math.min(steepest, (vacua[i + 1]! - vacua[i]!) / (times[i + 1]! - times[i]!));
  }
  if (steepest >= 0) return { method: "recent interval", timeS: Infinity };
  return { method: "recent interval", timeS: Math.max((vacua[vacua.length - 1]! - limitKpa) / -steepest, 0) };
}

function compute(values: Inputs): CalcResult {
  const raw = values.series("samples");
  const limitKpa = values.number("min_vacuum_kpa");
  const requiredS = values.number("required_hold_s");
  const intervalS = values.number("interval_s");
  const toleranceS = values.number("interval_tolerance_s");
  const minDurationS = values.number("min_duration_s");
  const maxExtrapolation = values.number("max_extrapolation");
  const minR2 = values.number("min_r2");
  const volumeL = values.optionalNumber("system_volume_l");
  const rescueS = values.optionalNumber("rescue_time_s");
  const workingKpa = values.optionalNumber("working_vacuum_kpa");
  const startToleranceKpa = values.optionalNumber("start_tolerance_kpa");
  const resolutionKpa = values.optionalNumber("gauge_resolution_kpa");

  const t0 = raw[0]![0];
  const times = raw.map(([t]) => t - t0);
  const vacua = raw.map(([, v]) => v);
  const durationS = times[times.length - 1]!;
  const lowestKpa = Math.min(...vacua);
  const steps: string[] = [];
  if (t0 !== 0) steps.push(`times taken from the first reading (at ${num(t0)} s)`);

  const outputs: Record<string, OutputValue> = {
    time_to_limit_s: null,
    predicted_time_to_limit_s: null,
    extrapolation_cap_s: maxExtrapolation * durationS,
    fit: "none",
    linear_r2: null,
    exponential_r2: null,
    linear_time_to_limit_s: null,
    exponential_time_to_limit_s: null,
    recent_time_to_limit_s: null,
    leak_rate_kpa_per_min: null,
    leak_rate_mbar_l_per_s: null,
    linear_intercept_kpa: null,
    linear_slope_kpa_per_s: null,
    exponential_v0_kpa: null,
    exponential_tau_s: null,
    lowest_sample_kpa: lowestKpa,
    spread_kpa: Math.max(...vacua) - lowestKpa,
    start_offset_kpa: null,
    test_duration_s: durationS,
    readings: times.length,
  };
  const checks: Check[] = [];
  const below = vacua.findIndex((v) => v < limitKpa);
  if (below >= 0) {
    steps.push(`reading ${below + 1} (${num(vacua[below]!)} kPa) is already below the limit of ${num(limitKpa)} kPa`);
  }
  checks.push(
    check("sample_below_limit", lowestKpa / limitKpa - 1, true, {
      reason: `The vacuum fell to ${num(lowestKpa)} kPa during the test, below the ${num(limitKpa)} kPa that holds the robot.`,
    }),
  );

  // The test must be of the rig as it works: it starts at the working vacuum.
  let offStart = false;
  if (workingKpa !== null && startToleranceKpa !== null) {
    const offsetKpa = vacua[0]! - workingKpa;
    outputs.start_offset_kpa = offsetKpa;
    offStart = Math.abs(offsetKpa) > startToleranceKpa + SLACK_KPA;
    const where =
      `first reading ${num(vacua[0]!)} kPa against the working vacuum of ${num(workingKpa)} kPa:` +
      ` ${num(Math.abs(offsetKpa))} kPa apart (at most ${num(startToleranceKpa)} kPa)`;
    if (offStart) {
      steps.push(`${where}: not a test of the rig as it works; nothing is predicted`);
      checks.push(
        check("start", null, true, {
          inconclusive: true,
          reason:
            `The test started at ${num(vacua[0]!)} kPa but the robot works at ${num(workingKpa)} kPa:` +
            ` repeat it from the working vacuum (its first reading within ${num(startToleranceKpa)} kPa of it).`,
        }),
      );
    } else {
      steps.push(where);
    }
  }

  const problems = scheduleProblems(times, { intervalS, toleranceS, minDurationS });
  if (offStart && !problems.length) {
    return buildResult({ name: NAME, inputs: values.asDict(), outputs, checks, steps });
  }
  if (problems.length) {
    steps.push(`schedule not kept: ${problems.join("; ")}; nothing is predicted`);
    checks.push(
      check("schedule", null, true, {
        inconclusive: true,
        reason: `The decay test did not keep its schedule: ${problems.join("; ")}. Start the test again.`,
      }),
    );
    return buildResult({ name: NAME, inputs: values.asDict(), outputs, checks, steps });
  }
  steps.push(
    `schedule kept: ${times.length} readings over ${num(durationS)} s, one every ${num(intervalS)} s` +
      ` (± ${num(toleranceS)} s), at least ${num(minDurationS)} s`,
  );

  const linear = fitLine(times, vacua);
  const r2Text = linear.r2 === null ? "undefined (flat series)" : num(linear.r2);
  steps.push(`linear fit: v = ${num(linear.intercept)} kPa + (${num(linear.slope)} kPa/s) × t, R² = ${r2Text}`);
  const predictions: Prediction[] = [];
  let linearTime = Infinity;
  if (linear.slope < 0) {
    const crossing = (limitKpa - linear.intercept) / linear.slope;
    linearTime = Math.max(crossing - durationS, 0);
    steps.push(
      `linear time to limit = (${num(limitKpa)} - ${num(linear.intercept)}) kPa / (${num(linear.slope)} kPa/s)` +
        ` - ${num(durationS)} s = ${num(linearTime)} s`,
    );
  }
  predictions.push({ method: "linear", timeS: linearTime });

  let exponential: LineFit | null = null;
  let exponentialTime = Infinity;
  if (lowestKpa > 0) {
    exponential = fitLine(times, vacua.map((v) => Math.log(v)));
    const v0Kpa = Math.exp(exponential.intercept);
    outputs.exponential_v0_kpa = v0Kpa;
    if (exponential.slope < 0) {
      const tauS = -1 / exponential.slope;
      outputs.exponential_tau_s = tauS;
      const crossing = tauS * Math.log(v0Kpa / limitKpa);
      exponentialTime = Math.max(crossing - durationS, 0);
      steps.push(
        `exponential fit on ln v: v = ${num(v0Kpa)} kPa × exp(-t / ${num(tauS)} s),` +
          ` R² (of ln v) = ${exponential.r2 === null ? "undefined" : num(exponential.r2)}`,
      );
      steps.push(
        `exponential time to limit = ${num(tauS)} s × ln(${num(v0Kpa)} / ${num(limitKpa)}) - ${num(durationS)} s` +
          ` = ${num(exponentialTime)} s`,
      );
    }
  } else {
    steps.push("exponential fit skipped: a reading of zero vacuum has no logarithm");
  }
  predictions.push({ method: "exponential", timeS: exponentialTime });

  const recent = recentInterval(times, vacua, limitKpa);
  predictions.push(recent);
  if (Number.isFinite(recent.timeS)) {
    steps.push(
      `steepest of the last ${RECENT_INTERVALS} intervals, projected from the last reading` +
        ` (${num(vacua[vacua.length - 1]!)} kPa): ${num(recent.timeS)} s to the limit`,
    );
  }

  // Readings all within the gauge's resolution show no measurable leak: their R² and rise mean
  // nothing; the fastest leak they allow is projected from the lowest reading less the resolution.
  const spreadKpa = Math.max(...vacua) - lowestKpa;
  const withinResolution = resolutionKpa !== null && spreadKpa <= resolutionKpa + SLACK_KPA;
  let governing: Prediction;
  if (resolutionKpa !== null && withinResolution) {
    const fastestKpaPerS = (spreadKpa + resolutionKpa) / durationS;
    const fromKpa = lowestKpa - resolutionKpa;
    const boundS = Math.max((fromKpa - limitKpa) / fastestKpaPerS, 0);
    steps.push(
      `the readings all lie within the gauge's resolution (${num(spreadKpa)} kPa apart at most, resolution` +
        ` ${num(resolutionKpa)} kPa): no leak shows, and the fits above fit only the gauge's steps, so their R² means nothing`,
    );
    steps.push(
      `fastest leak the readings allow = (${num(spreadKpa)} + ${num(resolutionKpa)}) kPa / ${num(durationS)} s` +
        ` = ${num(fastestKpaPerS)} kPa/s; from the lowest reading less the resolution, ${num(fromKpa)} kPa,` +
        ` to the limit of ${num(limitKpa)} kPa: ${num(boundS)} s`,
    );
    governing = { method: "gauge resolution", timeS: boundS };
  } else {
    governing = predictions.reduce((a, b) => (b.timeS < a.timeS ? b : a));
  }
  const predictedS = governing.timeS;
  const capS = maxExtrapolation * durationS;
  const reliedS = Math.min(predictedS, capS);
  if (!Number.isFinite(predictedS)) {
    steps.push(
      `no prediction falls; relied on at most ${num(maxExtrapolation)} × ${num(durationS)} s = ${num(capS)} s` +
        " beyond the last reading",
    );
  } else {
    steps.push(
      `governing prediction: ${governing.method}, ${num(predictedS)} s from the last reading; relied on:` +
        ` min(${num(predictedS)}, ${num(maxExtrapolation)} × ${num(durationS)}) = ${num(reliedS)} s` +
        ` against ${num(requiredS)} s required`,
    );
  }

  const leakKpaPerS = -linear.slope;
  steps.push(`leak rate = -(${num(linear.slope)} kPa/s) × 60 s/min = ${num(leakKpaPerS * S_PER_MIN)} kPa/min`);
  if (volumeL !== null) {
    outputs.leak_rate_mbar_l_per_s = volumeL * leakKpaPerS * MBAR_PER_KPA;
    steps.push(
      `Q = V × Δp/Δt = ${num(volumeL)} L × ${num(leakKpaPerS)} kPa/s × 10 mbar/kPa` +
        ` = ${num(volumeL * leakKpaPerS * MBAR_PER_KPA)} mbar·L/s`,
    );
  }

  const r2s = [linear.r2, exponential?.r2 ?? null].filter((r): r is number => r !== null);
  const bestR2 = r2s.length ? Math.max(...r2s) : null;
  Object.assign(outputs, {
    time_to_limit_s: reliedS,
    predicted_time_to_limit_s: finiteOrNull(predictedS),
    fit: Number.isFinite(predictedS) ? governing.method : "none",
    linear_r2: linear.r2,
    exponential_r2: exponential === null ? null : exponential.r2,
    linear_time_to_limit_s: finiteOrNull(linearTime),
    exponential_time_to_limit_s: finiteOrNull(exponentialTime),
    recent_time_to_limit_s: finiteOrNull(recent.timeS),
    leak_rate_kpa_per_min: leakKpaPerS * S_PER_MIN,
    linear_intercept_kpa: linear.intercept,
    linear_slope_kpa_per_s: linear.slope,
  });

  if (withinResolution) {
    steps.push("no measurable leak: neither a rise nor the scatter of the readings counts");
  } else if (linear.slope > 0) {
    steps.push("the vacuum rose over the test: inconclusive");
    checks.push(
      check("rising", null, true, {
        inconclusive: true,
        reason:
          `The vacuum rose during the test (${num(vacua[0]!)} kPa to ${num(vacua[vacua.length - 1]!)} kPa):` +
          " the pump may not be isolated or the gauge is unsteady. Inconclusive: repeat the test.",
      }),
    );
  } else if (bestR2 !== null && bestR2 < minR2) {
    steps.push(`best R² ${num(bestR2)} is below ${num(minR2)}: inconclusive`);
    checks.push(
      check("fit_quality", null, true, {
        inconclusive: true,
        reason:
          `The readings scatter too much to predict from (R² ${num(bestR2, 2)}, at least ${num(minR2, 2)} needed).` +
          " Inconclusive: repeat the test.",
      }),
    );
  }
  const holdReason =
    reliedS < predictedS && reliedS < requiredS
      ? `The test ran ${num(durationS, 3)} s, so at most ${num(reliedS, 3)} s beyond it can be relied on;` +
        ` ${num(requiredS, 3)} s are needed. Run the test longer.`
      : `With the pump off the grip lasts about ${num(reliedS, 2)} s; ${num(requiredS, 3)} s are needed.`;
  checks.push(check("hold_time", reliedS / requiredS - 1, false, { reason: holdReason }));
  if (rescueS !== null) {
    steps.push(`rescue: the grip is relied on for ${num(reliedS)} s; the rescue plan needs ${num(rescueS)} s to reach the robot`);
    checks.push(
      check("rescue_time", reliedS / rescueS - 1, false, {
        reason:
          `With the pump off the grip lasts about ${num(reliedS, 2)} s; the rescue plan needs ${num(rescueS, 3)} s` +
          " to reach the robot. The job cannot start.",
      }),
    );
  }
  return buildResult({ name: NAME, inputs: values.asDict(), outputs, checks, steps });
}

export const VACUUM_DECAY = calculation(NAME, "Vacuum decay test", FIELDS, RULES, compute);

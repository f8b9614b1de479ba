/** vacuum-decay: with the pump isolated, how long does the grip last? Port of decay.py. */
import { ATMOSPHERE_KPA, MBAR_PER_KPA, S_PER_MIN } from "./constants";
import { calculation, number, series, type Inputs } from "./inputs";
import { build, check, type CalcResult } from "./result";
import { num } from "./working";

const NAME = "vacuum-decay";

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
  number("system_volume_l", "L", "volume under vacuum, for a leak rate in mbar·L/s", { greaterThan: 0, optional: true }),
];

export interface LineFit {
  intercept: number;
  slope: number;
  r2: number | null;
}

/** Ordinary least squares of y on x; an all-equal y is exactly flat. */
export function fitLine(xs: number[], ys: number[]): LineFit {
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

function compute(values: Inputs): CalcResult {
  const samples = values.series("samples");
  const limitKpa = values.number("min_vacuum_kpa");
  const requiredS = values.number("required_hold_s");
  const volumeL = values.optionalNumber("system_volume_l");

  const times = samples.map(([t]) => t);
  const vacua = samples.map(([, v]) => v);
  const tLast = times[times.length - 1]!;
  const steps: string[] = [];

  const linear = fitLine(times, vacua);
  let r2Text = linear.r2 === null ? "undefined (flat series)" : num(linear.r2);
  steps.push(`linear fit: v = ${num(linear.intercept)} kPa + (${num(linear.slope)} kPa/s) × t, R² = ${r2Text}`);
  let linearTime = Infinity;
  if (linear.slope < 0) {
    const crossing = (limitKpa - linear.intercept) / linear.slope;
    linearTime = Math.max(crossing - tLast, 0);
    steps.push(
      `linear time to limit = (${num(limitKpa)} - ${num(linear.intercept)}) kPa / (${num(linear.slope)} kPa/s)` +
        ` - ${num(tLast)} s = ${num(linearTime)} s`,
    );
  } else {
    steps.push("linear fit does not fall: no time to the limit (unbounded)");
  }

  let exponential: LineFit | null = null;
  let exponentialTime = Infinity;
  let v0Kpa: number | null = null;
  let tauS: number | null = null;
  if (Math.min(...vacua) > 0) {
    exponential = fitLine(times, vacua.map((v) => Math.log(v)));
    v0Kpa = Math.exp(exponential.intercept);
    r2Text = exponential.r2 === null ? "undefined (flat series)" : num(exponential.r2);
    if (exponential.slope < 0) {
      tauS = -1 / exponential.slope;
      const crossing = tauS * Math.log(v0Kpa / limitKpa);
      exponentialTime = Math.max(crossing - tLast, 0);
      steps.push(`exponential fit on ln v: v = ${num(v0Kpa)} kPa × exp(-t / ${num(tauS)} s), R² (of ln v) = ${r2Text}`);
      steps.push(
        `exponential time to limit = ${num(tauS)} s × ln(${num(v0Kpa)} / ${num(limitKpa)}) - ${num(tLast)} s` +
          ` = ${num(exponentialTime)} s`,
      );
    } else {
      steps.push(`exponential fit on ln v does not fall (R² of ln v = ${r2Text}): no time to the limit (unbounded)`);
    }
  } else {
    steps.push("exponential fit skipped: a reading of zero vacuum has no logarithm");
  }

  let governingFit: string;
  let timeToLimit: number;
  if (!Number.isFinite(linearTime) && !Number.isFinite(exponentialTime)) {
    governingFit = "none";
    timeToLimit = Infinity;
    steps.push("no decay: neither fit falls, so the time to the limit is unbounded (shown as none)");
  } else if (exponentialTime < linearTime) {
    governingFit = "exponential";
    timeToLimit = exponentialTime;
  } else {
    governingFit = "linear";
    timeToLimit = linearTime;
  }
  if (governingFit !== "none") {
    steps.push(
      `governing fit: ${governingFit} (the shorter time), ${num(timeToLimit)} s from the last sample` +
        ` against ${num(requiredS)} s required`,
    );
  }

  const leakKpaPerS = -linear.slope;
  const leakKpaPerMin = leakKpaPerS * S_PER_MIN;
  steps.push(`leak rate = -(${num(linear.slope)} kPa/s) × 60 s/min = ${num(leakKpaPerMin)} kPa/min`);
  let leakMbarLPerS: number | null = null;
  if (volumeL !== null) {
    leakMbarLPerS = volumeL * leakKpaPerS * MBAR_PER_KPA;
    steps.push(
      `Q = V × Δp/Δt = ${num(volumeL)} L × ${num(leakKpaPerS)} kPa/s × 10 mbar/kPa = ${num(leakMbarLPerS)} mbar·L/s`,
    );
  }

  const lowestKpa = Math.min(...vacua);
  const below = vacua.findIndex((v) => v < limitKpa);
  if (below >= 0) {
    steps.push(`sample ${below + 1} (${num(vacua[below]!)} kPa) is already below the limit of ${num(limitKpa)} kPa`);
  }

  const holdMargin = Number.isFinite(timeToLimit) ? timeToLimit / requiredS - 1 : null;
  return build({
    name: NAME,
    inputs: values.asDict(),
    outputs: {
      leak_rate_kpa_per_min: leakKpaPerMin,
      leak_rate_mbar_l_per_s: leakMbarLPerS,
      time_to_limit_s: finiteOrNull(timeToLimit),
      fit: governingFit,
      linear_r2: linear.r2,
      exponential_r2: exponential === null ? null : exponential.r2,
      linear_time_to_limit_s: finiteOrNull(linearTime),
      exponential_time_to_limit_s: finiteOrNull(exponentialTime),
      linear_intercept_kpa: linear.intercept,
      linear_slope_kpa_per_s: linear.slope,
      exponential_v0_kpa: v0Kpa,
      exponential_tau_s: tauS,
      lowest_sample_kpa: lowestKpa,
      test_duration_s: tLast - times[0]!,
    },
    checks: [check("hold_time", holdMargin), check("sample_below_limit", lowestKpa / limitKpa - 1, true)],
    steps,
  });
}

export const VACUUM_DECAY = calculation(NAME, "Vacuum decay test", FIELDS, [], compute);

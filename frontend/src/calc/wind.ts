/** wind-at-height: from a roof reading to the mean and gust at working height. Port of wind.py. */
import { AIR_DENSITY_KGM3 } from "./constants";
import { buildResult, calculation, choice, number, type Inputs, type Rule } from "./inputs";
import { check, ratioMargin, type CalcResult } from "./result";
import { num } from "./working";

const NAME = "wind-at-height";

/** EN 1991-1-4 Table 4.1: roughness length z0 and minimum height zmin per terrain category. */
const TERRAIN_Z0_ZMIN_M: Record<string, [number, number]> = {
  "0": [0.003, 1.0],
  I: [0.01, 1.0],
  II: [0.05, 2.0],
  III: [0.3, 5.0],
  IV: [1.0, 10.0],
};
const TERRAINS = ["0", "I", "II", "III", "IV"];

/** EN 1991-1-4 gives the roughness factor up to 200 m. */
const LOG_LAW_MAX_HEIGHT_M = 200;

/** WMO Beaufort scale: the lowest mean speed (m/s) of forces 1 to 12. */
const BEAUFORT_LOWER_BOUNDS_MS = [0.3, 1.6, 3.4, 5.5, 8.0, 10.8, 13.9, 17.2, 20.8, 24.5, 28.5, 32.7];

/** EN 1991-1-4 (4.5): kr = 0.19·(z0 / 0.05)^0.07. */
const terrainFactor = (z0M: number) => 0.19 * Math.pow(z0M / 0.05, 0.07);

/** Power-law exponent matching the EN log profile between 10 m and 100 m. */
const defaultAlpha = (z0M: number) =>
  Math.log(Math.log(100 / z0M) / Math.log(10 / z0M)) / Math.log(10);

const beaufort = (meanMs: number) => BEAUFORT_LOWER_BOUNDS_MS.filter((b) => meanMs >= b).length;

/** The air density input shared by the calculations that load something with the wind. */
export const AIR_DENSITY = number("air_density_kgm3", "kg/m³", "air density", {
  atLeast: 0.5, atMost: 1.6, limitReason: "plausibility bound for air near the ground", default: AIR_DENSITY_KGM3,
});

const FIELDS = [
  number("speed_ms", "m/s", "mean wind speed read on the roof", {
    atLeast: 0, atMost: 120, limitReason: "plausibility bound, above any recorded surface gust",
  }),
  number("measured_at_m", "m", "height above ground of the reading", {
    greaterThan: 0, atMost: 1000, limitReason: "plausibility bound",
  }),
  number("working_height_m", "m", "height above ground where the robot works", {
    greaterThan: 0, atMost: 1000, limitReason: "plausibility bound",
  }),
  choice("terrain", "EN 1991-1-4 terrain category", TERRAINS),
  choice("method", "height profile: log law or power law", ["log", "power"], { default: "log" }),
  number("alpha", "", "power-law exponent, overriding the terrain default", {
    greaterThan: 0, atMost: 1, limitReason: "plausibility bound", optional: true,
  }),
  number("gust_factor", "", "gust speed over mean speed, replacing EN 1991-1-4's √(1 + 7·Iv) when given", {
    atLeast: 1, atMost: 5, limitReason: "plausibility bound", optional: true,
  }),
  number("measured_gust_ms", "m/s", "strongest gust read on the anemometer, at the reading's height", {
    atLeast: 0, atMost: 120, limitReason: "plausibility bound, above any recorded surface gust", optional: true,
  }),
  number("turbulence_factor", "", "EN 1991-1-4 turbulence factor kI (recommended 1.0)", {
    greaterThan: 0, atMost: 3, limitReason: "plausibility bound", default: 1,
  }),
  number("orography_factor", "", "EN 1991-1-4 orography factor c0 (1.0 on flat ground)", {
    atLeast: 0.5, atMost: 3, limitReason: "plausibility bound", default: 1,
  }),
  number("limit_ms", "m/s", "stop-work gust speed at working height", { greaterThan: 0 }),
  number("area_m2", "m²", "robot area facing the wind", { greaterThan: 0, optional: true }),
  number("drag_coefficient", "", "drag coefficient of the robot", {
    greaterThan: 0, atMost: 3, limitReason: "plausibility bound", optional: true,
  }),
  AIR_DENSITY,
];

const REASON = "EN 1991-1-4 gives the log profile up to 200 m";
const RULES: Rule[] = [
  { rule: "atMostWhen", name: "measured_at_m", maximum: LOG_LAW_MAX_HEIGHT_M, when: "method", value: "log", reason: REASON },
  { rule: "atMostWhen", name: "working_height_m", maximum: LOG_LAW_MAX_HEIGHT_M, when: "method", value: "log", reason: REASON },
  { rule: "onlyWhen", name: "alpha", when: "method", value: "power" },
  { rule: "together", names: ["area_m2", "drag_coefficient"] },
];

function compute(values: Inputs): CalcResult {
  const speedMs = values.number("speed_ms");
  const zRefM = values.number("measured_at_m");
  const zM = values.number("working_height_m");
  const terrain = values.text("terrain");
  const method = values.text("method");
  const limitMs = values.number("limit_ms");
  const areaM2 = values.optionalNumber("area_m2");
  const rho = values.number("air_density_kgm3");

  const [z0M, zminM] = TERRAIN_Z0_ZMIN_M[terrain]!;
  const zRefEff = Math.max(zRefM, zminM);
  const zEff = Math.max(zM, zminM);
  const steps = [
    `terrain ${terrain}: z0 = ${num(z0M)} m, zmin = ${num(zminM)} m (EN 1991-1-4 Table 4.1);` +
      ` heights used ${num(zRefEff)} m and ${num(zEff)} m`,
  ];
  const kr = terrainFactor(z0M);
  let alpha: number | null = null;
  let ratio: number;
  if (method === "log") {
    const crRef = kr * Math.log(zRefEff / z0M);
    const cr = kr * Math.log(zEff / z0M);
    ratio = cr / crRef;
    steps.push(
      `kr = 0.19 × (${num(z0M)} / 0.05)^0.07 = ${num(kr)}`,
      `cr(${num(zEff)} m) = ${num(kr)} × ln(${num(zEff)} / ${num(z0M)}) = ${num(cr)}; cr(${num(zRefEff)} m) = ${num(crRef)}`,
      `mean at height = ${num(speedMs)} m/s × ${num(cr)} / ${num(crRef)} = ${num(speedMs * ratio)} m/s`,
    );
  } else {
    const givenAlpha = values.optionalNumber("alpha");
    alpha = givenAlpha === null ? defaultAlpha(z0M) : givenAlpha;
    const source = givenAlpha !== null ? "given" : "fitted to the EN log profile, 10-100 m";
    ratio = Math.pow(zEff / zRefEff, alpha);
    steps.push(
      `mean at height = ${num(speedMs)} m/s × (${num(zEff)} / ${num(zRefEff)})^${num(alpha)}` +
        ` = ${num(speedMs * ratio)} m/s (α ${source})`,
    );
  }
  const meanMs = speedMs * ratio;
  const kI = values.number("turbulence_factor");
  const c0 = values.number("orography_factor");
  const iv = kI / (c0 * Math.log(zEff / z0M));
  steps.push(`Iv = kI / (c0 × ln(z / z0)) = ${num(kI)} / (${num(c0)} × ln(${num(zEff)} / ${num(z0M)})) = ${num(iv)} (EN 1991-1-4 4.4)`);
  const givenFactor = values.optionalNumber("gust_factor");
  let gustFactor: number;
  if (givenFactor === null) {
    gustFactor = Math.sqrt(1 + 7 * iv);
    steps.push(`gust factor = √(1 + 7 × Iv) = √(1 + 7 × ${num(iv)}) = ${num(gustFactor)}`);
  } else {
    gustFactor = givenFactor;
    steps.push(`gust factor ${num(gustFactor)} as given`);
  }
  const derivedGustMs = meanMs * gustFactor;
  steps.push(`gust at height from the mean = ${num(meanMs)} m/s × ${num(gustFactor)} = ${num(derivedGustMs)} m/s`);
  const measuredGustMs = values.optionalNumber("measured_gust_ms");
  let measuredAtHeight: number | null = null;
  let gustMs = derivedGustMs;
  if (measuredGustMs !== null) {
    measuredAtHeight = measuredGustMs * ratio;
    steps.push(`measured gust carried to height = ${num(measuredGustMs)} m/s × ${num(ratio)} = ${num(measuredAtHeight)} m/s`);
    gustMs = Math.max(derivedGustMs, measuredAtHeight);
  }
  const qpPa = 0.5 * rho * gustMs ** 2;
  const force = beaufort(meanMs);
  steps.push(
    `gust at height = ${num(gustMs)} m/s (limit ${num(limitMs)} m/s); peak velocity` +
      ` pressure qp = ½ × ${num(rho)} kg/m³ × (${num(gustMs)} m/s)² = ${num(qpPa)} Pa`,
  );
  steps.push(`Beaufort force ${force} for a mean of ${num(meanMs)} m/s (WMO bands)`);
  let forceN: number | null = null;
  if (areaM2 !== null) {
    const cd = values.number("drag_coefficient");
    forceN = qpPa * cd * areaM2;
    steps.push(`wind force = qp × Cd × A = ${num(qpPa)} Pa × ${num(cd)} × ${num(areaM2)} m² = ${num(forceN)} N`);
  }
  const source =
    measuredAtHeight !== null && measuredAtHeight >= derivedGustMs
      ? "the gust measured on the anemometer"
      : "the mean wind's gusts";
  return buildResult({
    name: NAME,
    inputs: values.asDict(),
    outputs: {
      speed_at_height_ms: meanMs,
      gust_at_height_ms: gustMs,
      gust_from_mean_ms: derivedGustMs,
      measured_gust_at_height_ms: measuredAtHeight,
      turbulence_intensity: iv,
      gust_factor: gustFactor,
      peak_velocity_pressure_pa: qpPa,
      beaufort: force,
      force_n: forceN,
      profile_ratio: ratio,
      z0_m: z0M,
      zmin_m: zminM,
      terrain_factor_kr: kr,
      alpha,
    },
    checks: [
      check("gust_limit", ratioMargin(limitMs, gustMs), false, {
        reason: `Gusts at working height reach about ${num(gustMs, 3)} m/s (from ${source}); the limit is ${num(limitMs, 3)} m/s.`,
      }),
    ],
    steps,
  });
}

export const WIND_AT_HEIGHT = calculation(NAME, "Wind at working height", FIELDS, RULES, compute);

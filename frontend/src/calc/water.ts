/** water-line: pressure at the robot's valve, top and foot of a drop; a port of water.py. */
import { G, M3_PER_L, M_PER_MM, PA_PER_KPA, S_PER_MIN } from "./constants";
import { OutOfRange } from "./errors";
import { buildResult, calculation, number, type Inputs, type Rule } from "./inputs";
import { check, ratioMargin, type CalcResult } from "./result";
import { densityKgm3, viscosityPas } from "./water_properties";
import { num } from "./working";

const NAME = "water-line";
const LAMINAR_BELOW_RE = 2300;
const TURBULENT_FROM_RE = 4000;

/** Darcy friction factor from Colebrook-White by fixed-point iteration from Swamee-Jain. */
function colebrook(reynolds: number, relativeRoughness: number): number {
  const a = relativeRoughness / 3.7;
  const b = 2.51 / reynolds;
  let x = -2 * Math.log10(a + 5.74 / reynolds ** 0.9);
  for (let i = 0; i < 100; i += 1) {
    const next = -2 * Math.log10(a + b * x);
    if (Math.abs(next - x) <= 1e-15 * Math.abs(next)) {
      x = next;
      break;
    }
    x = next;
  }
  return 1 / (x * x);
}

function frictionFactor(reynolds: number, relativeRoughness: number): [number, string] {
  if (reynolds < LAMINAR_BELOW_RE) return [64 / reynolds, "laminar"];
  const turbulent = colebrook(reynolds, relativeRoughness);
  if (reynolds < TURBULENT_FROM_RE) return [Math.max(64 / reynolds, turbulent), "transitional"];
  return [turbulent, "turbulent"];
}

const FIELDS = [
  number("drop_m", "m", "height of the supply above the valve at the foot of the drop", {
    atLeast: 0, atMost: 1000, limitReason: "plausibility bound",
  }),
  number("top_head_m", "m", "height of the supply above the valve at the top of the drop", {
    atLeast: 0, atMost: 1000, limitReason: "plausibility bound",
  }),
  number("supply_kpa", "kPa", "pressure the roof pump adds at the hose inlet (zero for a tank)", { atLeast: 0, default: 0 }),
  number("hose_id_mm", "mm", "hose inside diameter", { greaterThan: 0, atMost: 300, limitReason: "plausibility bound" }),
  number("hose_length_m", "m", "hose length from the supply to the valve", { greaterThan: 0 }),
  number("flow_lpm", "L/min", "water flow through the hose", { atLeast: 0 }),
  number("roughness_mm", "mm", "hose wall absolute roughness", { atLeast: 0 }),
  number("water_temp_c", "°C", "water temperature", {
    atLeast: 0, atMost: 60, limitReason: "the water property model covers 0-60 °C",
  }),
  number("fittings_k", "", "sum of the loss coefficients of couplings, valve and bends", {
    atLeast: 0, atMost: 1000, limitReason: "plausibility bound",
  }),
  number("wave_speed_ms", "m/s", "pressure wave speed in the filled hose", {
    greaterThan: 0, atMost: 1500, limitReason: "no wave runs faster than sound in water",
  }),
  number("valve_closure_s", "s", "time the robot's valve takes to close", { atLeast: 0 }),
  number("hose_rating_kpa", "kPa", "hose working pressure rating", { greaterThan: 0 }),
  number("nozzle_min_kpa", "kPa", "least pressure the nozzles need", { greaterThan: 0 }),
];

const RULES: Rule[] = [
  { rule: "atMostFractionOf", name: "roughness_mm", other: "hose_id_mm", fraction: 0.05,
    reason: "relative roughness beyond the Moody chart's range" },
  { rule: "atMostFractionOf", name: "top_head_m", other: "drop_m", fraction: 1,
    reason: "the valve is no lower at the top of the drop than at its foot" },
];

/** Joukowsky's surge for a valve closing in `closureS`, and the wave's round trip 2·L/a. */
function surgeKpa(density: number, waveSpeedMs: number, velocityMs: number, lengthM: number, closureS: number): [number, number] {
  const roundTripS = (2 * lengthM) / waveSpeedMs;
  const full = (density * waveSpeedMs * velocityMs) / PA_PER_KPA;
  return closureS <= roundTripS ? [full, roundTripS] : [(full * roundTripS) / closureS, roundTripS];
}

function compute(values: Inputs): CalcResult {
  const dropM = values.number("drop_m");
  const topM = values.number("top_head_m");
  const supplyKpa = values.number("supply_kpa");
  const diameterM = values.number("hose_id_mm") * M_PER_MM;
  const lengthM = values.number("hose_length_m");
  const flowLpm = values.number("flow_lpm");
  const roughnessM = values.number("roughness_mm") * M_PER_MM;
  const tempC = values.number("water_temp_c");
  const fittingsK = values.number("fittings_k");
  const waveMs = values.number("wave_speed_ms");
  const closureS = values.number("valve_closure_s");
  const ratingKpa = values.number("hose_rating_kpa");
  const nozzleKpa = values.number("nozzle_min_kpa");

  const rho = densityKgm3(tempC);
  const mu = viscosityPas(tempC);
  const areaM2 = (Math.PI * diameterM ** 2) / 4;
  if (areaM2 === 0) throw new OutOfRange("hose_area_m2", num(areaM2));
  const flowM3s = (flowLpm * M3_PER_L) / S_PER_MIN;
  const velocity = flowM3s / areaM2;
  const reynolds = (rho * velocity * diameterM) / mu;
  if (!Number.isFinite(reynolds)) throw new OutOfRange("reynolds", num(reynolds));
  const staticTopKpa = supplyKpa + (rho * G * topM) / PA_PER_KPA;
  const staticFootKpa = supplyKpa + (rho * G * dropM) / PA_PER_KPA;
  const steps = [
    `water at ${num(tempC)} °C: ρ = ${num(rho)} kg/m³, μ = ${num(mu)} Pa·s`,
    `standing pressure at the top = ${num(supplyKpa)} kPa + ρ·g·h = ${num(supplyKpa)} + ${num(rho)} × ${num(G)} ×` +
      ` ${num(topM)} m / 1000 = ${num(staticTopKpa)} kPa`,
    `standing pressure at the foot = ${num(supplyKpa)} + ${num(rho)} × ${num(G)} × ${num(dropM)} m / 1000` +
      ` = ${num(staticFootKpa)} kPa`,
    `velocity = ${num(flowLpm)} L/min / 60000 / (π × (${num(diameterM)} m)² / 4) = ${num(velocity)} m/s`,
    `Re = ρ·v·D/μ = ${num(rho)} × ${num(velocity)} × ${num(diameterM)} / ${num(mu)} = ${num(reynolds)}`,
  ];
  let f: number | null;
  let regime: string;
  let lossKpa: number;
  if (reynolds === 0) {
    f = null;
    regime = "none";
    lossKpa = 0;
    steps.push("no flow: no friction loss");
  } else {
    [f, regime] = frictionFactor(reynolds, roughnessM / diameterM);
    if (regime === "laminar") {
      steps.push(`laminar (Re < 2300): f = 64 / ${num(reynolds)} = ${num(f)}`);
    } else if (regime === "transitional") {
      steps.push(
        `transitional (2300 ≤ Re < 4000): f = larger of 64/Re = ${num(64 / reynolds)}` +
          ` and Colebrook-White = ${num(colebrook(reynolds, roughnessM / diameterM))},` +
          ` so ${num(f)} (never under-states the loss)`,
      );
    } else {
      steps.push(
        `turbulent (Re ≥ 4000): Colebrook-White with ε/D = ${num(roughnessM)} / ${num(diameterM)}` +
          ` = ${num(roughnessM / diameterM)}, solved by iteration: f = ${num(f)}`,
      );
    }
    lossKpa =
      regime === "laminar"
        ? (32 * mu * lengthM * velocity) / diameterM ** 2 / PA_PER_KPA
        : (f * (lengthM / diameterM) * rho * (velocity * velocity)) / 2 / PA_PER_KPA;
    steps.push(
      `friction loss = f·(L/D)·ρ·v²/2 = ${num(f)} × (${num(lengthM)} / ${num(diameterM)})` +
        ` × ${num(rho)} × ${num(velocity)}² / 2 = ${num(lossKpa)} kPa`,
    );
  }
  const fittingsKpa = (fittingsK * rho * (velocity * velocity)) / 2 / PA_PER_KPA;
  const flowingTopKpa = staticTopKpa - lossKpa - fittingsKpa;
  const [surge, roundTripS] = surgeKpa(rho, waveMs, velocity, lengthM, closureS);
  const peakFootKpa = staticFootKpa + surge;
  const maxDropM = (Math.max(ratingKpa - supplyKpa - surge, 0) * PA_PER_KPA) / (rho * G);
  const waterKg = rho * areaM2 * lengthM;
  const closing =
    closureS <= roundTripS
      ? `the valve closes in ${num(closureS)} s, within the wave's round trip 2·L/a = ${num(roundTripS)} s:` +
        ` Δp = ρ·a·v = ${num(rho)} × ${num(waveMs)} × ${num(velocity)}`
      : `the valve closes in ${num(closureS)} s, slower than the wave's round trip 2·L/a = ${num(roundTripS)} s:` +
        ` Δp = ρ·a·v × ${num(roundTripS)} / ${num(closureS)}`;
  steps.push(
    `fittings loss = K·ρ·v²/2 = ${num(fittingsK)} × ${num(rho)} × ${num(velocity)}² / 2 = ${num(fittingsKpa)} kPa`,
    `flowing at the top = ${num(staticTopKpa)} - ${num(lossKpa)} - ${num(fittingsKpa)} = ${num(flowingTopKpa)} kPa` +
      ` (nozzles need ${num(nozzleKpa)} kPa)`,
    `surge (Joukowsky): ${closing} = ${num(surge)} kPa`,
    `peak at the foot = ${num(staticFootKpa)} + ${num(surge)} = ${num(peakFootKpa)} kPa (hose rated ${num(ratingKpa)} kPa)`,
    `deepest valve within the rating = (${num(ratingKpa)} - ${num(supplyKpa)} - ${num(surge)}) kPa × 1000 /` +
      ` (${num(rho)} × ${num(G)}) = ${num(maxDropM)} m`,
    `water in hose = ${num(rho)} × ${num(areaM2)} m² × ${num(lengthM)} m = ${num(waterKg)} kg`,
  );
  if (flowingTopKpa < 0) steps.push("the losses exceed the head at the top: the supply cannot drive this flow");
  return buildResult({
    name: NAME,
    inputs: values.asDict(),
    outputs: {
      static_top_kpa: staticTopKpa,
      flowing_top_kpa: flowingTopKpa,
      static_foot_kpa: staticFootKpa,
      surge_kpa: surge,
      peak_foot_kpa: peakFootKpa,
      friction_loss_kpa: lossKpa,
      fittings_loss_kpa: fittingsKpa,
      wave_round_trip_s: roundTripS,
      reynolds,
      flow_regime: regime,
      velocity_ms: velocity,
      friction_factor: f,
      max_drop_m: maxDropM,
      water_in_hose_kg: waterKg,
      water_density_kgm3: rho,
      water_viscosity_pa_s: mu,
    },
    checks: [
      check("hose_rating", ratioMargin(ratingKpa, peakFootKpa), false, {
        reason:
          `At the foot of the drop the hose would see about ${num(peakFootKpa, 3)} kPa when the valve shuts` +
          ` (${num(staticFootKpa, 3)} kPa standing and ${num(surge, 3)} kPa of surge); it is rated ${num(ratingKpa, 3)} kPa.`,
      }),
      check("nozzle_pressure", flowingTopKpa / nozzleKpa - 1, false, {
        // A pressure below zero is no pressure a nozzle gets: the flow does not arrive.
        reason:
          flowingTopKpa >= 0
            ? `At the top of the drop the nozzles would get about ${num(flowingTopKpa, 3)} kPa while flowing; they need ${num(nozzleKpa, 3)} kPa.`
            : `No water would reach the nozzles at the top of the drop: the supply cannot drive ${num(flowLpm, 3)} L/min through the hose's losses; they need ${num(nozzleKpa, 3)} kPa.`,
      }),
    ],
    steps,
  });
}

export const WATER_LINE = calculation(NAME, "Water line pressure", FIELDS, RULES, compute);

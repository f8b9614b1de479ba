/** suspended-mass: everything hanging from the tether against the lesser of two limits; port of mass.py. */
import { G, M_PER_MM, N_PER_KN, WATER_DENSITY_20C_KGM3 } from "./constants";
import { buildResult, calculation, number, type Inputs, type Rule } from "./inputs";
import { check, type CalcResult } from "./result";
import { densityKgm3 } from "./water_properties";
import { num } from "./working";

const NAME = "suspended-mass";

const FIELDS = [
  number("robot_kg", "kg", "robot mass", { greaterThan: 0 }),
  number("payload_kg", "kg", "anything else carried", { atLeast: 0, default: 0 }),
  number("hose_length_m", "m", "deployed hose length", { atLeast: 0 }),
  number("hose_id_mm", "mm", "hose inside diameter", { greaterThan: 0, atMost: 300, limitReason: "plausibility bound" }),
  number("hose_kg_per_m", "kg/m", "empty hose mass per metre", { atLeast: 0 }),
  number("line_length_m", "m", "deployed line length", { atLeast: 0 }),
  number("line_kg_per_m", "kg/m", "line mass per metre", { atLeast: 0 }),
  number("water_density_kgm3", "kg/m³", `water density (default ${WATER_DENSITY_20C_KGM3})`, {
    atLeast: 900, atMost: 1100, limitReason: "outside any water this rig carries", optional: true,
  }),
  number("water_temp_c", "°C", "water temperature, instead of a density", {
    atLeast: 0, atMost: 60, limitReason: "the water property model covers 0-60 °C", optional: true,
  }),
  number("mass_limit_kg", "kg", "suspended mass limit of the profile", { greaterThan: 0 }),
  number("tether_wll_kn", "kN", "tether working load limit", { greaterThan: 0 }),
];

const RULES: Rule[] = [{ rule: "atMostOne", names: ["water_density_kgm3", "water_temp_c"] }];

function compute(values: Inputs): CalcResult {
  const robotKg = values.number("robot_kg");
  const payloadKg = values.number("payload_kg");
  const hoseM = values.number("hose_length_m");
  const diameterM = values.number("hose_id_mm") * M_PER_MM;
  const hoseKgM = values.number("hose_kg_per_m");
  const lineM = values.number("line_length_m");
  const lineKgM = values.number("line_kg_per_m");
  const massLimitKg = values.number("mass_limit_kg");
  const wllKn = values.number("tether_wll_kn");

  const normalised = values.asDict();
  const tempC = values.optionalNumber("water_temp_c");
  const steps: string[] = [];
  let rho: number;
  if (tempC !== null) {
    rho = densityKgm3(tempC);
    steps.push(`water at ${num(tempC)} °C: ρ = ${num(rho)} kg/m³`);
  } else {
    const given = values.optionalNumber("water_density_kgm3");
    rho = given === null ? WATER_DENSITY_20C_KGM3 : given;
    normalised.water_density_kgm3 = rho;
  }
  const waterKg = ((rho * Math.PI * diameterM ** 2) / 4) * hoseM;
  const hoseKg = hoseKgM * hoseM;
  const lineKg = lineKgM * lineM;
  const totalKg = robotKg + payloadKg + waterKg + hoseKg + lineKg;
  const wllKg = (wllKn * N_PER_KN) / G;
  const limitKg = Math.min(massLimitKg, wllKg);
  steps.push(
    `water in hose = ${num(rho)} kg/m³ × π × (${num(diameterM)} m)² / 4 × ${num(hoseM)} m = ${num(waterKg)} kg`,
    `hose = ${num(hoseKgM)} kg/m × ${num(hoseM)} m = ${num(hoseKg)} kg`,
    `line = ${num(lineKgM)} kg/m × ${num(lineM)} m = ${num(lineKg)} kg`,
    `total = ${num(robotKg)} + ${num(payloadKg)} + ${num(waterKg)} + ${num(hoseKg)} + ${num(lineKg)} = ${num(totalKg)} kg`,
    `tether WLL as mass = ${num(wllKn)} kN × 1000 / ${num(G)} = ${num(wllKg)} kg`,
    `limit = min(${num(massLimitKg)}, ${num(wllKg)}) = ${num(limitKg)} kg; margin ${num(limitKg - totalKg)} kg`,
  );
  return buildResult({
    name: NAME,
    inputs: normalised,
    outputs: {
      water_kg: waterKg,
      hose_kg: hoseKg,
      line_kg: lineKg,
      total_kg: totalKg,
      tether_wll_kg: wllKg,
      limit_kg: limitKg,
      margin_kg: limitKg - totalKg,
      water_density_kgm3: rho,
    },
    checks: [check("mass_limit", massLimitKg / totalKg - 1), check("tether_wll", wllKg / totalKg - 1)],
    steps,
  });
}

export const SUSPENDED_MASS = calculation(NAME, "Suspended mass", FIELDS, RULES, compute);

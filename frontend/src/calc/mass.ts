/** suspended-mass: everything hanging from the tether against the rated load and the tether's WLL; port of mass.py. */
import { G, M_PER_MM, N_PER_KN, WATER_DENSITY_20C_KGM3 } from "./constants";
import { buildResult, calculation, number, type Inputs, type Rule } from "./inputs";
import { check, type CalcResult } from "./result";
import { densityKgm3 } from "./water_properties";
import { AIR_DENSITY } from "./wind";
import { num } from "./working";

const NAME = "suspended-mass";

const FIELDS = [
  number("robot_kg", "kg", "robot mass", { greaterThan: 0 }),
  number("payload_kg", "kg", "anything else carried", { atLeast: 0, default: 0 }),
  number("water_on_board_kg", "kg", "water carried on the robot", { atLeast: 0, default: 0 }),
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
  number("rated_load_kg", "kg", "maker's rated suspended load", { greaterThan: 0 }),
  number("dynamic_factor", "", "allowance for starts, stops and snags on the tether's load", {
    atLeast: 1, atMost: 5, limitReason: "plausibility bound",
  }),
  number("tether_wll_kn", "kN", "tether working load limit", { greaterThan: 0 }),
  number("tether_diameter_mm", "mm", "tether diameter, facing the wind", {
    greaterThan: 0, atMost: 100, limitReason: "plausibility bound",
  }),
  number("wind_ms", "m/s", "gust the tether must take: the stop-work gust", {
    atLeast: 0, atMost: 120, limitReason: "plausibility bound, above any recorded surface gust",
  }),
  number("drag_coefficient", "", "drag coefficient of the tether across the wind (a round cylinder: about 1.2)", {
    greaterThan: 0, atMost: 3, limitReason: "plausibility bound", default: 1.2,
  }),
  AIR_DENSITY,
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
  const onBoardKg = values.number("water_on_board_kg");
  const ratedKg = values.number("rated_load_kg");
  const dynamic = values.number("dynamic_factor");
  const wllKn = values.number("tether_wll_kn");
  const tetherDM = values.number("tether_diameter_mm") * M_PER_MM;
  const windMs = values.number("wind_ms");
  const cd = values.number("drag_coefficient");
  const rhoAir = values.number("air_density_kgm3");

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
  const totalKg = robotKg + payloadKg + onBoardKg + waterKg + hoseKg + lineKg;
  const weightN = totalKg * G;
  const dynamicN = dynamic * weightN;
  const dragN = 0.5 * rhoAir * windMs ** 2 * cd * tetherDM * lineM;
  const tensionN = Math.hypot(dynamicN, dragN);
  const wllN = wllKn * N_PER_KN;
  steps.push(
    `water in hose = ${num(rho)} kg/m³ × π × (${num(diameterM)} m)² / 4 × ${num(hoseM)} m = ${num(waterKg)} kg`,
    `hose = ${num(hoseKgM)} kg/m × ${num(hoseM)} m = ${num(hoseKg)} kg`,
    `line = ${num(lineKgM)} kg/m × ${num(lineM)} m = ${num(lineKg)} kg`,
    `total = ${num(robotKg)} + ${num(payloadKg)} + ${num(onBoardKg)} + ${num(waterKg)} + ${num(hoseKg)} +` +
      ` ${num(lineKg)} = ${num(totalKg)} kg (maker's rated load ${num(ratedKg)} kg)`,
    `tether load with the dynamic factor = ${num(dynamic)} × ${num(totalKg)} kg × ${num(G)} m/s² = ${num(dynamicN / N_PER_KN)} kN`,
    `wind on the tether = ½ × ${num(rhoAir)} kg/m³ × (${num(windMs)} m/s)² × ${num(cd)} × ${num(tetherDM)} m ×` +
      ` ${num(lineM)} m = ${num(dragN)} N`,
    `tension = √(${num(dynamicN)}² + ${num(dragN)}²) N = ${num(tensionN / N_PER_KN)} kN (working load limit ${num(wllKn)} kN)`,
  );
  return buildResult({
    name: NAME,
    inputs: normalised,
    outputs: {
      water_kg: waterKg,
      hose_kg: hoseKg,
      line_kg: lineKg,
      total_kg: totalKg,
      rated_load_kg: ratedKg,
      margin_kg: ratedKg - totalKg,
      dynamic_load_kn: dynamicN / N_PER_KN,
      tether_wind_n: dragN,
      tether_tension_kn: tensionN / N_PER_KN,
      water_density_kgm3: rho,
    },
    checks: [
      check("rated_load", ratedKg / totalKg - 1, false, {
        reason: `The robot and everything hanging from it weigh about ${num(totalKg, 3)} kg; the maker rates it for ${num(ratedKg, 3)} kg.`,
      }),
      check("tether_wll", wllN / tensionN - 1, false, {
        reason:
          `With starts and stops (× ${num(dynamic, 3)}) and a ${num(windMs, 3)} m/s gust on the tether it would carry` +
          ` about ${num(tensionN / N_PER_KN, 3)} kN; its working load limit is ${num(wllKn, 3)} kN.`,
      }),
    ],
    steps,
  });
}

export const SUSPENDED_MASS = calculation(NAME, "Suspended mass", FIELDS, RULES, compute);

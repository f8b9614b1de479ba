/** suction-hold: can the vacuum cups hold the robot on a vertical glass wall? Port of suction.py. */
import { ATMOSPHERE_KPA, G, PA_PER_KPA } from "./constants";
import { OutOfRange } from "./errors";
import { buildResult, calculation, integer, number, type Inputs } from "./inputs";
import { check, ratioMargin, type CalcResult } from "./result";
import { num } from "./working";

const NAME = "suction-hold";

const FIELDS = [
  number("vacuum_kpa", "kPa", "vacuum in the cups, gauge, below atmosphere", {
    atLeast: 0, atMost: ATMOSPHERE_KPA,
    limitReason: "a gauge vacuum cannot be deeper than the standard atmosphere",
  }),
  number("cup_diameter_m", "m", "sealing diameter of one cup", {
    greaterThan: 0, atMost: 2, limitReason: "plausibility bound for one cup",
  }),
  integer("cups", "", "cups engaged on the glass at once", { atLeast: 1 }),
  number("friction", "", "friction coefficient of cup on glass", {
    greaterThan: 0, atMost: 2, limitReason: "no cup-on-glass friction coefficient is this high",
  }),
  number("mass_kg", "kg", "robot mass carried by the cups", { greaterThan: 0 }),
  number("wind_outward_n", "N", "wind suction pulling the robot off the wall", { atLeast: 0, default: 0 }),
  number("process_force_n", "N", "brush reaction along the wall", { atLeast: 0, default: 0 }),
  number("safety_factor", "", "required safety factor on the hold", { atLeast: 1, default: 2 }),
  number("effective_area_ratio", "", "fraction of the cup's disc area the vacuum acts on", {
    greaterThan: 0, atMost: 1,
    limitReason: "the vacuum cannot act on more than the cup's own area", default: 1,
  }),
];

function compute(values: Inputs): CalcResult {
  const vacuumKpa = values.number("vacuum_kpa");
  const diameterM = values.number("cup_diameter_m");
  const cups = values.integer("cups");
  const friction = values.number("friction");
  const massKg = values.number("mass_kg");
  const outwardN = values.number("wind_outward_n");
  const processN = values.number("process_force_n");
  const required = values.number("safety_factor");
  const areaRatio = values.number("effective_area_ratio");

  const areaM2 = (areaRatio * Math.PI * diameterM ** 2) / 4;
  if (areaM2 === 0) throw new OutOfRange("effective_area_m2", num(areaM2));
  const clampN = vacuumKpa * PA_PER_KPA * areaM2 * cups;
  const netClampN = clampN - outwardN;
  const capacityN = friction * Math.max(netClampN, 0);
  const weightN = massKg * G;
  const demandN = weightN + processN;
  const achieved = capacityN / demandN;
  const outwardLimitN = clampN / required;
  const forShearKpa = ((required * demandN) / friction + outwardN) / (areaM2 * cups) / PA_PER_KPA;
  const forOutwardKpa = (required * outwardN) / (areaM2 * cups) / PA_PER_KPA;
  const minVacuumKpa = Math.max(forShearKpa, forOutwardKpa);

  const steps = [
    `effective area per cup = ${num(areaRatio)} × π × (${num(diameterM)} m)² / 4 = ${num(areaM2)} m²`,
    `clamp force = ${num(vacuumKpa)} kPa × ${num(areaM2)} m² × ${cups} = ${num(clampN)} N`,
    `net clamp force = ${num(clampN)} N - ${num(outwardN)} N outward = ${num(netClampN)} N`,
    `shear capacity = ${num(friction)} × ${num(Math.max(netClampN, 0))} N = ${num(capacityN)} N`,
    `shear demand = ${num(massKg)} kg × ${num(G)} m/s² + ${num(processN)} N = ${num(demandN)} N`,
    `achieved safety factor = ${num(capacityN)} N / ${num(demandN)} N = ${num(achieved)} (required ${num(required)})`,
    `outward pull allowed = ${num(clampN)} N / ${num(required)} = ${num(outwardLimitN)} N (acting ${num(outwardN)} N)`,
    `least vacuum for the shear check = (${num(required)} × ${num(demandN)} N / ${num(friction)} + ${num(outwardN)} N)` +
      ` / (${num(areaM2)} m² × ${cups}) = ${num(forShearKpa)} kPa`,
    `least vacuum for the outward check = ${num(required)} × ${num(outwardN)} N / (${num(areaM2)} m² × ${cups})` +
      ` = ${num(forOutwardKpa)} kPa`,
    `least vacuum = ${num(minVacuumKpa)} kPa (reading ${num(vacuumKpa)} kPa)`,
  ];
  if (minVacuumKpa > ATMOSPHERE_KPA) {
    steps.push(
      `the least vacuum exceeds the atmosphere (${num(ATMOSPHERE_KPA)} kPa): no vacuum can hold with these cups`,
    );
  }
  return buildResult({
    name: NAME,
    inputs: values.asDict(),
    outputs: {
      effective_area_m2: areaM2,
      clamp_force_n: clampN,
      net_clamp_force_n: netClampN,
      shear_capacity_n: capacityN,
      weight_n: weightN,
      shear_demand_n: demandN,
      achieved_safety_factor: achieved,
      outward_limit_n: outwardLimitN,
      min_vacuum_kpa: minVacuumKpa,
    },
    checks: [check("safety_factor", achieved / required - 1), check("outward_pull", ratioMargin(outwardLimitN, outwardN))],
    steps,
  });
}

export const SUCTION_HOLD = calculation(NAME, "Suction hold on glass", FIELDS, [], compute);

/** water-use: how much water a facade needs and whether the tank holds it; port of water_use.py. */
import { OutOfRange } from "./errors";
import { buildResult, calculation, number, type Inputs } from "./inputs";
import { check, type CalcResult, type Check, type OutputValue } from "./result";
import { num } from "./working";

const NAME = "water-use";

const FIELDS = [
  number("area_m2", "m²", "facade area to clean", { greaterThan: 0 }),
  number("litres_per_m2", "L/m²", "water used per square metre", { greaterThan: 0 }),
  number("rate_m2_per_h", "m²/h", "area cleaned per hour", { greaterThan: 0 }),
  number("supply_l", "L", "water available (tank capacity)", { greaterThan: 0, optional: true }),
];

function compute(values: Inputs): CalcResult {
  const areaM2 = values.number("area_m2");
  const perM2 = values.number("litres_per_m2");
  const rate = values.number("rate_m2_per_h");
  const supplyL = values.optionalNumber("supply_l");
  const perHour = perM2 * rate;
  const hours = areaM2 / rate;
  const litres = areaM2 * perM2;
  const steps = [
    `water per hour = ${num(perM2)} L/m² × ${num(rate)} m²/h = ${num(perHour)} L/h`,
    `time = ${num(areaM2)} m² / ${num(rate)} m²/h = ${num(hours)} h`,
    `water needed = ${num(areaM2)} m² × ${num(perM2)} L/m² = ${num(litres)} L`,
  ];
  const outputs: Record<string, OutputValue> = {
    litres_per_hour_l_per_h: perHour,
    hours_h: hours,
    litres_l: litres,
    supply_hours_h: null,
  };
  const checks: Check[] = [];
  if (supplyL !== null) {
    if (litres === 0) throw new OutOfRange("litres_l", num(litres));
    if (perHour === 0) throw new OutOfRange("litres_per_hour_l_per_h", num(perHour));
    outputs.supply_hours_h = supplyL / perHour;
    steps.push(`supply lasts ${num(supplyL)} L / ${num(perHour)} L/h = ${num(supplyL / perHour)} h against ${num(litres)} L needed`);
    checks.push(check("supply", supplyL / litres - 1));
  } else {
    steps.push("no supply given: nothing to check against");
  }
  return buildResult({ name: NAME, inputs: values.asDict(), outputs, checks, steps });
}

export const WATER_USE = calculation(NAME, "Water use", FIELDS, [], compute);

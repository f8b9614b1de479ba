/** Calculations run on the phone for instant feedback; the server recomputes and its verdict stands. */
import { ARREST_LOAD } from "./arrest";
import { VACUUM_DECAY } from "./decay";
import { CalcInputError, UnknownCalculation } from "./errors";
import { SUSPENDED_MASS } from "./mass";
import type { CalcResult, Calculation } from "./result";
import { SUCTION_HOLD } from "./suction";
import { ANCHOR_TAG } from "./tag";
import { WATER_LINE } from "./water";
import { WATER_USE } from "./water_use";
import { WIND_AT_HEIGHT } from "./wind";

export { CalcInputError, UnknownCalculation };
export type { CalcResult };

const CALCULATIONS: Record<string, Calculation> = Object.fromEntries(
  [SUCTION_HOLD, VACUUM_DECAY, ARREST_LOAD, WIND_AT_HEIGHT, WATER_LINE, SUSPENDED_MASS, WATER_USE, ANCHOR_TAG].map((c) => [c.name, c]),
);

/** Run the calculation called `name`; throws UnknownCalculation or CalcInputError. */
export function run(name: string, inputs: unknown): CalcResult {
  const calculation = Object.prototype.hasOwnProperty.call(CALCULATIONS, name) ? CALCULATIONS[name] : undefined;
  if (!calculation) throw new UnknownCalculation(String(name));
  return calculation.run(inputs);
}

/** arrest-load: the peak force on the safety line and its anchor if the grip fails. Port of arrest.py. */
import { G, N_PER_KN } from "./constants";
import { calculation, number, type Inputs, type Rule } from "./inputs";
import { build, check, type CalcResult } from "./result";
import { num } from "./working";

const NAME = "arrest-load";

const FIELDS = [
  number("mass_kg", "kg", "mass the safety line must catch", { greaterThan: 0 }),
  number("free_fall_m", "m", "slack before the line takes load", { atLeast: 0 }),
  number("line_length_m", "m", "deployed line length that stretches", { greaterThan: 0 }),
  number("line_ea_kn", "kN", "line axial stiffness EA (force per unit strain)", { greaterThan: 0, optional: true }),
  number("elongation_pct", "%", "line elongation at elongation_load_kn", {
    greaterThan: 0, atMost: 100,
    limitReason: "beyond doubling its length a line is not linear-elastic", optional: true,
  }),
  number("elongation_load_kn", "kN", "load at which elongation_pct is stated", { greaterThan: 0, optional: true }),
  number("anchor_rating_kn", "kN", "anchor rated capacity", { greaterThan: 0 }),
  number("line_mbs_kn", "kN", "safety line minimum breaking strength", { greaterThan: 0 }),
  number("anchor_safety_factor", "", "required factor of anchor rating over peak force", { atLeast: 1 }),
  number("line_safety_factor", "", "required factor of line strength over peak force", { atLeast: 1 }),
];

const RULES: Rule[] = [{ rule: "exactlyOne", alternatives: [["line_ea_kn"], ["elongation_pct", "elongation_load_kn"]] }];

/** Peak line force of a linear-elastic arrest, from the energy balance. */
export function peakForceN(weightN: number, stiffnessNPerM: number, freeFallM: number): number {
  return weightN + Math.sqrt(weightN ** 2 + 2 * weightN * stiffnessNPerM * freeFallM);
}

function compute(values: Inputs): CalcResult {
  const massKg = values.number("mass_kg");
  const fallM = values.number("free_fall_m");
  const lengthM = values.number("line_length_m");
  const anchorKn = values.number("anchor_rating_kn");
  const mbsKn = values.number("line_mbs_kn");
  const anchorSf = values.number("anchor_safety_factor");
  const lineSf = values.number("line_safety_factor");

  const steps: string[] = [];
  const givenEa = values.optionalNumber("line_ea_kn");
  let eaKn: number;
  if (givenEa === null) {
    const pct = values.number("elongation_pct");
    const loadKn = values.number("elongation_load_kn");
    eaKn = loadKn / (pct / 100);
    steps.push(`EA = ${num(loadKn)} kN / (${num(pct)} % / 100) = ${num(eaKn)} kN`);
  } else {
    eaKn = givenEa;
  }
  const k = (eaKn * N_PER_KN) / lengthM;
  const weightN = massKg * G;
  const forceN = peakForceN(weightN, k, fallM);
  const stretchM = forceN / k;
  const dropM = fallM + stretchM;
  const anchorFactor = (anchorKn * N_PER_KN) / forceN;
  const lineFactor = (mbsKn * N_PER_KN) / forceN;
  const allowedN = Math.min(anchorKn / anchorSf, mbsKn / lineSf) * N_PER_KN;
  const maxSlackM = allowedN >= 2 * weightN ? (allowedN ** 2 - 2 * allowedN * weightN) / (2 * weightN * k) : 0;

  steps.push(
    `k = EA / L = ${num(eaKn)} kN / ${num(lengthM)} m = ${num(k / N_PER_KN)} kN/m`,
    `m·g = ${num(massKg)} kg × ${num(G)} m/s² = ${num(weightN)} N`,
    `F = m·g + √((m·g)² + 2·m·g·k·h) = ${num(weightN)} + √(${num(weightN)}² + 2 × ${num(weightN)} × ${num(k)}` +
      ` × ${num(fallM)}) = ${num(forceN)} N`,
    `stretch x = F / k = ${num(forceN)} N / ${num(k)} N/m = ${num(stretchM)} m`,
    `energy check: m·g·(h + x) = ${num(weightN * dropM)} J; ½·k·x² = ${num(0.5 * k * stretchM ** 2)} J`,
    `total drop = ${num(fallM)} m + ${num(stretchM)} m = ${num(dropM)} m` +
      " (clearance needed below the point where the line starts to take load)",
    `anchor factor = ${num(anchorKn)} kN / ${num(forceN / N_PER_KN)} kN = ${num(anchorFactor)} (required ${num(anchorSf)})`,
    `line factor = ${num(mbsKn)} kN / ${num(forceN / N_PER_KN)} kN = ${num(lineFactor)} (required ${num(lineSf)})`,
    `allowed peak force = min(${num(anchorKn)} / ${num(anchorSf)}, ${num(mbsKn)} / ${num(lineSf)}) kN` +
      ` = ${num(allowedN / N_PER_KN)} kN`,
  );
  if (allowedN >= 2 * weightN) {
    steps.push(
      `most slack = (F² - 2·F·m·g) / (2·m·g·k) = (${num(allowedN)}² - 2 × ${num(allowedN)} × ${num(weightN)})` +
        ` / (2 × ${num(weightN)} × ${num(k)}) = ${num(maxSlackM)} m`,
    );
  } else {
    steps.push(
      `most slack = 0 m: the allowed force ${num(allowedN)} N is below 2·m·g = ${num(2 * weightN)} N,` +
        " the force of a load taken up with no slack at all",
    );
  }
  return build({
    name: NAME,
    inputs: values.asDict(),
    outputs: {
      line_ea_kn: eaKn,
      line_stiffness_kn_per_m: k / N_PER_KN,
      static_force_kn: weightN / N_PER_KN,
      peak_force_kn: forceN / N_PER_KN,
      dynamic_factor: forceN / weightN,
      line_stretch_m: stretchM,
      total_drop_m: dropM,
      anchor_factor: anchorFactor,
      line_factor: lineFactor,
      allowed_force_kn: allowedN / N_PER_KN,
      max_slack_m: maxSlackM,
    },
    checks: [check("anchor", anchorFactor / anchorSf - 1), check("line", lineFactor / lineSf - 1)],
    steps,
  });
}

export const ARREST_LOAD = calculation(NAME, "Fall arrest load", FIELDS, RULES, compute);

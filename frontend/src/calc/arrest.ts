/** arrest-load: the peak force on the safety line and its anchor if the grip fails. Port of arrest.py. */
import { G, M_PER_MM, N_PER_KN, WATER_DENSITY_20C_KGM3 } from "./constants";
import { OutOfRange } from "./errors";
import { buildResult, calculation, number, type Inputs, type Rule } from "./inputs";
import { check, type CalcResult, type Check, type OutputValue } from "./result";
import { num } from "./working";

const NAME = "arrest-load";

const FIELDS = [
  number("mass_kg", "kg", "robot's own mass, without water", { greaterThan: 0 }),
  number("payload_kg", "kg", "payload and tools carried on the robot", { atLeast: 0, default: 0 }),
  number("water_on_board_kg", "kg", "water carried on the robot", { atLeast: 0, default: 0 }),
  number("hose_kg_per_m", "kg/m", "self-weight of the hose the robot carries, per metre", { atLeast: 0, default: 0 }),
  number("hose_id_mm", "mm", "inner diameter of that hose, to add the water it holds", {
    greaterThan: 0, atMost: 500, limitReason: "plausibility bound", optional: true,
  }),
  number("free_fall_m", "m", "slack before the line takes load", { atLeast: 0 }),
  number("shortest_line_m", "m", "deployed line length at the top of the drop, anchor to robot", { greaterThan: 0 }),
  number("line_length_m", "m", "deployed line length at the foot of the drop", { greaterThan: 0 }),
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
  number("clearance_below_m", "m", "clear height below the robot at the lowest point of the drop", { atLeast: 0 }),
  number("absorber_arrest_force_kn", "kN", "energy absorber's rated arrest force, where one is fitted", {
    greaterThan: 0, optional: true,
  }),
  number("absorber_deployment_m", "m", "energy absorber's rated deployment length", { greaterThan: 0, optional: true }),
];

const RULES: Rule[] = [
  { rule: "exactlyOne", alternatives: [["line_ea_kn"], ["elongation_pct", "elongation_load_kn"]] },
  { rule: "atMostFractionOf", name: "shortest_line_m", other: "line_length_m", fraction: 1,
    reason: "the line at the top of the drop is not longer than at its foot" },
  { rule: "together", names: ["absorber_arrest_force_kn", "absorber_deployment_m"] },
];

/** Peak line force of a linear-elastic arrest, from the energy balance. */
function peakForceN(weightN: number, stiffnessNPerM: number, freeFallM: number): number {
  return weightN + Math.sqrt(weightN) * Math.sqrt(weightN + 2 * stiffnessNPerM * freeFallM);
}

interface Arrest {
  where: string;
  lengthM: number;
  massKg: number;
  stiffness: number;
  forceN: number;
  stretchM: number;
  deploymentM: number;
  bottomsOut: boolean;
}

function arrestAt(where: string, lengthM: number, massKg: number, eaN: number, fallM: number, absorberN: number | null): Arrest {
  const weightN = massKg * G;
  const k = eaN / lengthM;
  if (k === 0) throw new OutOfRange("line_stiffness_kn_per_m", num(k));
  let forceN = peakForceN(weightN, k, fallM);
  let deploymentM = 0;
  let bottomsOut = false;
  if (absorberN !== null && forceN > absorberN) {
    if (absorberN <= weightN) {
      bottomsOut = true;
    } else {
      const stretchA = absorberN / k;
      const energy = weightN * (fallM + stretchA) - 0.5 * k * stretchA ** 2;
      deploymentM = Math.max(energy / (absorberN - weightN), 0);
      forceN = absorberN;
    }
  }
  return { where, lengthM, massKg, stiffness: k, forceN, stretchM: forceN / k, deploymentM, bottomsOut };
}

function compute(values: Inputs): CalcResult {
  const robotKg = values.number("mass_kg");
  const payloadKg = values.number("payload_kg");
  const waterKg = values.number("water_on_board_kg");
  const hoseKgPerM = values.number("hose_kg_per_m");
  const hoseIdMm = values.optionalNumber("hose_id_mm");
  const fallM = values.number("free_fall_m");
  const shortM = values.number("shortest_line_m");
  const fullM = values.number("line_length_m");
  const anchorKn = values.number("anchor_rating_kn");
  const mbsKn = values.number("line_mbs_kn");
  const anchorSf = values.number("anchor_safety_factor");
  const lineSf = values.number("line_safety_factor");
  const clearanceM = values.number("clearance_below_m");
  const absorberKn = values.optionalNumber("absorber_arrest_force_kn");
  const absorberM = values.optionalNumber("absorber_deployment_m");

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
  let waterPerM = 0;
  if (hoseIdMm !== null) {
    waterPerM = (WATER_DENSITY_20C_KGM3 * Math.PI * (hoseIdMm * M_PER_MM) ** 2) / 4;
    steps.push(`water in the hose = 998.2 kg/m³ × π × (${num(hoseIdMm)} mm)² / 4 = ${num(waterPerM)} kg/m`);
  }
  const carriedPerM = hoseKgPerM + waterPerM;
  const fixedKg = robotKg + payloadKg + waterKg;
  const absorberN = absorberKn === null ? null : absorberKn * N_PER_KN;
  const arrests: Arrest[] = [];
  for (const [where, lengthM] of [["top of the drop", shortM], ["foot of the drop", fullM]] as const) {
    const massKg = fixedKg + carriedPerM * lengthM;
    const a = arrestAt(where, lengthM, massKg, eaKn * N_PER_KN, fallM, absorberN);
    arrests.push(a);
    const weightN = massKg * G;
    steps.push(
      `${where}: falling mass = ${num(robotKg)} + ${num(payloadKg)} + ${num(waterKg)} kg` +
        ` + ${num(carriedPerM)} kg/m × ${num(lengthM)} m of hose = ${num(massKg)} kg`,
      `${where}: k = EA / L = ${num(eaKn)} kN / ${num(lengthM)} m = ${num(a.stiffness / N_PER_KN)} kN/m;` +
        ` F = m·g + √((m·g)² + 2·m·g·k·h) = ${num(weightN)} + √(${num(weightN)}² + 2 × ${num(weightN)} ×` +
        ` ${num(a.stiffness)} × ${num(fallM)}) N`,
    );
    if (a.bottomsOut) {
      steps.push(
        `${where}: the absorber's ${num(absorberKn ?? 0)} kN is no more than the weight` +
          ` ${num(weightN / N_PER_KN)} kN: it cannot stop the fall`,
      );
    } else if (a.deploymentM > 0) {
      steps.push(
        `${where}: the absorber holds the force at ${num(a.forceN / N_PER_KN)} kN and pays` +
          ` out ${num(a.deploymentM)} m (energy balance)`,
      );
    }
    steps.push(`${where}: peak force ${num(a.forceN / N_PER_KN)} kN, stretch ${num(a.stretchM)} m`);
  }
  const [top, foot] = arrests as [Arrest, Arrest];
  const worst = top.forceN >= foot.forceN ? top : foot;
  const forceN = worst.forceN;
  const dropM = fallM + foot.stretchM + foot.deploymentM;
  const anchorFactor = (anchorKn * N_PER_KN) / forceN;
  const lineFactor = (mbsKn * N_PER_KN) / forceN;
  const allowedN = Math.min(anchorKn / anchorSf, mbsKn / lineSf) * N_PER_KN;
  const topWeightN = top.massKg * G;
  const maxSlackM =
    allowedN >= 2 * topWeightN ? (allowedN ** 2 - 2 * allowedN * topWeightN) / (2 * topWeightN * top.stiffness) : 0;
  steps.push(
    `governing force: ${worst.where}, ${num(forceN / N_PER_KN)} kN`,
    `anchor factor = ${num(anchorKn)} kN / ${num(forceN / N_PER_KN)} kN = ${num(anchorFactor)} (required ${num(anchorSf)})`,
    `line factor = ${num(mbsKn)} kN / ${num(forceN / N_PER_KN)} kN = ${num(lineFactor)} (required ${num(lineSf)})`,
    `total drop at the foot = ${num(fallM)} m free fall + ${num(foot.stretchM)} m stretch` +
      ` + ${num(foot.deploymentM)} m absorber = ${num(dropM)} m (clearance below ${num(clearanceM)} m)`,
    `most slack at the top of the drop = ${num(maxSlackM)} m (allowed force ${num(allowedN / N_PER_KN)} kN)`,
  );
  const outputs: Record<string, OutputValue> = {
    line_ea_kn: eaKn,
    line_stiffness_kn_per_m: worst.stiffness / N_PER_KN,
    falling_mass_top_kg: top.massKg,
    falling_mass_foot_kg: foot.massKg,
    peak_force_top_kn: top.forceN / N_PER_KN,
    peak_force_foot_kn: foot.forceN / N_PER_KN,
    peak_force_kn: forceN / N_PER_KN,
    governing_position: worst.where,
    static_force_kn: (worst.massKg * G) / N_PER_KN,
    dynamic_factor: forceN / (worst.massKg * G),
    line_stretch_m: foot.stretchM,
    absorber_deployment_needed_m: absorberN !== null ? Math.max(top.deploymentM, foot.deploymentM) : null,
    total_drop_m: dropM,
    anchor_factor: anchorFactor,
    line_factor: lineFactor,
    allowed_force_kn: allowedN / N_PER_KN,
    max_slack_m: maxSlackM,
  };
  const kn = forceN / N_PER_KN;
  const checks: Check[] = [
    check("anchor", anchorFactor / anchorSf - 1, false, {
      reason:
        `A fall at the ${worst.where} would load the anchor with about ${num(kn, 3)} kN;` +
        ` its ${num(anchorKn, 3)} kN rating leaves a factor of ${num(anchorFactor, 2)}, ${num(anchorSf, 2)} is required.`,
    }),
    check("line", lineFactor / lineSf - 1, false, {
      reason:
        `A fall at the ${worst.where} would load the safety line with about ${num(kn, 3)} kN;` +
        ` its ${num(mbsKn, 3)} kN strength leaves a factor of ${num(lineFactor, 2)}, ${num(lineSf, 2)} is required.`,
    }),
    check("clearance", dropM === 0 ? null : clearanceM / dropM - 1, false, {
      reason:
        `A fall at the foot of the drop would drop the robot about ${num(dropM, 2)} m;` +
        ` only ${num(clearanceM, 2)} m are clear below it.`,
    }),
  ];
  if (absorberN !== null && absorberM !== null) {
    if (arrests.some((a) => a.bottomsOut)) {
      checks.push(
        check("absorber", -1, true, {
          reason: `The absorber's ${num(absorberKn ?? 0, 3)} kN arrest force does not exceed the falling weight: it cannot stop the fall.`,
        }),
      );
    }
    const neededM = Math.max(top.deploymentM, foot.deploymentM);
    checks.push(
      check("absorber_deployment", neededM === 0 ? null : absorberM / neededM - 1, false, {
        reason: `The absorber would need to pay out about ${num(neededM, 2)} m; it is rated for ${num(absorberM, 2)} m.`,
      }),
    );
  }
  return buildResult({ name: NAME, inputs: values.asDict(), outputs, checks, steps });
}

export const ARREST_LOAD = calculation(NAME, "Fall arrest load", FIELDS, RULES, compute);

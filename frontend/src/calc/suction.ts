/** suction-hold: can the vacuum cups hold the robot on a vertical glass wall, in the wind? Port of suction.py. */
import { ATMOSPHERE_KPA, G, PA_PER_KPA } from "./constants";
import { CalcInputError, OutOfRange } from "./errors";
import { buildResult, calculation, integer, number, type Inputs } from "./inputs";
import { check, type CalcResult } from "./result";
import { AIR_DENSITY } from "./wind";
import { num } from "./working";

const NAME = "suction-hold";

/** EN 1991-1-4 Table 7.1 cpe,1 on a side wall (from memory); C taken as the leeward worst. */
const CPE_1: Record<string, number> = { A: -1.4, B: -1.1, C: -0.7 };
const HOSE_DRAG_COEFFICIENT = 1.2;

function facadeZone(cornerM: number, depthM: number | null, heightM: number): [string, number | null] {
  if (depthM === null) return ["A", null];
  const eM = Math.min(depthM, 2 * heightM);
  if (cornerM < eM / 5) return ["A", eM];
  if (cornerM < eM) return ["B", eM];
  return ["C", eM];
}

const PLAUSIBLE = "plausibility bound";

const FIELDS = [
  number("vacuum_kpa", "kPa", "vacuum in the cups, gauge, below atmosphere", {
    atLeast: 0, atMost: ATMOSPHERE_KPA, limitReason: "a gauge vacuum cannot be deeper than the standard atmosphere",
  }),
  number("cup_diameter_m", "m", "sealing diameter of one cup", {
    greaterThan: 0, atMost: 2, limitReason: "plausibility bound for one cup",
  }),
  number("effective_area_ratio", "", "fraction of the cup's disc area the vacuum acts on (inside the lip)", {
    greaterThan: 0, atMost: 1, limitReason: "the vacuum cannot act on more than the cup's own area",
  }),
  integer("cups", "", "cups engaged on the glass at once", { atLeast: 1 }),
  integer("cup_rows", "", "rows of cups, one above the other", { atLeast: 1 }),
  number("row_spacing_m", "m", "distance from the bottom row of cups to the top row", {
    atLeast: 0, atMost: 10, limitReason: PLAUSIBLE,
  }),
  number("wet_glass_friction", "", "friction coefficient of a cup on wet glass", {
    greaterThan: 0, atMost: 2, limitReason: "no cup-on-glass friction coefficient is this high",
  }),
  number("mass_kg", "kg", "robot mass carried by the cups", { greaterThan: 0 }),
  number("water_on_board_kg", "kg", "water carried on the robot", { atLeast: 0, default: 0 }),
  number("com_offset_m", "m", "distance of the robot's centre of mass from the glass", {
    atLeast: 0, atMost: 5, limitReason: PLAUSIBLE,
  }),
  number("process_force_n", "N", "brush drag along the wall", { atLeast: 0, default: 0 }),
  number("brush_push_n", "N", "brush pushing the robot off the glass", { atLeast: 0, default: 0 }),
  number("peak_pressure_pa", "Pa", "peak velocity pressure of the wind at working height", { atLeast: 0 }),
  number("stop_work_gust_ms", "m/s", "gust at working height at which work stops: the hold must still hold in it", {
    greaterThan: 0, atMost: 120, limitReason: "plausibility bound, above any recorded surface gust", optional: true,
  }),
  AIR_DENSITY,
  number("face_area_m2", "m²", "robot area facing out from the wall", { greaterThan: 0 }),
  number("side_area_m2", "m²", "robot area facing wind along the wall", { atLeast: 0 }),
  number("drag_coefficient", "", "drag coefficient of the robot's side", { greaterThan: 0, atMost: 3, limitReason: PLAUSIBLE }),
  number("corner_distance_m", "m", "distance along the facade from the drop to the nearer corner", { atLeast: 0 }),
  number("building_depth_m", "m", "building's extent at right angles to the facade (b for wind along it)", {
    greaterThan: 0, optional: true,
  }),
  number("building_height_m", "m", "building height above ground", { greaterThan: 0 }),
  number("hose_od_mm", "mm", "outside diameter of the hanging hose", { atLeast: 0, atMost: 300, limitReason: PLAUSIBLE, default: 0 }),
  number("hanging_hose_m", "m", "length of hose hanging from the roof to the robot", { atLeast: 0, default: 0 }),
  number("safety_factor", "", "required safety factor on the hold", { atLeast: 1 }),
];

function compute(values: Inputs): CalcResult {
  const vacuumKpa = values.number("vacuum_kpa");
  const diameterM = values.number("cup_diameter_m");
  const areaRatio = values.number("effective_area_ratio");
  const cups = values.integer("cups");
  const rows = values.integer("cup_rows");
  const spacingM = values.number("row_spacing_m");
  const friction = values.number("wet_glass_friction");
  const massKg = values.number("mass_kg") + values.number("water_on_board_kg");
  const offsetM = values.number("com_offset_m");
  const processN = values.number("process_force_n");
  const pushN = values.number("brush_push_n");
  const readingQpPa = values.number("peak_pressure_pa");
  const stopWorkMs = values.optionalNumber("stop_work_gust_ms");
  const rho = values.number("air_density_kgm3");
  const faceM2 = values.number("face_area_m2");
  const sideM2 = values.number("side_area_m2");
  const cd = values.number("drag_coefficient");
  const cornerM = values.number("corner_distance_m");
  const depthM = values.optionalNumber("building_depth_m");
  const heightM = values.number("building_height_m");
  const hoseOdM = values.number("hose_od_mm") / 1000;
  const hoseM = values.number("hanging_hose_m");
  const required = values.number("safety_factor");

  if (rows > cups) throw new CalcInputError("cup_rows", `must be at most the number of cups (${cups})`);
  if (rows > 1 && spacingM === 0) {
    throw new CalcInputError("row_spacing_m", "must be greater than zero when there is more than one row of cups");
  }
  const areaM2 = (areaRatio * Math.PI * diameterM ** 2) / 4;
  if (areaM2 === 0) throw new OutOfRange("effective_area_m2", num(areaM2));
  // The wind at the higher of the reading and the stop-work gust: work goes on until that gust.
  let stopWorkQpPa: number | null = null;
  let qpPa = readingQpPa;
  let wind = "wind reading";
  let windStep = `wind: the reading's peak pressure qp = ${num(qpPa)} Pa (no stop-work gust given)`;
  let windWords = "";
  if (stopWorkMs !== null) {
    stopWorkQpPa = 0.5 * rho * stopWorkMs ** 2;
    const stopText =
      `qp at the stop-work gust of ${num(stopWorkMs)} m/s = ½ × ${num(rho)} kg/m³ ×` +
      ` (${num(stopWorkMs)} m/s)² = ${num(stopWorkQpPa)} Pa`;
    if (stopWorkQpPa >= readingQpPa) {
      qpPa = stopWorkQpPa;
      wind = "stop-work gust";
      windStep = `wind: ${stopText}, at least the reading's ${num(readingQpPa)} Pa: the stop-work gust governs, since work goes on until it`;
      windWords = ` at the stop-work gust of ${num(stopWorkMs, 3)} m/s`;
    } else {
      windStep = `wind: the reading's qp = ${num(readingQpPa)} Pa is above ${stopText}: the reading governs`;
    }
  }
  const [zone, eM] = facadeZone(cornerM, depthM, heightM);
  const cpe = CPE_1[zone]!;
  const weightN = massKg * G;
  const suctionN = qpPa * Math.abs(cpe) * faceM2;
  const sideN = qpPa * cd * sideM2;
  const hoseN = 0.5 * qpPa * HOSE_DRAG_COEFFICIENT * hoseOdM * hoseM;
  const outwardN = suctionN + pushN;
  const inPlaneN = Math.hypot(weightN + processN, sideN + hoseN);
  const clampN = vacuumKpa * PA_PER_KPA * areaM2 * cups;
  const neededN = outwardN + inPlaneN / friction;
  const achieved = clampN / neededN;
  const perRow = cups / rows;
  const rowClampN = clampN / rows;
  const peelN = rows > 1 ? (weightN * offsetM) / spacingM : 0;
  const rowLoadN = outwardN / rows + peelN;
  const rowAchieved = rowLoadN === 0 ? null : rowClampN / rowLoadN;
  const forAllKpa = (required * neededN) / (areaM2 * cups) / PA_PER_KPA;
  const forRowKpa = (required * rowLoadN) / (areaM2 * perRow) / PA_PER_KPA;
  const minVacuumKpa = Math.max(forAllKpa, forRowKpa);

  const place =
    eM === null
      ? "no building depth on record: zone A assumed (the worst)"
      : `e = min(b, 2h) = min(${num(depthM ?? 0)}, 2 × ${num(heightM)}) = ${num(eM)} m;` +
        ` ${num(cornerM)} m from the nearer corner is zone ${zone}`;
  const steps = [
    windStep,
    `effective area per cup = ${num(areaRatio)} × π × (${num(diameterM)} m)² / 4 = ${num(areaM2)} m²;` +
      ` clamp force = ${num(vacuumKpa)} kPa × ${num(areaM2)} m² × ${cups} = ${num(clampN)} N`,
    `facade zone (EN 1991-1-4 7.2.2): ${place}; cpe,1 = ${num(cpe)}`,
    `wind suction = qp × |cpe| × A = ${num(qpPa)} Pa × ${num(Math.abs(cpe))} × ${num(faceM2)} m²` +
      ` = ${num(suctionN)} N; with the brush's push ${num(pushN)} N, outward ${num(outwardN)} N`,
    `wind along the facade on the robot = ${num(qpPa)} Pa × ${num(cd)} × ${num(sideM2)} m² = ${num(sideN)} N;` +
      ` on the hose, half of ${num(qpPa)} Pa × 1.2 × ${num(hoseOdM)} m × ${num(hoseM)} m = ${num(hoseN)} N`,
    `in-plane load = √((${num(weightN)} N weight + ${num(processN)} N brush)² + (${num(sideN)} + ${num(hoseN)} N wind)²)` +
      ` = ${num(inPlaneN)} N`,
    `clamp needed at a factor of one = ${num(outwardN)} N + ${num(inPlaneN)} N / ${num(friction)} (wet glass)` +
      ` = ${num(neededN)} N`,
    `achieved safety factor = ${num(clampN)} N / ${num(neededN)} N = ${num(achieved)} (required ${num(required)})`,
  ];
  if (rows > 1) {
    steps.push(
      `peel: ${num(weightN)} N × ${num(offsetM)} m / ${num(spacingM)} m = ${num(peelN)} N on the top row;` +
        ` its load = ${num(outwardN)} N / ${rows} + ${num(peelN)} N = ${num(rowLoadN)} N against ${num(rowClampN)} N of clamp`,
    );
  }
  steps.push(`least vacuum = max(${num(forAllKpa)}, ${num(forRowKpa)}) = ${num(minVacuumKpa)} kPa (reading ${num(vacuumKpa)} kPa)`);
  if (minVacuumKpa > ATMOSPHERE_KPA) {
    steps.push(`the least vacuum exceeds the atmosphere (${num(ATMOSPHERE_KPA)} kPa): no vacuum can hold with these cups`);
  }
  return buildResult({
    name: NAME,
    inputs: values.asDict(),
    outputs: {
      effective_area_m2: areaM2,
      clamp_force_n: clampN,
      facade_zone: zone,
      cpe,
      wind_suction_n: suctionN,
      outward_n: outwardN,
      wind_along_facade_n: sideN,
      hose_drag_n: hoseN,
      in_plane_load_n: inPlaneN,
      weight_n: weightN,
      achieved_safety_factor: achieved,
      peel_n: peelN,
      top_row_load_n: rowLoadN,
      top_row_clamp_n: rowClampN,
      min_vacuum_kpa: minVacuumKpa,
      stop_work_pressure_pa: stopWorkQpPa,
      pressure_used_pa: qpPa,
      wind_governing: wind,
    },
    checks: [
      check("safety_factor", achieved / required - 1, false, {
        reason:
          `The cups clamp with about ${num(clampN, 3)} N; the robot's weight, the brush and the wind${windWords} need` +
          ` ${num(neededN, 3)} N on wet glass, a factor of ${num(achieved, 2)} where ${num(required, 2)} is required.`,
      }),
      check("top_row", rowAchieved === null ? null : rowAchieved / required - 1, false, {
        reason:
          `The top row of cups would be pulled with about ${num(rowLoadN, 3)} N (the peel of the robot's weight and its` +
          ` share of the wind) against ${num(rowClampN, 3)} N of clamp: a factor of ${num(rowAchieved ?? 0, 2)}` +
          ` where ${num(required, 2)} is required.`,
      }),
    ],
    steps,
  });
}

export const SUCTION_HOLD = calculation(NAME, "Suction hold on glass", FIELDS, [], compute);

/**
 * A calculation's outputs as a person reads them: "Speed at height: 8.3 m/s", not
 * "speed at height ms: 8.3". An output key ends in its unit (compliance/engineering/result.py);
 * the rest of the key is the quantity's name, with better words where the plain ones read badly.
 */
import { num } from "./calc/working";

/** Key suffixes and the units they stand for; the longest suffix that fits wins. */
const UNITS: [string, string][] = (
  [
    ["_mbar_l_per_s", "mbar·L/s"],
    ["_kpa_per_min", "kPa/min"],
    ["_kpa_per_s", "kPa/s"],
    ["_kn_per_m", "kN/m"],
    ["_kg_per_m", "kg/m"],
    ["_l_per_h", "L/h"],
    ["_kgm3", "kg/m³"],
    ["_pa_s", "Pa·s"],
    ["_kpa", "kPa"],
    ["_ms", "m/s"],
    ["_kn", "kN"],
    ["_m2", "m²"],
    ["_kg", "kg"],
    ["_pa", "Pa"],
    ["_m", "m"],
    ["_s", "s"],
    ["_n", "N"],
    ["_l", "L"],
    ["_h", "h"],
  ] as [string, string][]
).sort((a, b) => b[0].length - a[0].length);

/** Better names, by output key, where the key's own words read badly. Our own words. */
const LABELS: Record<string, string> = {
  // arrest-load
  peak_force_top_kn: "Peak force at the top of the drop",
  peak_force_foot_kn: "Peak force at the foot of the drop",
  falling_mass_top_kg: "Falling mass at the top of the drop",
  falling_mass_foot_kg: "Falling mass at the foot of the drop",
  governing_position: "Where the force is greatest",
  line_ea_kn: "Line stretch stiffness (EA)",
  static_force_kn: "Weight of the falling mass",
  dynamic_factor: "Peak force over weight",
  line_stretch_m: "Line stretch",
  absorber_deployment_needed_m: "Absorber pay-out needed",
  total_drop_m: "Total fall before the stop",
  anchor_factor: "Safety factor left on the anchor",
  line_factor: "Safety factor left on the line",
  allowed_force_kn: "Highest force allowed",
  max_slack_m: "Most slack allowed",
  // wind-at-height
  gust_from_mean_ms: "Gust worked out from the mean wind",
  measured_gust_at_height_ms: "Measured gust carried to height",
  peak_velocity_pressure_pa: "Peak wind pressure",
  beaufort: "Beaufort number",
  force_n: "Force",
  profile_ratio: "Wind at height over wind where measured",
  z0_m: "Roughness length z0",
  zmin_m: "Lowest height the profile uses (z min)",
  terrain_factor_kr: "Terrain factor kr",
  alpha: "Power-law exponent",
  // water-line
  static_kpa: "Pressure at the foot, standing",
  flowing_kpa: "Pressure at the foot, flowing",
  friction_loss_kpa: "Friction loss",
  reynolds: "Reynolds number",
  flow_regime: "Flow",
  velocity_ms: "Water speed in the hose",
  max_drop_m: "Tallest drop the hose's rating allows",
  water_in_hose_kg: "Water in the hose",
  // suspended-mass
  water_kg: "Water in the hose",
  hose_kg: "Hose",
  line_kg: "Line",
  total_kg: "Total hanging from the tether",
  tether_wll_kg: "Tether's working load limit",
  limit_kg: "Limit",
  margin_kg: "Left under the limit",
  // water-use
  litres_per_hour_l_per_h: "Water used per hour",
  hours_h: "Hours of cleaning",
  litres_l: "Water needed",
  supply_hours_h: "Hours the supply lasts",
  // vacuum-decay
  time_to_limit_s: "Time the grip holds, as relied on",
  predicted_time_to_limit_s: "Time the grip holds, as projected",
  extrapolation_cap_s: "Longest projection allowed",
  fit: "Fit relied on",
  linear_r2: "R² of the straight-line fit",
  exponential_r2: "R² of the exponential fit",
  linear_time_to_limit_s: "Time to the limit, straight-line fit",
  exponential_time_to_limit_s: "Time to the limit, exponential fit",
  recent_time_to_limit_s: "Time to the limit, last interval",
  leak_rate_kpa_per_min: "Leak rate",
  leak_rate_mbar_l_per_s: "Leak rate",
  linear_intercept_kpa: "Straight-line fit at the start",
  linear_slope_kpa_per_s: "Straight-line fit slope",
  exponential_v0_kpa: "Exponential fit at the start",
  exponential_tau_s: "Exponential fit time constant",
  lowest_sample_kpa: "Lowest reading",
  spread_kpa: "Spread of the readings",
  start_offset_kpa: "First reading less the working vacuum",
  readings: "Readings taken",
  // suction-hold
  effective_area_m2: "Sealed area of the cups",
  net_clamp_force_n: "Clamp force less the wind's pull",
  shear_capacity_n: "Grip along the wall",
  shear_demand_n: "Load along the wall",
  outward_limit_n: "Outward pull the grip can take",
  min_vacuum_kpa: "Least vacuum that holds",
  stop_work_pressure_pa: "Wind pressure at the stop-work gust",
  pressure_used_pa: "Wind pressure the hold is checked at",
  wind_governing: "Wind the hold is checked at",
};

/** The unit a key's suffix names, and the key without it. */
export function unitOf(key: string): { unit: string; stem: string } {
  for (const [suffix, unit] of UNITS) {
    if (key.length > suffix.length && key.endsWith(suffix)) return { unit, stem: key.slice(0, -suffix.length) };
  }
  return { unit: "", stem: key };
}

/** The quantity's name: from the table, else the key less its unit, first letter capitalised. */
export function labelOf(key: string): string {
  const named = LABELS[key];
  if (named) return named;
  const words = unitOf(key).stem.replace(/_/g, " ").trim();
  return words.charAt(0).toUpperCase() + words.slice(1);
}

export interface Quantity {
  key: string;
  label: string;
  value: string;
  unit: string;
  /** "Speed at height: 8.3 m/s" */
  text: string;
}

/** One output as a line, or null when it has no value (null is never shown). */
function quantity(key: string, value: unknown): Quantity | null {
  if (value === null || value === undefined) return null;
  let shown: string;
  let unit = "";
  if (typeof value === "number") {
    shown = num(value, 3);
    unit = unitOf(key).unit;
  } else if (typeof value === "boolean") {
    shown = value ? "yes" : "no";
  } else {
    shown = String(value);
  }
  const label = labelOf(key);
  return { key, label, value: shown, unit, text: `${label}: ${shown}${unit ? ` ${unit}` : ""}` };
}

/** Every output with a value, in the calculation's order. */
export function quantityLines(outputs: Record<string, unknown>): Quantity[] {
  return Object.entries(outputs)
    .map(([key, value]) => quantity(key, value))
    .filter((q): q is Quantity => q !== null);
}

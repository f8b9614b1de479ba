/** A calculation's outputs as a person reads them: named quantities with their units. */
import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import { run } from "../src/calc";
import { labelOf, quantityLines, unitOf } from "../src/quantities";

describe("unitOf", () => {
  it("reads the unit from the key's suffix, the longest suffix first", () => {
    const cases: [string, string, string][] = [
      ["speed_at_height_ms", "m/s", "speed_at_height"],
      ["peak_force_kn", "kN", "peak_force"],
      ["static_kpa", "kPa", "static"],
      ["leak_rate_kpa_per_min", "kPa/min", "leak_rate"],
      ["linear_slope_kpa_per_s", "kPa/s", "linear_slope"],
      ["max_drop_m", "m", "max_drop"],
      ["effective_area_m2", "m²", "effective_area"],
      ["total_kg", "kg", "total"],
      ["time_to_limit_s", "s", "time_to_limit"],
      ["force_n", "N", "force"],
      ["peak_velocity_pressure_pa", "Pa", "peak_velocity_pressure"],
      ["water_viscosity_pa_s", "Pa·s", "water_viscosity"],
      ["litres_l", "L", "litres"],
      ["hours_h", "h", "hours"],
      ["litres_per_hour_l_per_h", "L/h", "litres_per_hour"],
      ["leak_rate_mbar_l_per_s", "mbar·L/s", "leak_rate"],
      ["water_density_kgm3", "kg/m³", "water_density"],
      ["line_stiffness_kn_per_m", "kN/m", "line_stiffness"],
      ["hose_kg_per_m", "kg/m", "hose"],
      ["turbulence_intensity", "", "turbulence_intensity"],
      ["linear_r2", "", "linear_r2"],
      ["line_ea_kn", "kN", "line_ea"],
    ];
    for (const [key, unit, stem] of cases) expect(unitOf(key), key).toEqual({ unit, stem });
  });
});

describe("labelOf", () => {
  it("makes a label of the rest of the key, first letter capitalised", () => {
    expect(labelOf("speed_at_height_ms")).toBe("Speed at height");
    expect(labelOf("force_n")).toBe("Force");
    expect(labelOf("turbulence_intensity")).toBe("Turbulence intensity");
    expect(labelOf("friction_loss_kpa")).toBe("Friction loss");
  });
  it("uses a better label where the plain one reads badly", () => {
    expect(labelOf("peak_force_top_kn")).toBe("Peak force at the top of the drop");
    expect(labelOf("peak_force_foot_kn")).toBe("Peak force at the foot of the drop");
    expect(labelOf("linear_r2")).toBe("R² of the straight-line fit");
    expect(labelOf("reynolds")).toBe("Reynolds number");
  });
});

describe("quantityLines", () => {
  it("names each quantity with its unit, leaves out nulls and shows text as text", () => {
    const lines = quantityLines({
      speed_at_height_ms: 8.2968,
      force_n: 24.650089706286145,
      peak_force_top_kn: 10.0921,
      measured_gust_at_height_ms: null,
      governing_position: "top of the drop",
      beaufort: 3,
      alpha: null,
    });
    expect(lines.map((l) => l.text)).toEqual([
      "Speed at height: 8.3 m/s",
      "Force: 24.7 N",
      "Peak force at the top of the drop: 10.1 kN",
      "Where the force is greatest: top of the drop",
      "Beaufort number: 3",
    ]);
    expect(lines[0]).toEqual({ key: "speed_at_height_ms", label: "Speed at height", value: "8.3", unit: "m/s", text: "Speed at height: 8.3 m/s" });
  });

  it("reads every output of every calculation without a null or an underscore", () => {
    const vectors = (JSON.parse(readFileSync(new URL("../../fixtures/calc_vectors.json", import.meta.url), "utf8")) as {
      vectors: { calc: string; inputs: Record<string, unknown> }[];
    }).vectors;
    expect(vectors.length).toBeGreaterThan(10);
    for (const vector of vectors) {
      const result = run(vector.calc, vector.inputs);
      const lines = quantityLines(result.outputs);
      const shown = Object.values(result.outputs).filter((v) => v !== null).length;
      expect(lines.length).toBe(shown);
      for (const { text } of lines) {
        expect(text, vector.calc).not.toMatch(/\bnull\b|_|undefined|NaN/);
        expect(text, vector.calc).toMatch(/^[A-Z][^:]*: \S/);
      }
    }
  });
});

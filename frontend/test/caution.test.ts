/**
 * The caution band on the phone: only an item that names a band (`caution_below`) shows a
 * caution when it passes close to its limit; margins round toward their verdict; a failed
 * calculation says why in its own words.
 */
import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import { run } from "../src/calc";
import { emptyDraft, evaluateDraft, nearLimit, wholePct, type Context } from "../src/sheet";
import type { ChecklistItem } from "../src/types";
import { VerdictBadge, verdictSign } from "../src/ui/signs";

const checklist = (key: string) =>
  (JSON.parse(readFileSync(new URL(`../../fixtures/checklists/${key}.json`, import.meta.url), "utf8")) as {
    items: ChecklistItem[];
  }).items;

const profile = (
  JSON.parse(readFileSync(new URL("../../fixtures/profiles/generic.json", import.meta.url), "utf8")) as {
    thresholds: Record<string, { value: number; unit: string; source: string }>;
  }
).thresholds;
const REASON = profile.wind_caution_band!.source;

const context: Context = { profile: { ...profile }, drop: { height_m: 60, terrain: "III" } };

describe("wholePct", () => {
  it("rounds a margin toward its verdict, as the server's whole_pct does", () => {
    expect(wholePct(-0.004, false)).toBe("-1 %");
    expect(wholePct(0.004, true)).toBe("+0 %");
    expect(wholePct(0.129, true)).toBe("+12 %");
    expect(wholePct(-0.129, false)).toBe("-13 %");
    expect(wholePct(-0.5, false)).toBe("-50 %");
    expect(wholePct(0, false)).toBe("-1 %");
    expect(wholePct(-0.002, true)).toBe("+0 %");
    expect(wholePct(Infinity, true)).toBe("infinite");
  });
});

describe("the verdict sign", () => {
  it("is a plain Pass for an item with no band, however small its margin", () => {
    expect(verdictSign("pass", 0.05, null)).toEqual({ kind: "safe", word: "Pass" });
    expect(verdictSign("pass", 25 / 22.2 - 1, null)).toEqual({ kind: "safe", word: "Pass" });
  });

  it("is a caution only when the margin is under the item's band", () => {
    expect(verdictSign("pass", 0.1, 0.2)).toEqual({ kind: "caution", word: "Pass, within 20 % of the limit" });
    expect(verdictSign("pass", 0.2, 0.2)).toEqual({ kind: "safe", word: "Pass" });
    expect(verdictSign("pass", 0.35, 0.2)).toEqual({ kind: "safe", word: "Pass" });
    expect(verdictSign("pass", null, 0.2)).toEqual({ kind: "safe", word: "Pass" });
    expect(verdictSign("pass", 0.01, 0.125)).toEqual({ kind: "caution", word: "Pass, within 12.5 % of the limit" });
    expect(verdictSign("fail", -0.1, 0.2)).toEqual({ kind: "held", word: "Fail" });
  });

  it("is what the badge shows", () => {
    const badge = VerdictBadge({ verdict: "pass", margin: 0.1, band: 0.2 });
    expect(badge.props).toMatchObject({ kind: "caution", word: "Pass, within 20 % of the limit" });
    expect(VerdictBadge({ verdict: "pass", margin: 0.13, band: null }).props).toMatchObject({ kind: "safe", word: "Pass" });
  });

  it("nearLimit agrees", () => {
    expect(nearLimit("pass", 0.1, 0.2)).toBe(true);
    expect(nearLimit("pass", 0.1, null)).toBe(false);
    expect(nearLimit("fail", -0.1, 0.2)).toBe(false);
  });
});

describe("an anchor rated a little over its minimum", () => {
  it("shows a plain Pass: its limit already holds the standard's factor", () => {
    const items = checklist("anchor-pre-use");
    const draft = emptyDraft();
    draft.readings = { tag_capacity: "25" };
    const view = evaluateDraft(items, draft, context).find((v) => v.item.key === "tag_capacity")!;
    expect(view.verdict).toBe("pass");
    expect(view.margin).toBeCloseTo(25 / 22.2 - 1, 12); // 12.6 %, under 20 %
    expect(view.band).toBeNull();
    expect(verdictSign(view.verdict, view.margin, view.band)).toEqual({ kind: "safe", word: "Pass" });
  });
});

describe("the forecast wind carried to height", () => {
  const items = checklist("weather").filter((i) => ["forecast_10m", "forecast_at_height"].includes(i.key));
  const inputs = (speed: number) => ({
    speed_ms: speed, measured_at_m: 10, working_height_m: 60, terrain: "III", method: "log", limit_ms: 14,
  });
  const viewAt = (speed: number) => {
    const draft = emptyDraft();
    draft.readings = { forecast_10m: String(speed) };
    return evaluateDraft(items, draft, context).find((v) => v.item.key === "forecast_at_height")!;
  };
  const speeds = Array.from({ length: 20000 }, (_, n) => 1 + n / 1000);

  it("resolves its band and its reason from the profile", () => {
    const view = viewAt(4);
    expect(view.verdict).toBe("pass");
    expect(view.band).toBe(0.2);
    expect(view.bandReason).toBe(REASON);
    expect(verdictSign(view.verdict, view.margin, view.band)).toEqual({ kind: "safe", word: "Pass" });
  });

  it("shows a caution when it passes within the band", () => {
    const speed = speeds.find((s) => {
      const m = run("wind-at-height", inputs(s)).margin;
      return m !== null && m > 0.05 && m < 0.15;
    })!;
    const view = viewAt(speed);
    expect(view.verdict).toBe("pass");
    expect(view.margin).toBeGreaterThan(0.05);
    expect(view.margin).toBeLessThan(0.15);
    expect(verdictSign(view.verdict, view.margin, view.band)).toEqual({ kind: "caution", word: "Pass, within 20 % of the limit" });
  });

  it("ignores a band the phone cannot find", () => {
    const { wind_caution_band: _band, ...rest } = profile;
    const draft = emptyDraft();
    draft.readings = { forecast_10m: "9" };
    const view = evaluateDraft(items, draft, { ...context, profile: rest }).find((v) => v.item.key === "forecast_at_height")!;
    expect(view.band).toBeNull();
    expect(view.bandReason).toBe("");
  });

  it("fails in the calculation's own words", () => {
    const view = viewAt(12);
    expect(view.verdict).toBe("fail");
    expect(view.calc!.reason).toMatch(/^Gusts at working height reach about [\d.]+ m\/s \(from .+\); the limit is 14 m\/s\.$/);
    expect(view.message).toBe(view.calc!.reason);
  });
});

describe("a failed calculation without a reason", () => {
  const items: ChecklistItem[] = [
    { key: "area", kind: "reading", label: "Facade area", reason: "Measured.", blocking: false, unit: "m²" },
    {
      key: "water", kind: "calc", label: "Water for the day", reason: "Within the supply.", blocking: true, calc: "water-use",
      inputs: { area_m2: { reading: "area" }, litres_per_m2: { value: 1 }, rate_m2_per_h: { value: 100 }, supply_l: { value: 100 } },
    },
  ];
  const waterAt = (m2: string) => {
    const draft = emptyDraft();
    draft.readings = { area: m2 };
    return evaluateDraft(items, draft, {}).find((v) => v.item.key === "water")!;
  };

  it("words a failing margin just under nought as -1 %, never +0 %", () => {
    const view = waterAt("100.3"); // margin 100 / 100.3 - 1 = -0.3 %
    expect(view.verdict).toBe("fail");
    expect(view.margin).toBeCloseTo(-0.00299, 5);
    expect(view.calc!.reason).toBe("");
    expect(view.message).toBe("Fails its supply check (margin -1 %).");
  });

  it("words a larger failing margin rounded down", () => {
    expect(waterAt("125").message).toBe("Fails its supply check (margin -20 %).");
  });
});

describe("a failed calculation with a reason", () => {
  it("says the reason, as the server does", () => {
    const items = checklist("vacuum-hold");
    const draft = emptyDraft();
    draft.ticks = { cup_lips: "pass", release_valves: "pass", low_vacuum_warning: "pass" };
    draft.readings = { working_vacuum: "62", roof_wind: "5.5", low_vacuum_alarm: "45", rescue_reach: "240" };
    draft.series = { decay_series: [[0, 61], [30, 52], [60, 44], [90, 37.5], [120, 31], [150, 25.5], [180, 20.5]] };
    const robot = { mass_kg: 58, cup_diameter_m: 0.2, cups_engaged: 4, friction: 0.6, projected_area_m2: 0.45, drag_coefficient: 1.2, max_wind_ms: 15, water_on_board_kg: 3.5, cup_area_ratio: 0.85, cup_rows: 2, row_spacing_m: 0.5, com_offset_m: 0.15, brush_force_n: 30, brush_push_n: 20, side_area_m2: 0.2 };
    const decay = evaluateDraft(items, draft, { ...context, robot, hose: { od_mm: 18 }, drop: { length_m: 146, height_m: 150, terrain: "IV", corner_distance_m: 2, building_depth_m: 24 } })
      .find((v) => v.item.key === "decay_test")!;
    expect(decay.verdict).toBe("fail");
    expect(decay.calc!.reason).toBe("The vacuum fell to 20.5 kPa during the test, below the 23.25 kPa that holds the robot.");
    // 23.25 kPa: the least vacuum at the robot's 15 m/s stop-work gust, above the 5.5 m/s reading.
    expect(decay.message).toBe(decay.calc!.reason);
  });
});

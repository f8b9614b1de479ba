/** The phone's own reading of a sheet: limits, local verdicts, order, entries. */
import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import {
  committedDraft,
  describeLimits,
  describeSchedule,
  dropPlace,
  emptyDraft,
  evaluateDraft,
  evaluateForDrops,
  ordered,
  parseDecimal,
  ambiguousGrouping,
  readingLate,
  sampleTime,
  scheduleProblems,
  seriesSchedule,
  stillNeeded,
  toEntries,
  type Context,
  type Schedule,
} from "../src/sheet";
import type { ChecklistItem } from "../src/types";

const checklist = (key: string) =>
  (JSON.parse(readFileSync(new URL(`../../fixtures/checklists/${key}.json`, import.meta.url), "utf8")) as {
    items: ChecklistItem[];
  }).items;

// The demo robot RB-1 and the generic profile's numbers as the server's sheet context holds them.
const context: Context = {
  profile: {
    min_anchor_capacity_kn: { value: 12, unit: "kN" },
    vacuum_safety_factor: { value: 2 },
    vacuum_required_hold_s: { value: 300 },
    decay_interval_s: { value: 30 },
    decay_interval_tolerance_s: { value: 10 },
    decay_min_duration_s: { value: 180 },
    decay_max_extrapolation: { value: 2 },
    decay_min_r2: { value: 0.8 },
    decay_start_tolerance_kpa: { value: 2, unit: "kPa" },
    decay_gauge_resolution_kpa: { value: 0.5, unit: "kPa" },
    gust_factor: { value: 1.5 },
  },
  robot: { mass_kg: 58, cup_diameter_m: 0.2, cups_engaged: 4, friction: 0.6, projected_area_m2: 0.45, drag_coefficient: 1.2, max_wind_ms: 15, water_on_board_kg: 3.5, cup_area_ratio: 0.85, cup_rows: 2, row_spacing_m: 0.5, com_offset_m: 0.15, brush_force_n: 30, brush_push_n: 20, side_area_m2: 0.2 },
  drop: { length_m: 146, height_m: 150, terrain: "IV", corner_distance_m: 2, building_depth_m: 24 },
  hose: { id_mm: 12, od_mm: 18 },
};

describe("parseDecimal", () => {
  it("reads a comma or a point as the decimal mark", () => {
    expect(parseDecimal("12,5")).toBe(12.5);
    expect(parseDecimal(" 62 ")).toBe(62);
    expect(parseDecimal("-0.5")).toBe(-0.5);
  });
  it("asks again for a figure whose separator may be a thousands separator", () => {
    // 2,600 kPa was read as 2.6 and passed a hose rating of at most 2500 kPa.
    for (const text of ["2,600", "1,320", "-12,500"]) expect(parseDecimal(text)).toBeNull();
    expect(ambiguousGrouping("2,600")).toBe("2,600: 2600 or 2.6? Type the figure without a thousands separator (2600) or with fewer decimals.");
    expect(ambiguousGrouping("1,000")).toContain("1000 or 1.0?");
    expect(parseDecimal("2.600")).toBe(2.6);
    // A leading zero, fewer or more than three decimals, or no separator: no doubt.
    expect(parseDecimal("0,125")).toBe(0.125);
    expect(parseDecimal("2,60")).toBe(2.6);
    expect(parseDecimal("2,6000")).toBe(2.6);
    expect(parseDecimal("2600")).toBe(2600);
    expect(ambiguousGrouping("25,0")).toBeNull();
  });

  it("refuses what is not a number", () => {
    for (const text of ["", "abc", "1.2.3", "12kN", "Infinity"]) expect(parseDecimal(text)).toBeNull();
  });
});

describe("anchor sheet", () => {
  const items = checklist("anchor-pre-use");

  it("judges a subject on two drops against the worse and names that drop", () => {
    // The same reading against two contexts that differ only in what the drop brings: the
    // worse result governs and says which drop it came from; an item alike on both says none.
    const draft = emptyDraft();
    draft.ticks = { tag_matches_register: "pass", visual_condition: "pass", fixings_tight: "pass", membrane_sound: "pass" };
    draft.readings = { tag_capacity: "22" };
    const on = (kn: number): Context => ({ ...context, anchor: { rated_capacity_kn: kn } });
    const views = evaluateForDrops(items, draft, [
      { label: "East 1", context: on(22) },
      { label: "East 2", context: on(30) },
    ]);
    const agrees = views.find((v) => v.item.key === "tag_agrees")!;
    expect(agrees.verdict).toBe("fail");
    expect(agrees.message).toMatch(/^Drop East 2: The tag reads 22 kN but the anchor's certificate in the register rates it 30 kN/);
    const capacity = views.find((v) => v.item.key === "tag_capacity")!;
    expect(capacity.verdict).toBe("pass");
    expect(capacity.message).toBe("");
  });

  it("describes a profile limit with its number when known, else by its source", () => {
    const capacity = items.find((i) => i.key === "tag_capacity")!;
    expect(describeLimits(capacity, context)).toEqual([
      "Limit: at least 12 kN (from the site's profile)",
      // A tag read in lbf, kgf or daN and typed as kN is caught by this bound.
      "Limit: at most 1000 kN (from a fixed value)",
    ]);
    expect(describeLimits(capacity, {})[0]).toMatch(/at least the value in the site's profile/);
  });

  it("fails a reading under the limit and puts failed blocking items first", () => {
    const draft = emptyDraft();
    draft.ticks = { tag_matches_register: "pass", visual_condition: "fail", fixings_tight: "pass", membrane_sound: "pass" };
    draft.readings = { tag_capacity: "10" };
    const views = evaluateDraft(items, draft, context);
    const capacity = views.find((v) => v.item.key === "tag_capacity")!;
    expect(capacity.verdict).toBe("fail");
    expect(capacity.message).toBe("10 kN is below the minimum of 12 kN.");
    const { failed, rest } = ordered(views);
    expect(failed.map((v) => v.item.key)).toEqual(["tag_capacity", "visual_condition"]);
    expect(rest[0]!.item.key).toBe("tag_matches_register");
    expect(stillNeeded(views)).toEqual([]);
  });

  it("asks again for a reading below zero where none can be", () => {
    // A gust of -20 m/s passed a maximum; the phone asks for the sign to be checked and the
    // server refuses it by name.
    const weather = checklist("weather");
    const draft = emptyDraft();
    draft.readings = { roof_gust: "-20", roof_wind: "8" };
    const views = evaluateDraft(weather, draft, { ...context, profile: { ...context.profile, max_gust_ms: { value: 18 }, max_wind_ms: { value: 14 } } });
    const gust = views.find((v) => v.item.key === "roof_gust")!;
    expect(gust.verdict).toBe("missing");
    expect(gust.message).toBe("A reading in m/s is never below zero: check the sign.");
    expect(views.find((v) => v.item.key === "roof_wind")!.verdict).toBe("pass");
  });

  it("says which unit to type a reading in when its unit was typed with it", () => {
    // Typed from a tag in pounds-force, "5000 lbf" is no number; the words say the field takes
    // the figure alone, in kN, so the operator converts rather than drops the unit.
    const draft = emptyDraft();
    draft.readings = { tag_capacity: "5000 lbf" };
    const capacity = evaluateDraft(items, draft, context).find((v) => v.item.key === "tag_capacity")!;
    expect(capacity.verdict).toBe("missing");
    expect(capacity.message).toBe("Not a number: type the figure alone, in kN.");
  });

  it("lists what still needs an answer and builds entries in the server's format", () => {
    const draft = emptyDraft();
    draft.ticks = { tag_matches_register: "pass" };
    draft.readings = { tag_capacity: "25,0" };
    draft.notes = { anchor_remarks: "  " };
    const views = evaluateDraft(items, draft, context);
    expect(stillNeeded(views).map((v) => v.item.key)).toEqual(["visual_condition", "fixings_tight", "membrane_sound"]);
    expect(toEntries(items, draft)).toEqual({
      tag_matches_register: { value: "pass" },
      tag_capacity: { value: 25, unit: "kN" },
    });
  });
});

describe("vacuum hold sheet", () => {
  const items = checklist("vacuum-hold");
  const draft = emptyDraft();
  draft.ticks = { cup_lips: "pass", release_valves: "pass", low_vacuum_warning: "pass" };
  draft.readings = { working_vacuum: "62", roof_wind: "5.5", low_vacuum_alarm: "45", rescue_reach: "240" };

  it("runs the chained calculations on the phone", () => {
    draft.series = { decay_series: [[0, 62], [30, 61.6], [60, 61.1], [90, 60.7], [120, 60.3], [150, 59.9], [180, 59.5]] };
    const views = evaluateDraft(items, draft, context);
    const byKey = Object.fromEntries(views.map((v) => [v.item.key, v]));
    expect(byKey.wind_load!.verdict).toBe("pass");
    expect(byKey.hold_margin!.verdict).toBe("pass");
    expect(byKey.decay_test!.verdict).toBe("pass");
    expect(byKey.decay_test!.calc!.steps.length).toBeGreaterThan(3);
  });

  it("fails a fast decay and waits for a series still too short", () => {
    draft.series = { decay_series: [[0, 61], [30, 52], [60, 44], [90, 37.5], [120, 31], [150, 25.5], [180, 20.5]] };
    const decay = evaluateDraft(items, draft, context).find((v) => v.item.key === "decay_test")!;
    expect(decay.verdict).toBe("fail");
    draft.series = { decay_series: [[0, 61], [30, 52]] };
    const short = evaluateDraft(items, draft, context);
    expect(short.find((v) => v.item.key === "decay_series")!.verdict).toBe("missing");
    expect(short.find((v) => v.item.key === "decay_test")!.verdict).toBe("missing");
  });

  it("checks the hold at the robot's stop-work gust, however calm the reading typed", () => {
    // 15 m/s at working height: qp = ½ × 1.225 × 15² = 137.8 Pa (EN 1991-1-4 4.5's ½ρv², hand).
    // At 22 kPa the robot holds in still air (least about 20.1 kPa) but not at that gust (23.2 kPa).
    const calm = { ...draft, readings: { ...draft.readings, working_vacuum: "22", roof_wind: "0" } };
    const hold = evaluateDraft(items, calm, context).find((v) => v.item.key === "hold_margin")!;
    expect(hold.verdict).toBe("fail");
    expect(hold.calc!.outputs.wind_governing).toBe("stop-work gust");
    expect(hold.calc!.outputs.pressure_used_pa).toBeCloseTo(0.5 * 1.225 * 15 ** 2, 10);
    expect(hold.calc!.steps[0]).toMatch(/the stop-work gust governs, since work goes on until it$/);
  });

  it("refuses a decay test that did not start at the working vacuum", () => {
    const off = {
      ...draft,
      readings: { ...draft.readings, working_vacuum: "40", low_vacuum_alarm: "30" },
      series: { decay_series: [0, 30, 60, 90, 120, 150, 180].map((t) => [t, 95 - 0.083 * t] as [number, number]) },
    };
    const decay = evaluateDraft(items, off, context).find((v) => v.item.key === "decay_test")!;
    expect(decay.verdict).toBe("fail");
    expect(decay.calc!.governing).toBe("start");
    expect(decay.message).toBe(
      "The test started at 95 kPa but the robot works at 40 kPa: repeat it from the working vacuum (its first reading within 2 kPa of it).",
    );
  });

  it("passes a leak-tight robot whose readings stay within the gauge's resolution", () => {
    // R² 0.37 of the gauge's 0.5 kPa steps (resolution from the profile, common practice, no
    // source) failed as "inconclusive"; no leak shows, so it is relied on up to 2 × 180 s.
    const quiet = { ...draft, series: { decay_series: [62, 62, 62, 62, 62, 62, 61.5].map((v, i) => [30 * i, v] as [number, number]) } };
    const decay = evaluateDraft(items, quiet, context).find((v) => v.item.key === "decay_test")!;
    expect(decay.verdict).toBe("pass");
    expect(decay.calc!.outputs.fit).toBe("gauge resolution");
    expect(decay.calc!.outputs.time_to_limit_s).toBeCloseTo(360, 9);
  });

  it("leaves a calculation to the server when a rating is unknown on the phone", () => {
    const views = evaluateDraft(items, draft, { ...context, drop: { height_m: 150 } });
    expect(views.find((v) => v.item.key === "wind_load")!.verdict).toBe("unknown");
  });
});

describe("a calculation the phone cannot run", () => {
  it("hands the calculations built on it to the server too", () => {
    const items = checklist("vacuum-hold");
    const draft = emptyDraft();
    draft.readings = { working_vacuum: "62", roof_wind: "5.5", low_vacuum_alarm: "45", rescue_reach: "240" };
    const views = evaluateDraft(items, draft, { ...context, drop: { height_m: 150 } });
    expect(views.find((v) => v.item.key === "hold_margin")!.verdict).toBe("unknown");
  });
});

describe("a reading being typed", () => {
  const items = checklist("anchor-pre-use");
  const ticks = { tag_matches_register: "pass", visual_condition: "pass", fixings_tight: "pass", membrane_sound: "pass" } as const;
  const judge = (typed: string, steady: Parameters<typeof committedDraft>[1]) => {
    const draft = { ...emptyDraft(), ticks: { ...ticks }, readings: { tag_capacity: typed } };
    const views = evaluateDraft(items, committedDraft(draft, steady), context);
    const { failed, rest } = ordered(views, steady);
    const view = views.find((v) => v.item.key === "tag_capacity")!;
    return { verdict: view.verdict, message: view.message, inStopWork: failed.includes(view), inRest: rest.includes(view) };
  };

  it("is not judged on a half-typed number while its field has focus", () => {
    // "2" of "25" is below the 12 kN minimum: judged as it stands it would fail and move.
    expect(judge("2", {})).toMatchObject({ verdict: "fail", inStopWork: true });
    expect(judge("2", { tag_capacity: { failed: false, text: "" } })).toEqual({
      verdict: "missing", message: "", inStopWork: false, inRest: true,
    });
    expect(judge("25", { tag_capacity: { failed: false, text: "" } }).verdict).toBe("missing");
  });

  it("is judged on what was committed, and keeps its place until the field is left", () => {
    const held = judge("10", { tag_capacity: { failed: false, text: "10" } });
    expect(held).toEqual({ verdict: "fail", message: "10 kN is below the minimum of 12 kN.", inStopWork: false, inRest: true });
    expect(judge("10", {})).toMatchObject({ verdict: "fail", inStopWork: true, inRest: false });
    // Corrected inside the stop-work block: it stays there until the field is left.
    expect(judge("30", { tag_capacity: { failed: true, text: "30" } })).toMatchObject({ verdict: "pass", inStopWork: true });
    expect(judge("30", {})).toMatchObject({ verdict: "pass", inStopWork: false, inRest: true });
  });

  it("feeds the calculations only what was committed, and the draft keeps every key pressed", () => {
    const vacuum = checklist("vacuum-hold");
    const draft = emptyDraft();
    draft.readings = { working_vacuum: "62", roof_wind: "5" };
    const steady = { roof_wind: { failed: false, text: "" } };
    const judged = committedDraft(draft, steady);
    expect(judged.readings).toEqual({ working_vacuum: "62", roof_wind: "" });
    expect(draft.readings.roof_wind).toBe("5");
    expect(committedDraft(draft, {})).toBe(draft);
    expect(committedDraft(draft, { decay_series: { failed: false } })).toBe(draft);
    const views = evaluateDraft(vacuum, judged, context);
    expect(views.find((v) => v.item.key === "wind_load")!.verdict).toBe("missing");
  });

  it("keeps a steady item that is not a reading in its place too", () => {
    const draft = { ...emptyDraft(), ticks: { ...ticks }, readings: { tag_capacity: "25" } };
    const views = evaluateDraft(items, draft, context);
    expect(ordered(views, { visual_condition: { failed: true } }).failed.map((v) => v.item.key)).toEqual(["visual_condition"]);
  });
});

describe("a decay test's schedule", () => {
  const series = checklist("vacuum-hold").find((i) => i.key === "decay_series")!;
  const schedule = (over: Partial<Schedule> = {}): Schedule => ({
    interval_s: 30, tolerance_s: 10, min_duration_s: 180, min_samples: 3, readings: 7, legacy: false, ...over,
  });

  it("resolves its numbers from the site's profile", () => {
    expect(seriesSchedule(series, context)).toEqual({ ok: true, schedule: schedule() });
    expect(describeSchedule(schedule())).toBe("At least 7 readings over 180 s, one every 30 s (± 10 s).");
  });

  it("converts a profile threshold given in minutes", () => {
    const minutes = { ...context, profile: { ...context.profile, decay_min_duration_s: { value: 2, unit: "min" } } };
    const result = seriesSchedule(series, minutes);
    expect(result).toEqual({ ok: true, schedule: schedule({ min_duration_s: 120, readings: 5 }) });
  });

  it("reads an older version's bare interval as no tolerance over (min_samples - 1) intervals", () => {
    const old = { ...series, schedule: undefined, interval_s: 20 };
    expect(seriesSchedule(old, {})).toEqual({
      ok: true,
      schedule: { interval_s: 20, tolerance_s: 0, min_duration_s: 40, min_samples: 3, readings: 3, legacy: true },
    });
    expect(describeSchedule(schedule({ interval_s: 20, readings: 3, legacy: true }))).toBe("At least 3 readings, one every 20 s.");
  });

  it("is unknown, naming the source, when the phone lacks a number", () => {
    const result = seriesSchedule(series, { profile: { decay_interval_s: { value: 30 } } });
    expect(result.ok).toBe(false);
    expect(!result.ok && result.message).toBe(
      "The phone does not know this test's timing (the site's profile: decay interval tolerance s); connect once to fetch it. The server checks the spacing.",
    );
    const noTolerance = { ...series, schedule: { interval_s: { value: 30 }, min_duration_s: { value: 60 } } };
    expect(seriesSchedule(noTolerance, {}).ok).toBe(false);
    const hours = { profile: { ...context.profile, decay_interval_s: { value: 1, unit: "kPa" } } };
    expect(seriesSchedule(series, hours).ok).toBe(false);
    expect(seriesSchedule({ ...series, schedule: { interval_s: { value: 0 }, tolerance_s: { value: 0 }, min_duration_s: { value: 60 } } }, {}).ok).toBe(false);
  });

  it("words the spacing and the shortfall as the server does, counting from the first reading", () => {
    expect(scheduleProblems([5, 35, 65, 95, 125, 155, 185], schedule())).toEqual({ spacing: [], shortfall: [] });
    expect(scheduleProblems([0, 15, 45], schedule())).toEqual({
      spacing: ["two readings were 15 s apart; the test needs one every 30 s (± 10 s)"],
      shortfall: ["3 of at least 7 readings"],
    });
    expect(scheduleProblems([0, 41], schedule()).spacing).toEqual([
      "two readings were 41 s apart; the test needs one every 30 s (± 10 s)",
    ]);
    expect(scheduleProblems([0, 20, 40, 60, 80, 100, 120], schedule())).toEqual({
      spacing: [],
      shortfall: ["the test has run 120 s; it must run at least 180 s"],
    });
    // An older version: only the count, as the server checks it.
    expect(scheduleProblems([0, 1], schedule({ legacy: true }))).toEqual({ spacing: [], shortfall: ["2 of at least 3 readings"] });
    expect(scheduleProblems([0, 1, 2], schedule({ legacy: true }))).toEqual({ spacing: [], shortfall: [] });
  });

  it("fails a rushed series on the phone in words, and waits for one still running", () => {
    const items = checklist("vacuum-hold");
    const view = (samples: number[][], ctx: Context = context) =>
      evaluateDraft(items, { ...emptyDraft(), series: { decay_series: samples } }, ctx).find((v) => v.item.key === "decay_series")!;
    const rushed = view([[0, 62], [10, 61.9], [40, 61.6], [70, 61.3], [100, 61], [130, 60.7], [160, 60.4], [190, 60.1]]);
    expect(rushed.verdict).toBe("fail");
    expect(rushed.message).toBe(
      "The test did not keep its schedule: two readings were 10 s apart; the test needs one every 30 s (± 10 s). Start it again.",
    );
    expect(view([[0, 62], [30, 61.8]])).toMatchObject({ verdict: "missing", message: "2 of at least 7 readings." });
    expect(view([[0, 62], [30, 61.8], [60, 61.5], [90, 61.2], [120, 61], [150, 60.8], [180, 60.5]]).verdict).toBe("recorded");
    expect(view([[0, 62], [30, 61.8], [60, 61.5]], {}).verdict).toBe("unknown");
    expect(view([], {}).verdict).toBe("missing");
  });

  it("says when a reading taken now would leave too long a gap", () => {
    expect(readingLate([], 100, schedule())).toBe(false);
    expect(readingLate([0.4], 40.4, schedule())).toBe(false);
    expect(readingLate([0.4], 40.5, schedule())).toBe(true);
    expect(readingLate([0], 90, schedule({ legacy: true }))).toBe(false);
  });

  it("keeps a sample's time to a tenth of a second", () => {
    expect(sampleTime(11_349.9)).toBe(11.3);
    expect(sampleTime(11_350)).toBe(11.4);
    expect(sampleTime(0)).toBe(0);
  });
});

describe("where a drop hangs on its facade", () => {
  it("measures from the roof plan's nearest edge and its nearer corner", () => {
    const site = { id: 1, name: "S", height_m: 150, profile: "generic", owned: false, roof_outline: [[0, 0], [32, 0], [32, 24], [0, 24]] };
    const place = dropPlace(site, { id: 1, site: 1, label: "R1", x_m: 2, y_m: 0.8, certification: null });
    expect(place).toEqual({ corner_distance_m: 2, building_depth_m: 24 });
  });
  it("takes a drop with no roof plan to stand at a corner, the worst place", () => {
    const site = { id: 1, name: "S", height_m: 40, profile: "generic", owned: false, roof_outline: [] };
    const place = dropPlace(site, { id: 1, site: 1, label: "R1", x_m: 2, y_m: 0.8, certification: null });
    expect(place).toEqual({ corner_distance_m: 0, building_depth_m: 80 });
  });
});

describe("a calculation that refuses an input", () => {
  it("names the reading the operator typed, not the input's key", () => {
    const items: ChecklistItem[] = [
      { key: "rows", kind: "reading", label: "Rows of cups counted", reason: "Counted.", blocking: true, unit: "" },
      {
        key: "hold", kind: "calc", label: "Hold", reason: "Holds.", blocking: true, calc: "suction-hold",
        inputs: {
          vacuum_kpa: { value: 60 }, cup_diameter_m: { value: 0.2 }, effective_area_ratio: { value: 0.85 }, cups: { value: 4 },
          cup_rows: { reading: "rows" }, row_spacing_m: { value: 0.5 }, wet_glass_friction: { value: 0.6 }, mass_kg: { value: 58 },
          com_offset_m: { value: 0.1 }, peak_pressure_pa: { value: 40 }, face_area_m2: { value: 0.45 }, side_area_m2: { value: 0.2 },
          drag_coefficient: { value: 1.2 }, corner_distance_m: { value: 2 }, building_height_m: { value: 150 }, safety_factor: { value: 2 },
        },
      },
    ];
    const draft = emptyDraft();
    draft.readings = { rows: "5" };
    const hold = evaluateDraft(items, draft, {}).find((v) => v.item.key === "hold")!;
    expect(hold.verdict).toBe("fail");
    expect(hold.message).toBe("Cannot compute: the reading \u201cRows of cups counted\u201d must be at most the number of cups (4).");
  });
});

describe("words on the phone", () => {
  const items = checklist("vacuum-hold");
  it("describes a limit from a calculation by what is worked out, not its key", () => {
    const alarm = items.find((i) => i.key === "low_vacuum_alarm")!;
    const labels = Object.fromEntries(items.map((i) => [i.key, i.label]));
    expect(describeLimits(alarm, {}, labels)).toEqual([
      "Limit: at least the least vacuum that holds worked out in \u201cHold of the cups on wet glass, in the wind\u201d, once it is worked out",
    ]);
  });
  it("says a number too large for the phone is too large, not that it is not a number", () => {
    const draft = emptyDraft();
    draft.readings = { working_vacuum: "1e400" };
    const view = evaluateDraft(items, draft, context).find((v) => v.item.key === "working_vacuum")!;
    expect(view.message).toBe("Too large a number.");
  });
});

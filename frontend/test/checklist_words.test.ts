/**
 * The desk's words for checklist items and for the changes between two versions: every source a
 * limit or an input can name reads as words (checklists/schema.py SOURCE_KINDS), every item of
 * the default checklists is described without a brace of JSON, and each kind of change reads as
 * one sentence.
 */
import { readdirSync, readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import { blockingWords, changeLines, itemLines, kindWords, limitWords, sourceWords, subjectWords } from "../src/desk/checklistWords";
import type { ChecklistItem } from "../src/types";

const dir = new URL("../../fixtures/checklists/", import.meta.url);
const checklists = readdirSync(dir)
  .filter((name) => name.endsWith(".json"))
  .map((name) => JSON.parse(readFileSync(new URL(name, dir), "utf8")) as { key: string; applies_to: string; items: ChecklistItem[] });
const labels = new Map(checklists.flatMap((c) => c.items.map((i) => [i.key, i.label] as const)));
const labelOf = (key: string) => labels.get(key);

describe("sources in words", () => {
  it.each([
    [{ value: 25 }, "kg", "25 kg, fixed in the checklist"],
    [{ value: "log" }, "", "“log”, fixed in the checklist"],
    [{ profile: "max_gust_ms" }, "", "the threshold max_gust_ms of the site's jurisdiction profile"],
    [{ equipment: "length_m" }, "m", "the rating length_m of the equipment checked"],
    [{ robot: "mass_kg" }, "", "the rating mass_kg of the drop's robot"],
    [{ tether: "wll_kn" }, "", "the rating wll_kn of the drop's suspension tether"],
    [{ safety_line: "mbs_kn" }, "", "the rating mbs_kn of the drop's safety line"],
    [{ hose: "id_mm" }, "", "the rating id_mm of the drop's water hose"],
    [{ anchor: "rated_capacity_kn" }, "", "the anchor's certificate in force (rated_capacity_kn)"],
    [{ drop: "height_m" }, "", "the drop's height_m"],
    [{ reading: "working_vacuum" }, "", "the answer to “Working vacuum on the gauge”"],
    [{ output: "hold_margin.min_vacuum_kpa" }, "", "the result min_vacuum_kpa of the calculation “Hold of the cups on wet glass, in the wind”"],
  ])("%j reads as words", (source, unit, words) => {
    expect(sourceWords(source, labelOf, unit)).toBe(words);
  });

  it("says so when a source cannot be read, rather than showing it", () => {
    expect(sourceWords({ a: 1, b: 2 })).toBe("an unreadable source");
    expect(sourceWords(null)).toBe("an unreadable source");
  });

  it("names a limit's two ends", () => {
    expect(limitWords({ min: { drop: "height_m" }, max: { equipment: "length_m" } }, labelOf, "m")).toBe(
      "at least the drop's height_m; at most the rating length_m of the equipment checked",
    );
    expect(limitWords(undefined, labelOf)).toBe("no limit");
  });
});

describe("every item of the default checklists", () => {
  const items = checklists.flatMap((c) => c.items.map((item) => [c.key, item.key, item] as const));
  it.each(items)("%s %s is described in words", (_checklist, _key, item) => {
    const lines = itemLines(item, labelOf);
    expect(lines[0]).toBe(kindWords(item));
    expect(lines[1]).toBe(blockingWords(item.blocking));
    for (const line of lines) {
      expect(line).not.toMatch(/[{}[\]]|unreadable|undefined/);
    }
  });

  it("names what each checklist is for", () => {
    for (const c of checklists) expect(subjectWords(c.applies_to)).not.toContain("_");
  });
});

describe("a change in words", () => {
  it("reads blocking, label, unit and limits as sentences", () => {
    const lines = changeLines(
      ["blocking", "label", "limits", "unit"],
      { blocking: false, label: "Remarks", limits: { max: { equipment: "length_m" } }, unit: "m" },
      { blocking: true, label: "Remarks for the next crew", limits: { min: { value: 5 }, max: { tether: "length_m" } }, unit: "ft" },
      labelOf,
      "ft",
    );
    expect(lines).toEqual([
      "Now blocking: a fail puts the job on hold (stop work).",
      "Label: was “Remarks”, now “Remarks for the next crew”.",
      "Highest accepted value: was the rating length_m of the equipment checked, now the rating length_m of the drop's suspension tether.",
      "Lowest accepted value: was none, now 5 ft, fixed in the checklist.",
      "Unit: was m, now ft.",
    ]);
  });

  it("reads a calculation's inputs one by one, and an optional item as optional", () => {
    expect(
      changeLines(
        ["inputs", "required", "blocking"],
        { inputs: { mass_kg: { robot: "mass_kg" }, wind_ms: { profile: "max_gust_ms" } }, required: true, blocking: true },
        { inputs: { mass_kg: { robot: "mass_kg" }, wind_ms: { reading: "roof_wind" } }, required: false, blocking: false },
        labelOf,
      ),
    ).toEqual([
      "Calculation input wind_ms: was the threshold max_gust_ms of the site's jurisdiction profile, now the answer to “Mean wind on the roof anemometer”.",
      "Now optional: may be left empty.",
      "No longer blocking: a fail is recorded, work is not stopped.",
    ]);
  });
});

/**
 * The phone's own reading of a sheet (src/sheet.ts) against the shared verdict vectors in
 * fixtures/verdict_vectors.json, which the server's checklists/verdicts.py runs too. Where the
 * phone says something else on purpose, the vector's `phone` part says what and why.
 */
import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import { emptyDraft, evaluateDraft, localVerdict, nearLimit, ordered, type Context } from "../src/sheet";
import type { ChecklistItem, Draft, TickValue } from "../src/types";

interface Margin {
  value: number;
  rel_tol?: number;
  abs_tol?: number;
}
interface Expected {
  key: string;
  verdict: string;
  margin?: Margin | null;
  message?: string;
  caution?: boolean;
}
interface Outcome {
  verdict: "pass" | "fail";
  blocking_failures: string[];
  items: Expected[];
}
interface Vector {
  name: string;
  source: string;
  items: ChecklistItem[];
  entries: Record<string, { value: unknown; unit?: string }>;
  context: Context;
  expected: Outcome;
  phone?: Omit<Outcome, "items"> & { items: (Expected & { why: string })[] };
}

const file = JSON.parse(
  readFileSync(new URL("../../fixtures/verdict_vectors.json", import.meta.url), "utf8"),
) as { version: number; vectors: Vector[] };

/** A sheet's entries as the phone's form holds them before it turns them into entries. */
function draftOf(items: ChecklistItem[], entries: Vector["entries"]): Draft {
  const draft = emptyDraft();
  for (const item of items) {
    const entry = entries[item.key];
    if (!entry) continue;
    if (entry.unit !== undefined && entry.unit !== (item.unit ?? "")) {
      throw new Error(`${item.key}: the phone enters readings in the item's unit only`);
    }
    const value = entry.value;
    if (item.kind === "tick") draft.ticks[item.key] = value as TickValue;
    if (item.kind === "reading") draft.readings[item.key] = String(value);
    if (item.kind === "series") draft.series[item.key] = value as number[][];
    if (item.kind === "photo") {
      draft.photos[item.key] = (value as string[]).map((uuid) => ({ uuid, blob: new Blob([]), name: `${uuid}.jpg` }));
    }
    if (item.kind === "note") draft.notes[item.key] = value as string;
  }
  return draft;
}

describe("verdict vectors", () => {
  it("has the format this test reads", () => {
    expect(file.version).toBe(1);
    expect(file.vectors.length).toBeGreaterThan(0);
  });

  for (const vector of file.vectors) {
    // Rule and arithmetic for each vector: its `source`, in fixtures/verdict_vectors_reference.py.
    it(vector.name, () => {
      const views = evaluateDraft(vector.items, draftOf(vector.items, vector.entries), vector.context);
      const overrides = new Map((vector.phone?.items ?? []).map((p) => [p.key, p]));
      const outcome = vector.phone ?? vector.expected;
      expect(views.map((v) => v.item.key)).toEqual(vector.expected.items.map((e) => e.key));
      for (const [n, view] of views.entries()) {
        // The phone's own words where it reads an item otherwise; its margin is the server's.
        const server = vector.expected.items[n]!;
        const own = overrides.get(view.item.key);
        const want = own ? { ...server, verdict: own.verdict, message: own.message } : server;
        const where = `${vector.name}: ${view.item.key}`;
        expect(view.verdict, `${where}: ${view.message}`).toBe(want.verdict);
        if (want.margin === null) expect(view.margin, where).toBeNull();
        else if (want.margin !== undefined) {
          const m = want.margin;
          const tolerance = Math.max((m.rel_tol ?? 0) * Math.abs(m.value), m.abs_tol ?? 0);
          expect(view.margin, where).not.toBeNull();
          expect(Math.abs(view.margin! - m.value), `${where}: margin ${view.margin}`).toBeLessThanOrEqual(tolerance);
        }
        if (want.message !== undefined) expect(view.message, where).toBe(want.message);
        if (want.caution !== undefined) expect(nearLimit(view.verdict, view.margin, view.band), where).toBe(want.caution);
      }
      expect(localVerdict(views)).toBe(outcome.verdict);
      expect(ordered(views).failed.map((v) => v.item.key)).toEqual(outcome.blocking_failures);
    });
  }
});

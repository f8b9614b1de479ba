/** Working beyond binary64 fails closed, as on the server: fixtures/calc_out_of_range.json. */
import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import { run } from "../src/calc";

interface Case {
  calc: string;
  why: string;
  inputs: Record<string, unknown>;
  quantity: string;
}

const file = JSON.parse(
  readFileSync(new URL("../../fixtures/calc_out_of_range.json", import.meta.url), "utf8"),
) as { cases: Case[] };

describe("calculations out of range", () => {
  it("has cases", () => {
    expect(file.cases.length).toBeGreaterThan(0);
  });

  for (const c of file.cases) {
    it(`${c.calc}: ${c.why}`, () => {
      const result = run(c.calc, c.inputs);
      expect([result.verdict, result.governing, result.margin]).toEqual(["fail", "out_of_range", null]);
      expect(result.reason).toContain(c.quantity);
      expect(result.steps.at(-2)).toBe(result.reason);
      expect(result.steps.at(-1)).toBe("verdict: fail (governing check out_of_range, margin none)");
      expect(JSON.parse(JSON.stringify(result))).toEqual(result);
    });
  }
});

/** The phone's calculations against the shared vectors in fixtures/calc_vectors.json. */
import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import { CalcInputError, run } from "../src/calc";

interface Expected {
  value: number | string | null;
  rel_tol?: number;
  abs_tol?: number;
}
interface Vector {
  name: string;
  calc: string;
  source: string;
  inputs: Record<string, unknown>;
  expected: { verdict: string; outputs: Record<string, Expected>; governing?: string; margin?: Expected | null };
}
interface Invalid {
  calc: string;
  why?: string;
  inputs: Record<string, unknown>;
  field: string;
}

const file = JSON.parse(
  readFileSync(new URL("../../fixtures/calc_vectors.json", import.meta.url), "utf8"),
) as { version: number; vectors: Vector[]; invalid: Invalid[] };

function close(actual: unknown, expected: Expected, what: string): void {
  if (expected.value === null || typeof expected.value === "string") {
    expect(actual, what).toBe(expected.value);
    return;
  }
  expect(typeof actual, `${what} is a number`).toBe("number");
  const tolerance = Math.max((expected.rel_tol ?? 0) * Math.abs(expected.value), expected.abs_tol ?? 0);
  expect(Math.abs((actual as number) - expected.value), `${what}: ${actual} vs ${expected.value}`).toBeLessThanOrEqual(tolerance);
}

describe("calc vectors", () => {
  it("has the format this test reads", () => {
    expect(file.version).toBe(1);
    expect(file.vectors.length).toBeGreaterThan(0);
  });

  for (const vector of file.vectors) {
    it(`${vector.calc}: ${vector.name}`, () => {
      const result = run(vector.calc, vector.inputs);
      expect(result.verdict).toBe(vector.expected.verdict);
      if (vector.expected.governing !== undefined) expect(result.governing).toBe(vector.expected.governing);
      if (vector.expected.margin === null) expect(result.margin).toBeNull();
      else if (vector.expected.margin !== undefined) close(result.margin, vector.expected.margin, "margin");
      for (const [key, expected] of Object.entries(vector.expected.outputs)) {
        expect(result.outputs, `output ${key}`).toHaveProperty(key);
        close(result.outputs[key], expected, key);
      }
      expect(result.steps.at(-1)).toMatch(/^verdict: /);
    });
  }

  for (const invalid of file.invalid) {
    it(`${invalid.calc} rejects ${invalid.why ?? invalid.field}`, () => {
      let caught: unknown = null;
      try {
        run(invalid.calc, invalid.inputs);
      } catch (error) {
        caught = error;
      }
      expect(caught).toBeInstanceOf(CalcInputError);
      expect((caught as CalcInputError).field).toBe(invalid.field);
    });
  }
});

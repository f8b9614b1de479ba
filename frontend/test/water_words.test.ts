/** What the phone's water-line check says when the supply cannot drive the flow. */
import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import { run } from "../src/calc";

const vectors = JSON.parse(readFileSync(new URL("../../fixtures/calc_vectors.json", import.meta.url), "utf8")) as {
  vectors: { name: string; calc: string; inputs: Record<string, unknown> }[];
};
const tank = vectors.vectors.find((v) => v.name === "a roof tank cannot feed the nozzles at the top of the drop");

describe("water line words", () => {
  it("says no water reaches the nozzles rather than giving a pressure below zero", () => {
    // "The nozzles would get about -47.7 kPa" read as a figure: with no head and no pump at the
    // top, every loss leaves the top below zero, and no water arrives.
    const result = run("water-line", { ...tank!.inputs, top_head_m: 0, supply_kpa: 0 });
    expect(result.outputs.flowing_top_kpa as number).toBeLessThan(0);
    expect(result.governing).toBe("nozzle_pressure");
    expect(result.reason).toMatch(/^No water would reach the nozzles at the top of the drop:/);
    expect(result.reason).not.toContain("-");
  });

  it("gives the pressure while there is one", () => {
    const result = run("water-line", tank!.inputs);
    expect(result.reason).toMatch(/^At the top of the drop the nozzles would get about 11\.1 kPa/);
  });
});

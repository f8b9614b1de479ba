/** The due list's words follow the date: what has run out is not said to run out. */
import { describe, expect, it } from "vitest";
import { whatIsDue } from "../src/desk/Due";

describe("what falls due", () => {
  it("says a lapsed certificate ran out, and one still current runs out", () => {
    expect(whatIsDue({ kind: "anchor_certificate", days_left: -55 })).toBe("Anchor certificate ran out");
    expect(whatIsDue({ kind: "anchor_certificate", days_left: 0 })).toBe("Anchor certificate runs out");
    expect(whatIsDue({ kind: "equipment_inspection", days_left: -3 })).toBe("Periodic inspection of equipment");
  });
});

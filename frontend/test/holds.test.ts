/** What a hold is called and who clears it, in the words the phone shows. */
import { describe, expect, it } from "vitest";
import { holdClearedBy, holdTitle, ownerClears } from "../src/holds";

const requirements = [
  { key: "anchor-pre-use@anchor:3", title: "Roof anchor pre-use check", subject: "anchor R3", anchor: 3 },
  { key: "weather@site", title: "Weather at working height", subject: "site", anchor: null },
  { key: "line-check@equipment:5", title: "Safety line check", subject: "safety line S-1", equipment: 5 },
];

describe("holdTitle", () => {
  it("names a check's hold by its checklist and subject", () => {
    expect(holdTitle(requirements, "weather@site")).toBe("Weather at working height, site");
  });

  it("names an anchor taken out of service by the anchor, never by the internal key", () => {
    expect(holdTitle(requirements, "anchor-status@anchor:3")).toBe("Anchor R3 out of service");
    expect(holdTitle(requirements, "anchor-status@anchor:9")).toBe("An anchor out of service");
  });
});

describe("holdClearedBy", () => {
  it("sends the crew to re-check a failed check", () => {
    expect(holdClearedBy("weather@site")).toBe("recheck");
  });

  it("leaves an anchor out of service to the building's owner", () => {
    expect(holdClearedBy("anchor-status@anchor:3")).toBe("owner");
  });

  it("leaves a hold the register opened to the register, with no re-check offered", () => {
    // A line taken out of service while the robot worked read "A stop-work hold" and offered a
    // Re-check for a requirement "equipment:5" that no check can satisfy.
    expect(holdClearedBy("equipment:5")).toBe("register");
    expect(holdClearedBy("anchor:3")).toBe("register");
    expect(holdTitle(requirements, "equipment:5")).toBe("Safety line S-1: the register");
    expect(holdTitle(requirements, "anchor:3")).toBe("Anchor R3: the register");
  });

  it("leaves access the owner withdrew to the owner: no re-check and no register puts it right", () => {
    // The owner ended the crew's grant while the robot worked: read as a check's hold, it said
    // "A new passing check after the repair clears it" and offered a Re-check.
    expect(holdClearedBy("access-grant@site")).toBe("owner");
    expect(holdTitle(requirements, "access-grant@site")).toBe("Access to the building withdrawn");
    expect(ownerClears("access-grant@site")).toMatch(/^Only the building's owner clears this, by granting access/);
    expect(ownerClears("anchor-status@anchor:3")).toMatch(/returning the anchor to service/);
  });
});

/** Logging a drop done: the note is what the operator chose or typed, and a repeated tap
 * (a double tap, or a tap while the first is still being saved) logs nothing more. */
import { describe, expect, it } from "vitest";
import { DROP_NOTE_MAX, dropNote, REPEAT_TAP_MS, tapGuard, WHOLE_DROP } from "../src/drops";

describe("dropNote", () => {
  it("sends the words of the button chosen for a whole drop", () => {
    expect(dropNote("whole", "")).toEqual({ note: WHOLE_DROP });
    expect(WHOLE_DROP).toBe("Whole drop done.");
  });

  it("sends what the operator typed for part of a drop, after the choice", () => {
    expect(dropNote("part", "  top half, down to level 20 ")).toEqual({ note: "Part of the drop: top half, down to level 20" });
  });

  it("asks for words for part of a drop rather than inventing them", () => {
    expect(dropNote("part", "   ")).toEqual({ problem: "Say which part of the drop was done." });
  });

  it("refuses a note longer than the server takes (DROP_NOTE_MAX in compliance/jobs/services.py)", () => {
    expect(DROP_NOTE_MAX).toBe(500);
    const long = "x".repeat(DROP_NOTE_MAX);
    expect(dropNote("part", long)).toHaveProperty("problem");
    const fits = "x".repeat(DROP_NOTE_MAX - "Part of the drop: ".length);
    expect(dropNote("part", fits)).toEqual({ note: `Part of the drop: ${fits}` });
  });
});

describe("tapGuard", () => {
  it("lets one tap through and ignores a second 150 ms later", () => {
    const guard = tapGuard();
    expect(guard.begin("drop:1", 1000)).toBe(true);
    guard.end("drop:1");
    expect(guard.begin("drop:1", 1150)).toBe(false);
  });

  it("ignores a tap while the first is still pending, however late", () => {
    const guard = tapGuard();
    expect(guard.begin("drop:1", 0)).toBe(true);
    expect(guard.begin("drop:1", REPEAT_TAP_MS * 10)).toBe(false);
  });

  it("takes a new tap once the first is done and the few seconds have passed", () => {
    const guard = tapGuard();
    expect(guard.begin("drop:1", 0)).toBe(true);
    guard.end("drop:1");
    expect(REPEAT_TAP_MS).toBeGreaterThanOrEqual(2000);
    expect(guard.begin("drop:1", REPEAT_TAP_MS + 1)).toBe(true);
  });

  it("keeps each drop apart", () => {
    const guard = tapGuard();
    expect(guard.begin("drop:1", 0)).toBe(true);
    expect(guard.begin("drop:2", 10)).toBe(true);
  });
});

/** The sign page says how often work was stopped that day, and when, even once every hold is
 * cleared: "No open holds" alone hid a day on which work was stopped. */
import { describe, expect, it } from "vitest";
import { holdsOfDay } from "../src/holds";

const time = (iso: string) => iso.slice(11, 16);

describe("holdsOfDay", () => {
  it("counts the holds opened and says when each was opened and cleared", () => {
    const holds = [
      { opened_at: "2026-12-05T09:10:00Z", cleared_at: "2026-12-05T10:40:00Z" },
      { opened_at: "2026-12-05T13:05:00Z", cleared_at: null },
    ];
    const day = holdsOfDay(holds, time);
    expect(day.headline).toBe("Stop work 2 times this day; 1 still open");
    expect(day.lines).toEqual(["Stop work opened 09:10, cleared 10:40.", "Stop work opened 13:05, still open."]);
  });

  it("says a day with one cleared hold was stopped", () => {
    const day = holdsOfDay([{ opened_at: "2026-12-05T09:10:00Z", cleared_at: "2026-12-05T09:50:00Z" }], time);
    expect(day.headline).toBe("Stop work 1 time this day; cleared");
    expect(day.stopped).toBe(true);
  });

  it("says when a hold's check was made where it reached the server well after", () => {
    // A failure found at 07:05 on a phone offline on the roof read "opened 10:31" alone.
    const day = holdsOfDay(
      [
        { opened_at: "2026-12-05T10:31:00Z", found_at: "2026-12-05T07:05:00Z", cleared_at: null },
        { opened_at: "2026-12-05T11:00:30Z", found_at: "2026-12-05T11:00:00Z", cleared_at: null },
      ],
      time,
    );
    expect(day.lines).toEqual([
      "Stop work opened 10:31 (its check was made 07:05), still open.",
      "Stop work opened 11:00, still open.",
    ]);
  });

  it("says plainly when work was never stopped", () => {
    expect(holdsOfDay([], time)).toEqual({ stopped: false, headline: "No stop-work hold this day", lines: [] });
  });
});

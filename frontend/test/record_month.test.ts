/** The daily records laid out by month and day (desk/recordMonth.ts): dates, grouping, words. */
import { describe, expect, it } from "vitest";
import {
  byJob,
  asDay,
  asMonth,
  dayFrom,
  dayState,
  monthBounds,
  monthDays,
  monthFrom,
  monthsOf,
  sheetsWords,
  type Sheet,
} from "../src/desk/recordMonth";
import type { DailyRecord } from "../src/types";

function record(id: number, job: number, date: string, kind: "record" | "addendum" = "record", amends: number | null = null): DailyRecord {
  return {
    id, kind, site: 1, job, date, amends, sequence: id, previous_seal: "", seal: "ab".repeat(32),
    signer_name: "Rhea Okafor", signer_role: "supervisor", meaning: "Reviewed", signed_at: `${date}T17:00:00Z`, pdf_ready: true,
  };
}

function sheet(id: number, job: number, verdict: Sheet["verdict"], deviceTime: string | null, date = "2026-12-02", receivedAt = "2026-12-20T09:00:00"): Sheet {
  return {
    id, job, date, checklist: "anchor-pre-use", version: 1, version_number: 1, version_hash: "", subject_kind: "anchor",
    filled_by: "Tomas Lind", device_time: deviceTime, received_at: receivedAt, verdict, entries: [],
  };
}

describe("dates", () => {
  it("knows a month and a real day", () => {
    expect(asMonth("2026-12")).toBe("2026-12");
    expect(asMonth("2026-13")).toBeNull();
    expect(asMonth(undefined)).toBeNull();
    expect(asDay("2026-02-28")).toBe("2026-02-28");
    expect(asDay("2026-02-30")).toBeNull();
    expect(asDay("2028-02-29")).toBe("2028-02-29");
    expect(asDay("2026-12")).toBeNull();
  });

  it("gives a month's bounds, across leap years and year ends", () => {
    expect(monthBounds("2026-02")).toEqual({ start: "2026-02-01", end: "2026-02-28" });
    expect(monthBounds("2028-02")).toEqual({ start: "2028-02-01", end: "2028-02-29" });
    expect(monthBounds("2026-12")).toEqual({ start: "2026-12-01", end: "2026-12-31" });
    expect(monthFrom("2026-12", 1)).toBe("2027-01");
    expect(monthFrom("2026-01", -1)).toBe("2025-12");
    expect(dayFrom("2026-12-31", 1)).toBe("2027-01-01");
    expect(dayFrom("2026-03-01", -1)).toBe("2026-02-28");
  });
});

describe("monthsOf", () => {
  it("offers twelve months back at least, newest first, with each month's counts", () => {
    const months = monthsOf([record(1, 1, "2026-11-30"), record(2, 2, "2026-12-01"), record(3, 2, "2026-12-01", "addendum", 2)], "2026-12-04");
    expect(months).toHaveLength(12);
    expect(months[0]).toEqual({ month: "2026-12", records: 1, addenda: 1 });
    expect(months[1]).toEqual({ month: "2026-11", records: 1, addenda: 0 });
    expect(months[11]!.month).toBe("2026-01");
  });

  it("goes back to the oldest record's month", () => {
    const months = monthsOf([record(1, 1, "2024-06-10")], "2026-12-04");
    expect(months.at(-1)).toEqual({ month: "2024-06", records: 1, addenda: 0 });
    expect(months).toHaveLength(31);
  });
});

describe("monthDays", () => {
  it("places records, addenda and sheets on the job's date, every day of the month listed", () => {
    const days = monthDays(
      "2026-12",
      [record(1, 10, "2026-12-02"), record(2, 10, "2026-12-02", "addendum", 1)],
      // Filled the day before the job's date by the phone's clock: the job's date wins.
      [sheet(100, 10, "pass", "2026-12-01T23:30:00"), sheet(101, 10, "fail", null)],
    );
    expect(days).toHaveLength(31);
    const second = days[1]!;
    expect(second.date).toBe("2026-12-02");
    expect(second.records.map((r) => r.id)).toEqual([1]);
    expect(second.addenda.map((r) => r.id)).toEqual([2]);
    expect(second.sheets.map((s) => s.id)).toEqual([100, 101]);
    expect(days[0]!.sheets).toEqual([]);
  });

  it("places an unsigned job's sheets on its date, and none outside the month", () => {
    const days = monthDays("2026-12", [], [
      sheet(1, 20, "pass", "2026-12-05T08:00:00", "2026-12-04"),
      sheet(2, 20, "pass", "2026-12-04T18:00:00", "2026-12-04"),
      sheet(3, 21, "pass", null, "2027-01-01"),
    ]);
    expect(days[3]!.sheets.map((s) => s.id)).toEqual([1, 2]);
    expect(days.flatMap((d) => d.sheets).map((s) => s.id)).toEqual([1, 2]);
  });
});

describe("words", () => {
  it("says each day's state", () => {
    const [signed, unsigned, open, none] = [
      { date: "2026-12-02", records: [record(1, 1, "2026-12-02")], addenda: [], sheets: [] },
      { date: "2026-12-03", records: [], addenda: [], sheets: [sheet(1, 2, "pass", null)] },
      { date: "2026-12-04", records: [], addenda: [], sheets: [sheet(2, 3, "pass", null)] },
      { date: "2026-12-05", records: [], addenda: [], sheets: [] },
    ];
    expect(dayState(signed, "2026-12-04")).toEqual({ key: "signed", sign: "safe", word: "Signed" });
    expect(dayState(unsigned, "2026-12-04").key).toBe("unsigned");
    expect(dayState(unsigned, "2026-12-04").sign).toBe("caution");
    expect(dayState(open, "2026-12-04").key).toBe("open");
    expect(dayState(none, "2026-12-04")).toEqual({ key: "none", sign: null, word: "No sheets, no record" });
  });

  it("counts sheets by verdict", () => {
    expect(sheetsWords([])).toBe("No sheets");
    expect(sheetsWords([sheet(1, 1, "pass", null)])).toBe("1 sheet: 1 pass");
    expect(sheetsWords([sheet(1, 1, "pass", null), sheet(2, 1, "fail", null), sheet(3, 1, "na", null)])).toBe(
      "3 sheets: 1 pass, 1 fail, 1 not applicable",
    );
  });
});

describe("a day of two jobs", () => {
  it("keeps each job's record and sheets apart, in job order", () => {
    // Two records on one day (a job signed safe and one stopped) read as one list of 19 sheets,
    // with no word of which sheet was whose.
    const sheet = (id: number, job: number) => ({ id, job }) as unknown as Sheet;
    const groups = byJob([{ job: 9, id: 5 }, { job: 4, id: 4 }], [sheet(1, 4), sheet(2, 9), sheet(3, 4)]);
    expect(groups.map((g) => [g.job, g.records.map((r) => r.id), g.sheets.map((s) => s.id)])).toEqual([
      [4, [4], [1, 3]],
      [9, [5], [2]],
    ]);
    expect(byJob([], [sheet(1, 4)])).toEqual([{ job: 4, records: [], sheets: [sheet(1, 4)] }]);
  });
});

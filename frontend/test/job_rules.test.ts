/** What the phone offers on a job, before the server is asked: no action it knows the server
 * refuses, a later day's checks read only, a check kept on the phone named when reopened, and
 * the reasons the server gives for refusing the start that no check on the phone can answer. */
import { describe, expect, it } from "vitest";
import {
  checkAgainWhy,
  mayClose,
  nextReadAgain,
  officeBlockers,
  opensOn,
  registerBlockers,
  waitingSheet,
  windLapsed,
} from "../src/job_rules";

describe("opensOn", () => {
  it("names the day of a later job, and nothing for today's or a past one", () => {
    expect(opensOn("2026-12-06", "2026-12-05")).toBe("2026-12-06");
    expect(opensOn("2026-12-05", "2026-12-05")).toBeNull();
    expect(opensOn("2026-12-01", "2026-12-05")).toBeNull();
  });
});

describe("mayClose", () => {
  const operator = { role: "operator" };
  const supervisor = { role: "supervisor" };
  it("does not offer an operator Close before any work", () => {
    expect(mayClose(operator, { state: "planned", work_started: false })).toBe(false);
    expect(mayClose(operator, { state: "cleared", work_started: false })).toBe(false);
    expect(mayClose(operator, { state: "held", work_started: false })).toBe(false);
  });
  it("offers it once work has started, and always to a supervisor or admin", () => {
    expect(mayClose(operator, { state: "cleared", work_started: true })).toBe(true);
    expect(mayClose(operator, { state: "working", work_started: true })).toBe(true);
    expect(mayClose(supervisor, { state: "planned", work_started: false })).toBe(true);
    expect(mayClose({ role: "admin" }, { state: "planned", work_started: false })).toBe(true);
  });
  it("never offers it on a closed job or to an auditor", () => {
    expect(mayClose(supervisor, { state: "closed", work_started: true })).toBe(false);
    expect(mayClose({ role: "auditor" }, { state: "working", work_started: true })).toBe(false);
  });
});

describe("waitingSheet", () => {
  const entry = (uuid: string, requirement: string, status: "waiting" | "applied" | "rejected", created_at: string, job = 7) => ({
    client_uuid: uuid, job, requirement, status, created_at, record: { type: "sheet" as const },
  });
  it("finds the newest sheet for the check still waiting to send", () => {
    const entries = [
      entry("a", "weather@site", "waiting", "2026-12-05T08:00:00Z"),
      entry("b", "weather@site", "waiting", "2026-12-05T09:00:00Z"),
      entry("c", "weather@site", "applied", "2026-12-05T10:00:00Z"),
      entry("d", "anchor@anchor:1", "waiting", "2026-12-05T11:00:00Z"),
      entry("e", "weather@site", "waiting", "2026-12-05T12:00:00Z", 8),
    ];
    expect(waitingSheet(entries, 7, "weather@site")?.client_uuid).toBe("b");
    expect(waitingSheet(entries, 7, "rescue@site")).toBeNull();
  });
});

describe("registerBlockers", () => {
  it("keeps what the register or the plan holds against the start, not the checks or holds shown apart", () => {
    const blockers = [
      { code: "sheet_missing", message: "Weather for the site has not been done.", requirement: "weather@site" },
      { code: "open_hold", message: "Stop work: cracks.", requirement: "anchor@anchor:1" },
      { code: "equipment_out_of_service", message: "RB-3 is out of service.", requirement: "equipment:3" },
      { code: "no_grant_for_day", message: "The building owner's access grant does not cover this day." },
    ];
    expect(registerBlockers(blockers).map((b) => b.message)).toEqual([
      "RB-3 is out of service.",
      "The building owner's access grant does not cover this day.",
    ]);
  });
});

describe("checks to make again", () => {
  const blockers = [
    {
      code: "weather_stale",
      message: "Weather was last read at 07:02, more than 60 min ago: read the wind again before work goes on.",
      requirement: "weather@site",
    },
    { code: "sheet_before_return", message: "Line check for line S-1 was filled before it was returned.", requirement: "line@equipment:4" },
    { code: "equipment_out_of_service", message: "RB-3 is out of service.", requirement: "equipment:3" },
  ];
  it("are not among what only the office can put right: the phone told the crew no check would do", () => {
    expect(officeBlockers(blockers).map((b) => b.code)).toEqual(["equipment_out_of_service"]);
  });
  it("are told beside the check that answers them", () => {
    expect(checkAgainWhy(blockers, "weather@site")).toMatch(/read the wind again/);
    expect(checkAgainWhy(blockers, "line@equipment:4")).toMatch(/returned/);
    expect(checkAgainWhy(blockers, "robot@equipment:3")).toBeNull();
  });
});

describe("a wind reading's time", () => {
  const at = Date.parse("2026-12-05T14:59:00Z");
  const weather = { read_again_by: "2026-12-05T14:59:00Z", satisfied: true };
  it("runs out by the phone's clock, so a screen left open stops showing it done", () => {
    expect(windLapsed(weather, at - 1)).toBe(false);
    expect(windLapsed(weather, at)).toBe(true);
    expect(windLapsed({ ...weather, satisfied: false }, at + 1)).toBe(false);
    expect(windLapsed({ read_again_by: null, satisfied: true }, at + 1)).toBe(false);
  });
  it("tells the screen when to look again: the first time still to come", () => {
    const later = { read_again_by: "2026-12-05T15:30:00Z" };
    expect(nextReadAgain([weather, later, { read_again_by: null }], at - 5)).toBe(at);
    expect(nextReadAgain([weather, later], at)).toBe(Date.parse("2026-12-05T15:30:00Z"));
    expect(nextReadAgain([weather], at)).toBeNull();
  });
});

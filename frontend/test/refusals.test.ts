/** A refusal in words a person reads: never a raw field name like "job:", and one the person
 * dismissed is not shown again. */
import { describe, expect, it } from "vitest";
import { activeRefusals, errorLines } from "../src/refusals";

describe("errorLines", () => {
  it("shows the server's sentence without the field it was filed under", () => {
    const errors = { job: ["This job is for 2026-12-06: its pre-start checks are made on its day."] };
    expect(errorLines(errors)).toEqual(["This job is for 2026-12-06: its pre-start checks are made on its day."]);
    expect(errorLines({ record: { drop: ["Drops are logged only while the job is working."] } })).toEqual([
      "Drops are logged only while the job is working.",
    ]);
    expect(errorLines({ non_field_errors: ["Refused."], note: "Too long." })).toEqual(["Refused.", "Too long."]);
  });

  it("names a checklist item in words, not by its key", () => {
    expect(errorLines({ entries: { tag_capacity: { value: ["Must be a number."] } } })).toEqual([
      "Tag capacity: Must be a number.",
    ]);
  });

  it("never shows a colon-ended field name", () => {
    for (const line of errorLines({ job: ["x"], drop: ["y"], device_time: ["z"], entries: { a_b: ["w"] } })) {
      expect(line).not.toMatch(/^[a-z_.]+:/);
    }
  });
});

describe("activeRefusals", () => {
  const base = { record: {}, job: 1, seq: 1, created_at: "", label: "", attempts: 1 };
  it("keeps refusals the person has not dismissed", () => {
    const entries = [
      { ...base, client_uuid: "a", status: "rejected" as const },
      { ...base, client_uuid: "b", status: "rejected" as const, dismissed_at: "2026-12-05T10:00:00Z" },
      { ...base, client_uuid: "c", status: "applied" as const },
    ];
    expect(activeRefusals(entries).map((e) => e.client_uuid)).toEqual(["a"]);
  });
});

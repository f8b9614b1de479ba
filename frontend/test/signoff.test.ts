/** Sign-off words, the seal as shown, when a refusal means "signed out", and empty drafts. */
import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import { ApiError } from "../src/api";
import { emptyDraft, isEmptyDraft } from "../src/sheet";
import { canSign, lapsedOf, MEANINGS, meaningUnavailable, readinessOf, sealShort } from "../src/signoff";
import type { User } from "../src/types";

describe("meanings of the signature", () => {
  it("are the server's own words, so the phone shows what is sealed", () => {
    // fixtures/signature_meanings.json: the server's test checks it against what it seals.
    const shared = JSON.parse(
      readFileSync(new URL("../../fixtures/signature_meanings.json", import.meta.url), "utf8"),
    ) as { meanings: Record<string, string> };
    expect(Object.fromEntries(MEANINGS.map((m) => [m.code, m.text]))).toEqual(shared.meanings);
  });
});

describe("meaningUnavailable", () => {
  const open = { cleared_at: null };
  const cleared = { cleared_at: "2026-12-02T10:00:00Z" };
  const offered = (holds: { cleared_at: string | null }[]) =>
    MEANINGS.filter((m) => !meaningUnavailable(m.code, holds)).map((m) => m.code);

  it("offers only what the server takes: 'work was stopped' needs an open hold, 'safe' none", () => {
    // A day with no hold was offered "work was stopped", refused only after the password was typed.
    expect(offered([])).toEqual(["reviewed_safe", "reviewed_exceptions"]);
    expect(offered([cleared])).toEqual(["reviewed_safe", "reviewed_exceptions"]);
    expect(offered([open, cleared])).toEqual(["reviewed_stopped", "reviewed_exceptions"]);
  });

  it("does not offer 'safe' for a day worked past its wind reading, and says when", () => {
    // The server refused it (work went on without a recent wind reading) after the password.
    const unread = "Work went on without a recent wind reading (12:00 to 12:40).";
    const left = MEANINGS.filter((m) => !meaningUnavailable(m.code, [], "ready", [], unread)).map((m) => m.code);
    expect(left).toEqual(["reviewed_exceptions"]);
    expect(meaningUnavailable("reviewed_safe", [], "ready", [], unread)).toBe(
      "Not available: Work went on without a recent wind reading (12:00 to 12:40). Choose “Reviewed with exceptions” and say why in the remarks.",
    );
  });

  it("does not offer 'safe' for a day whose checks were never complete", () => {
    // The server refused it (never ready to start) only after the password was typed.
    const never = MEANINGS.filter((m) => !meaningUnavailable(m.code, [], "never")).map((m) => m.code);
    expect(never).toEqual(["reviewed_exceptions"]);
    expect(meaningUnavailable("reviewed_safe", [], "never")).toMatch(/^Not available: the pre-start checks were never complete/);
  });

  it("does not offer 'safe' for a day ready once and left behind before it closed", () => {
    // Cleared in the morning, a hose re-rated below what its check read, closed without work:
    // the page offered "safe" because the day had been ready once.
    const lost = MEANINGS.filter((m) => !meaningUnavailable(m.code, [], "lost")).map((m) => m.code);
    expect(lost).toEqual(["reviewed_exceptions"]);
    expect(meaningUnavailable("reviewed_safe", [], "lost")).toMatch(
      /^Not available: the pre-start checks were no longer complete when the job closed/,
    );
    expect(readinessOf({ was_ready: true, ready_when_closed: false })).toBe("lost");
    expect(readinessOf({ was_ready: false, ready_when_closed: false })).toBe("never");
    expect(readinessOf({ was_ready: true, ready_when_closed: true })).toBe("ready");
  });

  it("does not offer 'safe' for a day ready at close whose check no longer counts, and names it", () => {
    // Closed from work with the hose's check judged on a rating since changed and no hold:
    // the page offered "safe" because the job's states said ready.
    const lapsed = [
      { message: "Hose Check for hose H1 was judged with its pressure rating at 2500 kPa; it now reads 800 kPa: check it again." },
    ];
    const offered = MEANINGS.filter((m) => !meaningUnavailable(m.code, [], "ready", lapsed)).map((m) => m.code);
    expect(offered).toEqual(["reviewed_exceptions"]);
    expect(meaningUnavailable("reviewed_safe", [], "ready", lapsed)).toBe(
      "Not available: a pre-start check of this day no longer counts, and no hold stands for it: Hose Check for hose H1 was judged with its pressure rating at 2500 kPa; it now reads 800 kPa: check it again. Choose “Reviewed with exceptions” and say why in the remarks.",
    );
    // "work was stopped" does not send the signer to "safe"
    expect(meaningUnavailable("reviewed_stopped", [], "ready", lapsed)).toMatch(/Choose “Reviewed with exceptions”/);
    expect(lapsedOf({ lapsed_checks: lapsed })).toEqual(lapsed);
    expect(lapsedOf({})).toEqual([]);
  });

  it("says why in the page's own words", () => {
    expect(meaningUnavailable("reviewed_stopped", [])).toBe("Not available: no stop-work hold this day.");
    expect(meaningUnavailable("reviewed_stopped", [cleared])).toBe(
      "Not available: the day's holds were cleared. Choose “Reviewed with exceptions” and say in the remarks what stopped work.",
    );
    expect(meaningUnavailable("reviewed_safe", [open])).toBe("Not available: the record has open holds.");
  });
});

describe("sealShort", () => {
  it("shows the first 16 hex characters in fours", () => {
    expect(sealShort("3f2a9c0177be04d1" + "0".repeat(48))).toBe("3f2a 9c01 77be 04d1");
    expect(sealShort("")).toBe("");
  });
});

describe("canSign", () => {
  type Role = NonNullable<User["role"]>;
  const user = (role: Role): User => ({ id: 1, username: "u", name: "U", role, organisation: "o" });
  it("lets the supervisor and an admin sign, nobody else", () => {
    expect((["supervisor", "admin"] as Role[]).map((r) => canSign(user(r)))).toEqual([true, true]);
    const others: Role[] = ["operator", "auditor", "property_manager"];
    expect(others.map((r) => canSign(user(r)))).toEqual([false, false, false]);
    expect(canSign(null)).toBe(false);
  });
});

describe("ApiError.signedOut", () => {
  it("is a lapsed session, not a refusal of a signed-in user", () => {
    expect(new ApiError(401, { detail: "Invalid token." }).signedOut).toBe(true);
    expect(new ApiError(403, { detail: "Authentication credentials were not provided.", code: "not_authenticated" }).signedOut).toBe(true);
    expect(new ApiError(403, { detail: "Session lapsed.", code: "authentication_failed" }).signedOut).toBe(true);
    // the words alone do not sign the phone out: only the server's code does
    expect(new ApiError(403, { detail: "Authentication credentials were not provided." }).signedOut).toBe(false);
    expect(new ApiError(403, { detail: "Re-enter your password to sign; the one given is not right." }).signedOut).toBe(false);
    expect(new ApiError(403, { detail: "You do not have permission to perform this action." }).signedOut).toBe(false);
    expect(new ApiError(409, { detail: "Close the job (or leave it held) before signing" }).signedOut).toBe(false);
  });
});

describe("isEmptyDraft", () => {
  it("is empty until something is entered", () => {
    const draft = emptyDraft();
    expect(isEmptyDraft(draft)).toBe(true);
    draft.readings = { tag_capacity: "  " };
    draft.series = { decay: [] };
    expect(isEmptyDraft(draft)).toBe(true);
    draft.readings = { tag_capacity: "2" };
    expect(isEmptyDraft(draft)).toBe(false);
    expect(isEmptyDraft({ ...emptyDraft(), ticks: { a: "na" } })).toBe(false);
  });
});

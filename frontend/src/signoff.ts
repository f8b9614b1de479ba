/** Signing the day's record: the words of the signature and who may give it. */
import type { Meaning, User } from "./types";

/** The meanings the server accepts, in its own words: they go into the sealed record as written. */
export const MEANINGS: { code: Meaning; text: string }[] = [
  { code: "reviewed_safe", text: "Reviewed: the pre-start checks were complete and work was safe to proceed." },
  { code: "reviewed_stopped", text: "Reviewed: work was stopped; the open holds are shown in this record." },
  { code: "reviewed_exceptions", text: "Reviewed with exceptions: see the remarks in this record." },
];

/** Whether the day's checks were complete when the job closed ("ready"), complete once and then
 * left behind ("lost"), or never complete ("never"): only a ready day is signed as safe. */
export type Readiness = "ready" | "lost" | "never";

export function readinessOf(job: { was_ready: boolean; ready_when_closed?: boolean }): Readiness {
  // A copy kept on the phone from before the server said so reads as it was: the server refuses.
  return (job.ready_when_closed ?? job.was_ready) ? "ready" : job.was_ready ? "lost" : "never";
}

/** A check of the day that no longer counts though the job was ready when it closed, with no
 * hold standing for it, in the server's words (a figure it read changed, kit returned since). */
type LapsedCheck = { message: string };

/** The day's lapsed checks; a copy kept on the phone from before the server said so has none,
 * and the server refuses. */
export function lapsedOf(job: { lapsed_checks?: readonly LapsedCheck[] }): readonly LapsedCheck[] {
  return job.lapsed_checks ?? [];
}

/** Why a meaning cannot be given to this day, in the page's words, or "" when it can: the server
 * refuses "safe to proceed" while a hold is open, a check no longer counts or work went on
 * without a recent wind reading (`unreadWind`, the job's `unread_wind`), and "work was stopped"
 * with none open. */
export function meaningUnavailable(
  code: Meaning,
  holds: readonly { cleared_at: string | null }[],
  ready: Readiness = "ready",
  lapsed: readonly LapsedCheck[] = [],
  unreadWind = "",
): string {
  const open = holds.some((h) => !h.cleared_at);
  if (code === "reviewed_safe" && open) return "Not available: the record has open holds.";
  if (code === "reviewed_safe" && ready === "never")
    return "Not available: the pre-start checks were never complete (the job was never ready to start). Choose “Reviewed with exceptions” and say why in the remarks.";
  if (code === "reviewed_safe" && ready === "lost")
    return "Not available: the pre-start checks were no longer complete when the job closed (it had gone back from ready to start). Choose “Reviewed with exceptions” and say why in the remarks.";
  if (code === "reviewed_safe" && lapsed.length) {
    const checks =
      lapsed.length === 1
        ? "a pre-start check of this day no longer counts, and no hold stands for it"
        : "pre-start checks of this day no longer count, and no hold stands for them";
    return `Not available: ${checks}: ${lapsed.map((c) => c.message).join(" ")} Choose “Reviewed with exceptions” and say why in the remarks.`;
  }
  if (code === "reviewed_safe" && unreadWind)
    return `Not available: ${unreadWind} Choose “Reviewed with exceptions” and say why in the remarks.`;
  if (code !== "reviewed_stopped" || open) return "";
  return holds.length
    ? "Not available: the day's holds were cleared. Choose “Reviewed with exceptions” and say in the remarks what stopped work."
    : ready === "ready" && !lapsed.length
      ? "Not available: no stop-work hold this day."
      : "Not available: no stop-work hold this day. Choose “Reviewed with exceptions” and say why in the remarks.";
}

export const STATEMENT =
  "By signing you state, as the competent person for this site, that you have reviewed this day's " +
  "record and that the meaning you chose is true. Your printed name, your role, the date and time " +
  "and that meaning are sealed into the record together with its checks, verdicts, holds and drops. " +
  "The seal binds your signature to this record alone; nothing in it can be changed afterwards, and " +
  "a correction is made as a signed addendum.";

/** Who may sign: the supervisor (competent person) or an organisation admin. */
export function canSign(user: User | null | undefined): boolean {
  return user?.role === "supervisor" || user?.role === "admin";
}

/** An auditor reads; everyone else on the phone records. */
export function canRecord(user: User | null | undefined): boolean {
  return !!user && user.role !== "auditor";
}

export const READ_ONLY_WORDS = "Read only: an auditor sees the job and its checks; the crew records them.";

/** "3f2a9c0177be04d1…" → "3f2a 9c01 77be 04d1": the first 16 hex characters, in fours. */
export function sealShort(seal: string): string {
  return (seal.slice(0, 16).match(/.{1,4}/g) ?? []).join(" ");
}

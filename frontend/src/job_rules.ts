/** What the phone offers on a job before the server is asked: never an action it knows the
 * server refuses (compliance/jobs/services.py, sync.py), so the refusal never comes after the
 * work of filling a form. */

/** The day a later job's checks open: the server takes a job's checks on its own day only. */
export function opensOn(jobDate: string, today: string): string | null {
  return jobDate > today ? jobDate : null;
}

/** Close is offered to whoever records, except that only a supervisor or an admin closes a
 * job before any work (close_job). */
export function mayClose(
  user: { role?: string } | null | undefined,
  job: { state: string; work_started: boolean },
): boolean {
  if (!user || user.role === "auditor" || job.state === "closed") return false;
  // A copy kept from before the server said whether work started: a working job has.
  const started = job.work_started || job.state === "working";
  return started || user.role === "supervisor" || user.role === "admin";
}

interface Kept {
  client_uuid: string;
  job: number;
  requirement?: string;
  status: "waiting" | "applied" | "rejected";
  created_at: string;
  record: { type: string };
}

/** The newest sheet for this check saved on the phone and not yet sent, if any. */
export function waitingSheet<T extends Kept>(entries: readonly T[], job: number, requirement: string): T | null {
  const mine = entries.filter(
    (e) => e.job === job && e.requirement === requirement && e.record.type === "sheet" && e.status === "waiting",
  );
  return mine.sort((a, b) => a.created_at.localeCompare(b.created_at)).at(-1) ?? null;
}

/** The job's blockers shown on their own: the ones about checks and holds are shown beside the
 * checks and holds, the rest (equipment or an anchor out of service, a lapsed certificate, no
 * grant for the day, no drops) only the register or the plan can put right. */
const SHOWN_APART = new Set(["sheet_missing", "sheet_old_version", "sheet_failed", "open_hold"]);

export function registerBlockers<T extends { code: string }>(blockers: readonly T[]): T[] {
  return blockers.filter((b) => !SHOWN_APART.has(b.code));
}

/** The reasons a check that was done must be done again (the wind read too long ago, a figure
 * it read changed, a drop planned or kit returned since): a check on the phone answers them,
 * so the phone shows each beside its check, not among what only the office can put right. */
const CHECK_AGAIN = new Set(["weather_stale", "sheet_judged_on_changed", "sheet_before_drop", "sheet_before_return"]);

/** What the office (the register or the plan) holds against the start, as the phone shows it. */
export function officeBlockers<T extends { code: string }>(blockers: readonly T[]): T[] {
  return registerBlockers(blockers).filter((b) => !CHECK_AGAIN.has(b.code));
}

/** Why the check `requirement` must be done again, in the server's words (null if it need not). */
export function checkAgainWhy(
  blockers: readonly { code: string; message: string; requirement?: string | null }[],
  requirement: string,
): string | null {
  return blockers.find((b) => CHECK_AGAIN.has(b.code) && b.requirement === requirement)?.message ?? null;
}

/** Whether a weather check that counted has run out by the phone's clock (`nowMs`): the server
 * stops a job at work within the minute after, and the phone must not show it as done until
 * it hears so. */
export function windLapsed(req: { read_again_by?: string | null; satisfied: boolean }, nowMs: number): boolean {
  if (!req.read_again_by || !req.satisfied) return false;
  const by = Date.parse(req.read_again_by);
  return !Number.isNaN(by) && by <= nowMs;
}

/** When the phone must look again: the first read-again time still to come, in ms (null if none). */
export function nextReadAgain(reqs: readonly { read_again_by?: string | null }[], nowMs: number): number | null {
  const times = reqs.map((r) => (r.read_again_by ? Date.parse(r.read_again_by) : NaN)).filter((t) => !Number.isNaN(t) && t > nowMs);
  return times.length ? Math.min(...times) : null;
}

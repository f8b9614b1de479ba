/** What a stop-work hold is called and who can clear it. Most holds come from a failed check
 * and clear with a passing re-check; an anchor taken out of service (the requirement
 * "anchor-status@anchor:ID") clears only when the building's owner returns the anchor to service
 * in its log book, so no re-check by the crew can clear it. */

interface RequirementWords {
  key: string;
  title: string;
  subject: string;
  anchor?: number | null;
  equipment?: number | null;
}

const ANCHOR_STATUS = /^anchor-status@anchor:(\d+)$/;
/** The owner ended the crew's access to the job's site. */
const GRANT = /^access-grant@site$/;
/** A hold a register change opened names the kit or anchor itself: "equipment:5". */
const REGISTER = /^(anchor|equipment):(\d+)$/;

function capital(words: string): string {
  return words.charAt(0).toUpperCase() + words.slice(1);
}

export function holdTitle(requirements: readonly RequirementWords[], key: string): string {
  const found = requirements.find((r) => r.key === key);
  if (found) return `${found.title}, ${found.subject}`;
  const status = ANCHOR_STATUS.exec(key);
  if (status) {
    const anchor = requirements.find((r) => r.anchor === Number(status[1]));
    if (!anchor) return "An anchor out of service";
    return `${capital(anchor.subject)} out of service`;
  }
  if (GRANT.test(key)) return "Access to the building withdrawn";
  const register = REGISTER.exec(key);
  if (register) {
    const id = Number(register[2]);
    const found = requirements.find((r) => (register[1] === "anchor" ? r.anchor : r.equipment) === id);
    return found ? `${capital(found.subject)}: the register` : "The register";
  }
  return "A stop-work hold";
}

export function holdClearedBy(key: string): "owner" | "register" | "recheck" {
  if (ANCHOR_STATUS.test(key) || GRANT.test(key)) return "owner";
  return REGISTER.test(key) ? "register" : "recheck";
}

export const REGISTER_CLEARS =
  "The register stopped this work. Putting the register right clears it: the supervisor returns the kit to service or records its inspection, and for an anchor the building's owner records its certificate. No check on this phone clears it.";

/** How the owner clears a hold only the owner clears. */
export function ownerClears(key: string): string {
  return `Only the building's owner clears this, by ${GRANT.test(key) ? "granting access for the day again" : "returning the anchor to service in its log book after the repair"}. No check on this phone clears it.`;
}

interface HoldTimes {
  opened_at: string;
  found_at?: string | null;
  cleared_at: string | null;
}

/** " (its check was made 07:05)" where the check that opened the hold was made more than a
 * minute before the hold opened (a phone offline on the roof sends it later), else "". */
export function madeNote(hold: HoldTimes, time: (iso: string) => string): string {
  if (!hold.found_at) return "";
  const late = Date.parse(hold.opened_at) - Date.parse(hold.found_at);
  return late > 60_000 ? ` (its check was made ${time(hold.found_at)})` : "";
}

/** The day's stop-work holds in words, cleared ones included: how many, and when each was
 * opened and cleared. `time` formats a timestamp for the reader. */
export function holdsOfDay(
  holds: readonly HoldTimes[],
  time: (iso: string) => string,
): { stopped: boolean; headline: string; lines: string[] } {
  if (holds.length === 0) return { stopped: false, headline: "No stop-work hold this day", lines: [] };
  const sorted = [...holds].sort((a, b) => a.opened_at.localeCompare(b.opened_at));
  const open = sorted.filter((h) => !h.cleared_at).length;
  const times = sorted.length === 1 ? "1 time" : `${sorted.length} times`;
  const tail = open === 0 ? "cleared" : open === sorted.length && open === 1 ? "still open" : `${open} still open`;
  return {
    stopped: true,
    headline: `Stop work ${times} this day; ${tail}`,
    lines: sorted.map((h) =>
      h.cleared_at
        ? `Stop work opened ${time(h.opened_at)}${madeNote(h, time)}, cleared ${time(h.cleared_at)}.`
        : `Stop work opened ${time(h.opened_at)}${madeNote(h, time)}, still open.`,
    ),
  };
}

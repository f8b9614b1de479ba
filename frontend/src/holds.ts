/** What a stop-work hold is called and who can clear it. Most holds come from a failed check
 * and clear with a passing re-check; an anchor taken out of service (the requirement
 * "anchor-status@anchor:ID") clears only when the building's owner returns the anchor to service
 * in its log book, so no re-check by the crew can clear it. */

interface RequirementWords {
  key: string;
  title: string;
  subject: string;
  anchor?: number | null;
}

const ANCHOR_STATUS = /^anchor-status@anchor:(\d+)$/;

export function holdTitle(requirements: readonly RequirementWords[], key: string): string {
  const found = requirements.find((r) => r.key === key);
  if (found) return `${found.title}, ${found.subject}`;
  const status = ANCHOR_STATUS.exec(key);
  if (status) {
    const anchor = requirements.find((r) => r.anchor === Number(status[1]));
    if (!anchor) return "An anchor out of service";
    const name = anchor.subject.charAt(0).toUpperCase() + anchor.subject.slice(1);
    return `${name} out of service`;
  }
  return "A stop-work hold";
}

export function holdClearedBy(key: string): "owner" | "recheck" {
  return ANCHOR_STATUS.test(key) ? "owner" : "recheck";
}

export const OWNER_CLEARS =
  "Only the building's owner clears this, by returning the anchor to service in its log book after the repair. No check on this phone clears it.";

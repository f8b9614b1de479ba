/**
 * An anchor's state for the building's desk, read from its certificate in force and its log
 * book, as the server reads it (compliance/registers/selectors.py): a removal from service with no
 * later return means out of service; the last passed inspection or load test (or the
 * certificate's date) plus the profile's interval is when the next inspection falls due.
 * The server holds jobs on its own reading; this is what the desk shows.
 */
import type { SignKind } from "../ui/signs";
import type { LogEntry, SiteAnchor } from "./api";

/** How far ahead a lapsing certificate or a due inspection is shown as a caution. */
export const DUE_SOON_DAYS = 30;

export interface AnchorState {
  sign: SignKind;
  word: string;
  /** One line that says why, in words. */
  why: string;
  key: "in_service" | "due_soon" | "lapsed" | "out_of_service";
}

function addDays(day: string, days: number): string {
  const d = new Date(`${day}T12:00:00Z`);
  d.setUTCDate(d.getUTCDate() + days);
  return d.toISOString().slice(0, 10);
}

export function anchorState(anchor: SiteAnchor, entries: LogEntry[], intervalDays: number | null, today: string): AnchorState {
  const mine = entries.filter((e) => e.anchor === anchor.id).sort((a, b) => a.sequence - b.sequence);
  let removed: LogEntry | null = null;
  for (const e of mine) {
    if (e.kind === "removed_from_service") removed = e;
    else if (e.kind === "returned_to_service") removed = null;
  }
  if (removed) {
    return { sign: "held", word: "Out of service", key: "out_of_service", why: `Removed on ${removed.performed_on}: ${removed.details}` };
  }
  const cert = anchor.certification;
  if (!cert) return { sign: "held", word: "No certificate", key: "lapsed", why: "No certificate on record." };
  if (cert.valid_until < today) {
    return { sign: "held", word: "Certificate lapsed", key: "lapsed", why: `Certificate valid until ${cert.valid_until}.` };
  }
  let inspectionDue: string | null = null;
  if (intervalDays !== null) {
    const dates = [cert.certified_on, ...mine
      .filter((e) => (e.kind === "periodic_inspection" || e.kind === "load_test") && e.result === "pass")
      .map((e) => e.performed_on)];
    const last = dates.sort().at(-1)!;
    inspectionDue = addDays(last, intervalDays);
    if (inspectionDue < today) {
      return { sign: "held", word: "Inspection overdue", key: "lapsed", why: `Last inspected ${last}; the next was due ${inspectionDue}.` };
    }
  }
  const soon = addDays(today, DUE_SOON_DAYS);
  if (cert.valid_until <= soon) {
    return { sign: "caution", word: "Certificate due", key: "due_soon", why: `Certificate valid until ${cert.valid_until}, within ${DUE_SOON_DAYS} days.` };
  }
  if (inspectionDue && inspectionDue <= soon) {
    return { sign: "caution", word: "Inspection due", key: "due_soon", why: `Next inspection due ${inspectionDue}, within ${DUE_SOON_DAYS} days.` };
  }
  return {
    sign: "safe",
    word: "In service",
    key: "in_service",
    why: `Certified to ${cert.valid_until}${inspectionDue ? `; next inspection due ${inspectionDue}` : ""}.`,
  };
}

/** The profile's inspection interval in days, if the site's profile gives one. */
export function intervalOf(thresholds: Record<string, unknown> | undefined): number | null {
  const t = thresholds?.certification_interval_days;
  const n = typeof t === "number" ? t : typeof t === "object" && t !== null ? Number((t as { value?: unknown }).value) : NaN;
  return Number.isFinite(n) ? n : null;
}

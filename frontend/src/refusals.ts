/** A server's refusal in words a person reads, and the refusals still worth showing. */

/** Keys the server files a whole record's refusal under: the sentence stands on its own. */
const ITEM_PATH = /^entries$/;

/** "tag_capacity" → "Tag capacity": a checklist item named in words, never by its key. */
function itemWords(key: string): string {
  const words = key.replace(/_/g, " ").trim();
  return words.charAt(0).toUpperCase() + words.slice(1);
}

/**
 * Server errors like {"job": ["This job is for …"]} or {"entries": {"tag_capacity": {"value": […]}}}
 * as plain lines: the server's sentences without the field they were filed under ("job:" means
 * nothing on a roof), and a checklist item's refusal led by the item's name in words.
 */
export function errorLines(errors: unknown, item = ""): string[] {
  if (errors === null || errors === undefined) return [];
  if (typeof errors === "string") return [item ? `${item}: ${errors}` : errors];
  if (Array.isArray(errors)) return errors.flatMap((e) => errorLines(e, item));
  if (typeof errors === "object") {
    return Object.entries(errors as Record<string, unknown>).flatMap(([k, v]) => {
      if (ITEM_PATH.test(k) && v && typeof v === "object" && !Array.isArray(v)) {
        return Object.entries(v as Record<string, unknown>).flatMap(([key, e]) => errorLines(e, itemWords(key)));
      }
      return errorLines(v, item);
    });
  }
  return [String(errors)];
}

interface Answered {
  status: "waiting" | "applied" | "rejected";
  dismissed_at?: string;
}

/** Refusals the person has not dismissed (a later action may have made one moot). */
export function activeRefusals<T extends Answered>(entries: readonly T[]): T[] {
  return entries.filter((e) => e.status === "rejected" && !e.dismissed_at);
}

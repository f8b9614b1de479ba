/**
 * A checklist version's items and the differences between two versions, in words a supervisor
 * reads: what an item asks, whether a fail stops work, and where each limit's number comes from.
 * Plain functions over the server's JSON (checklists/schema.py), so the words can be tested apart.
 */
import type { ChecklistItem, Source } from "../types";

const SUBJECT_WORDS: Record<string, string> = {
  anchor: "anchors",
  robot: "robots",
  tether: "suspension tethers",
  safety_line: "safety lines",
  hose: "water hoses",
  site: "the site as a whole",
};

/** Who or what a checklist is filled for, e.g. "suspension tethers". */
export function subjectWords(kind: string): string {
  return SUBJECT_WORDS[kind] ?? kind.replace(/_/g, " ");
}

const RATING_OF: Record<string, string> = {
  robot: "the drop's robot",
  tether: "the drop's suspension tether",
  safety_line: "the drop's safety line",
  hose: "the drop's water hose",
};

/** The label of an item by its key, for a source that names another item. */
export type LabelOf = (key: string) => string | undefined;

function quoted(key: string, labelOf: LabelOf): string {
  const label = labelOf(key);
  return label ? `“${label}”` : `item ${key}`;
}

/** Where a number comes from, e.g. "the rating length_m of the item checked". */
export function sourceWords(source: unknown, labelOf: LabelOf = () => undefined, unit = ""): string {
  if (!source || typeof source !== "object" || Array.isArray(source)) return "an unreadable source";
  const entries = Object.entries(source as Source);
  if (entries.length !== 1) return "an unreadable source";
  const [kind, ref] = entries[0]!;
  const name = String(ref);
  switch (kind) {
    case "value":
      return typeof ref === "number" ? `${ref}${unit ? ` ${unit}` : ""}, fixed in the checklist` : `“${name}”, fixed in the checklist`;
    case "profile":
      return `the threshold ${name} of the site's jurisdiction profile`;
    case "equipment":
      return `the rating ${name} of the equipment checked`;
    case "anchor":
      return `the anchor's certificate in force (${name})`;
    case "drop":
      return `the drop's ${name}`;
    case "reading":
      return `the answer to ${quoted(name, labelOf)}`;
    case "output": {
      const [item, output] = name.split(".");
      return `the result ${output ?? name} of the calculation ${quoted(item ?? name, labelOf)}`;
    }
    default:
      return RATING_OF[kind] ? `the rating ${name} of ${RATING_OF[kind]}` : `${kind} ${name}`;
  }
}

/** What kind of answer an item asks for, e.g. "A reading in kPa". */
export function kindWords(item: Partial<ChecklistItem>): string {
  switch (item.kind) {
    case "tick":
      return "A tick: pass, fail or not applicable";
    case "reading":
      return `A reading in ${item.unit || "no unit"}`;
    case "series":
      return `Timed readings in ${item.unit || "no unit"}`;
    case "calc":
      return `A calculation (${item.calc ?? "unnamed"})`;
    case "photo":
      return "A photo";
    case "note":
      return "A written note";
    default:
      return `An item of kind ${String(item.kind)}`;
  }
}

export function blockingWords(blocking: unknown): string {
  return blocking ? "Blocking: a fail puts the job on hold (stop work)" : "Not blocking: a fail is recorded, work is not stopped";
}

type Limits = ChecklistItem["limits"];

/** The accepted range in words, e.g. "at least 25 kN, fixed in the checklist; at most …". */
export function limitWords(limits: Limits | undefined, labelOf: LabelOf, unit = ""): string {
  const parts: string[] = [];
  if (limits?.min) parts.push(`at least ${sourceWords(limits.min, labelOf, unit)}`);
  if (limits?.max) parts.push(`at most ${sourceWords(limits.max, labelOf, unit)}`);
  return parts.length ? parts.join("; ") : "no limit";
}

/** An item's description line by line (for an item added or removed). */
export function itemLines(item: ChecklistItem, labelOf: LabelOf): string[] {
  const lines = [kindWords(item), blockingWords(item.blocking)];
  if (item.limits && (item.limits.min || item.limits.max)) lines.push(`Accepted: ${limitWords(item.limits, labelOf, item.unit)}`);
  if (item.caution_below) lines.push(`Caution when the margin is under ${sourceWords(item.caution_below, labelOf)}`);
  if (item.inputs && Object.keys(item.inputs).length) {
    const inputs = Object.entries(item.inputs).map(([name, source]) => `${name} from ${sourceWords(source, labelOf)}`);
    lines.push(`Inputs: ${inputs.join("; ")}`);
  }
  if (typeof item.min_samples === "number") lines.push(`At least ${item.min_samples} readings`);
  if (item.schedule) {
    const timing = Object.entries(item.schedule).map(([name, source]) => `${name} from ${sourceWords(source, labelOf)}`);
    lines.push(`Timing: ${timing.join("; ")}`);
  }
  if (item.required === false) lines.push("Optional: may be left empty");
  if (item.reason) lines.push(`Why: ${item.reason}`);
  return lines;
}

function plain(value: unknown, labelOf: LabelOf): string {
  if (value === undefined || value === null) return "none";
  if (typeof value === "string") return `“${value}”`;
  if (typeof value === "number" || typeof value === "boolean") return value === true ? "yes" : value === false ? "no" : String(value);
  if (typeof value === "object" && !Array.isArray(value) && Object.keys(value).length === 1) {
    return sourceWords(value, labelOf);
  }
  if (typeof value === "object" && !Array.isArray(value)) {
    const parts = Object.entries(value as Record<string, unknown>).map(([k, v]) => `${k} from ${plain(v, labelOf)}`);
    return parts.length ? parts.join("; ") : "none";
  }
  return JSON.stringify(value);
}

function wasNow(what: string, before: string, after: string): string {
  return `${what}: was ${before}, now ${after}.`;
}

/** Each named source of a group (limits, inputs, schedule) that differs, one line each. */
function groupLines(
  title: (name: string) => string,
  before: unknown,
  after: unknown,
  labelOf: LabelOf,
  unit = "",
): string[] {
  const a = (before && typeof before === "object" ? before : {}) as Record<string, unknown>;
  const b = (after && typeof after === "object" ? after : {}) as Record<string, unknown>;
  const names = [...new Set([...Object.keys(a), ...Object.keys(b)])].sort();
  const lines: string[] = [];
  for (const name of names) {
    if (JSON.stringify(a[name]) === JSON.stringify(b[name])) continue;
    const was = a[name] === undefined ? "none" : sourceWords(a[name], labelOf, unit);
    const now = b[name] === undefined ? "none" : sourceWords(b[name], labelOf, unit);
    lines.push(wasNow(title(name), was, now));
  }
  return lines;
}

const LIMIT_TITLE: Record<string, string> = { min: "Lowest accepted value", max: "Highest accepted value" };

/**
 * One changed item's differences, a sentence per field, e.g. "Now blocking: a fail puts the job
 * on hold (stop work)." `unit` is the item's unit after the change (for literal limits).
 */
export function changeLines(
  fields: string[],
  before: Record<string, unknown>,
  after: Record<string, unknown>,
  labelOf: LabelOf,
  unit = "",
): string[] {
  const lines: string[] = [];
  for (const field of fields) {
    const a = before[field];
    const b = after[field];
    switch (field) {
      case "label":
        lines.push(wasNow("Label", plain(a, labelOf), plain(b, labelOf)));
        break;
      case "reason":
        lines.push(wasNow("Why it is checked", plain(a, labelOf), plain(b, labelOf)));
        break;
      case "blocking":
        lines.push(b ? "Now blocking: a fail puts the job on hold (stop work)." : "No longer blocking: a fail is recorded, work is not stopped.");
        break;
      case "kind":
        lines.push(wasNow("Answer asked", kindWords({ kind: a as ChecklistItem["kind"] }).toLowerCase(), kindWords({ kind: b as ChecklistItem["kind"] }).toLowerCase()));
        break;
      case "unit":
        lines.push(wasNow("Unit", a ? String(a) : "none", b ? String(b) : "none"));
        break;
      case "limits":
        lines.push(...groupLines((n) => LIMIT_TITLE[n] ?? `Limit ${n}`, a, b, labelOf, unit));
        break;
      case "inputs":
        lines.push(...groupLines((n) => `Calculation input ${n}`, a, b, labelOf));
        break;
      case "schedule":
        lines.push(...groupLines((n) => `Timing ${n}`, a, b, labelOf));
        break;
      case "caution_below":
        lines.push(wasNow("Caution band", a === undefined ? "none" : sourceWords(a, labelOf), b === undefined ? "none" : sourceWords(b, labelOf)));
        break;
      case "calc":
        lines.push(wasNow("Calculation", plain(a, labelOf), plain(b, labelOf)));
        break;
      case "required":
        lines.push(b === false ? "Now optional: may be left empty." : "Now required: must be answered.");
        break;
      case "min_samples":
        lines.push(wasNow("Fewest readings in the series", plain(a, labelOf), plain(b, labelOf)));
        break;
      default:
        lines.push(wasNow(field.replace(/_/g, " ").replace(/^./, (c) => c.toUpperCase()), plain(a, labelOf), plain(b, labelOf)));
    }
  }
  return lines;
}

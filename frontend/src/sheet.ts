/**
 * The phone's own reading of a sheet, following checklists/verdicts.py: what each item says
 * so far, which limits apply, and whether the sheet is complete enough to save. The server
 * evaluates again on sync; its verdict is the record.
 */
import { CalcInputError, run, UnknownCalculation, type CalcResult } from "./calc";
import { SLACK_S } from "./calc/decay";
import { facadePosition } from "./calc/site_plan";
import { labelOf } from "./quantities";
import { num } from "./calc/working";
import type {
  Anchor,
  ChecklistItem,
  Draft,
  Entry,
  JobDetail,
  Reference,
  Requirement,
  Site,
  Source,
  Threshold,
} from "./types";

export type Context = Record<string, Record<string, unknown>>;

export type LocalVerdict = "pass" | "fail" | "na" | "recorded" | "missing" | "unknown";

export interface ItemView {
  item: ChecklistItem;
  verdict: LocalVerdict;
  message: string;
  margin: number | null;
  limits: string[];
  calc?: CalcResult;
  /**
   * The item's caution band (`caution_below`, resolved): a passing margin under it shows a
   * caution. Null when the item names none or the phone cannot find it; a limit that already
   * holds a standard's factor names none.
   */
  band: number | null;
  /** Why the band is there, from the profile threshold it names ("" when unknown). */
  bandReason: string;
}

export function emptyDraft(): Draft {
  return { ticks: {}, readings: {}, series: {}, photos: {}, notes: {} };
}

/** Nothing entered yet: no tick, no reading typed, no series sample, no photo, no note. */
export function isEmptyDraft(draft: Draft): boolean {
  return (
    Object.keys(draft.ticks).length === 0 &&
    Object.values(draft.readings).every((text) => !text.trim()) &&
    Object.values(draft.series).every((samples) => samples.length === 0) &&
    Object.values(draft.photos).every((list) => list.length === 0) &&
    Object.values(draft.notes).every((text) => !text.trim())
  );
}

type PlannedDrop = JobDetail["drops"][number];

/** The drops a sheet's subject is part of; mirrors checklists.services.served_drops. */
function servedDrops(job: JobDetail, req: Requirement): PlannedDrop[] {
  const served = job.drops.filter(
    (d) =>
      (req.anchor !== null && (d.anchor === req.anchor || d.safety_anchor === req.anchor)) ||
      (req.equipment !== null && [d.robot, d.tether, d.safety_line, d.hose].includes(req.equipment)),
  );
  if (served.length) return served;
  if (req.anchor === null && req.equipment === null) return [...job.drops];
  return job.drops.slice(0, 1);
}

/** A context for each drop the subject serves, by the drop's label. */
export function buildContexts(job: JobDetail, req: Requirement, ref: Reference | null): { label: string; context: Context }[] {
  const served = servedDrops(job, req);
  if (served.length < 2) return [{ label: served[0]?.label ?? "", context: buildContext(job, req, ref) }];
  return served.map((d) => ({ label: d.label, context: buildContext(job, req, ref, d) }));
}

/** The numbers limits and calculations draw on; mirrors checklists.services.sheet_context. */
function buildContext(job: JobDetail, req: Requirement, ref: Reference | null, only?: PlannedDrop): Context {
  const site = ref?.sites.find((s) => s.id === job.site);
  const profile = ref?.profiles.find((p) => p.key === site?.profile);
  const context: Context = {};
  if (profile) context.profile = { ...profile.thresholds };
  const kit = (id: number | null) => ref?.equipment.find((e) => e.id === id);
  const equipment = kit(req.equipment);
  if (equipment) context.equipment = { ...equipment.ratings };
  const drop = only ?? servedDrops(job, req)[0];
  const terrain = site?.terrain;
  if (drop) {
    for (const kind of ["robot", "tether", "safety_line", "hose"] as const) {
      const ratings = kit(drop[kind])?.ratings;
      if (ratings) context[kind] = { ...ratings };
    }
    const tied = ref?.anchors.find((a) => a.id === (req.anchor ?? drop.safety_anchor));
    context.anchor = { rated_capacity_kn: tied?.certification?.rated_capacity_kn ?? null };
    const anchor = ref?.anchors.find((a) => a.id === drop.anchor);
    context.drop = { length_m: drop.length_m, height_m: site?.height_m ?? null, terrain, ...dropPlace(site, anchor) };
  } else {
    context.drop = { height_m: site?.height_m ?? null, terrain };
  }
  return context;
}

/** Where the drop hangs on its facade; mirrors checklists.services.drop_place. */
export function dropPlace(site: Site | undefined, anchor: Anchor | undefined): Record<string, number | null> {
  if (!site || !anchor || anchor.x_m === undefined || anchor.y_m === undefined) {
    return { corner_distance_m: null, building_depth_m: null };
  }
  let place: ReturnType<typeof facadePosition> = null;
  try {
    place = facadePosition(site.roof_outline ?? [], [anchor.x_m, anchor.y_m]);
  } catch {
    place = null;
  }
  if (place === null) return { corner_distance_m: 0, building_depth_m: 2 * site.height_m };
  return { corner_distance_m: place.corner_distance_m, building_depth_m: place.building_depth_m };
}

class MissingSource extends Error {
  readonly reading: boolean;
  constructor(message: string, reading = false) {
    super(message);
    this.reading = reading;
  }
}

function resolve(
  source: Source,
  context: Context,
  readings: Record<string, unknown>,
  outputs: Record<string, Record<string, unknown>>,
  serverOnly: ReadonlySet<string> = new Set(),
): unknown {
  const [kind, ref] = Object.entries(source)[0] ?? ["", ""];
  if (kind === "value") return ref;
  if (kind === "reading") {
    if (!(String(ref) in readings)) throw new MissingSource(`reading '${String(ref)}'`, true);
    return readings[String(ref)];
  }
  if (kind === "output") {
    const [itemKey = "", outKey = ""] = String(ref).split(".", 2);
    if (serverOnly.has(itemKey)) throw new MissingSource(`the result of ${itemKey.replace(/_/g, " ")}`);
    const value = outputs[itemKey]?.[outKey];
    if (value === undefined) throw new MissingSource(`output '${String(ref)}'`, true);
    return value;
  }
  const namespace = context[kind];
  const value = namespace?.[String(ref)];
  if (value === undefined || value === null) throw new MissingSource(`${kind} ${String(ref)}`);
  if (kind === "profile" && typeof value === "object") return (value as { value: unknown }).value;
  return value;
}

const REGISTER_WORDS: Record<string, string> = {
  profile: "the site's profile's",
  equipment: "this equipment's",
  robot: "the robot's",
  tether: "the tether's",
  safety_line: "the safety line's",
  hose: "the hose's",
  anchor: "the anchor's",
  drop: "the drop's",
};

/** What a calculation input is, in the sheet's words; mirrors verdicts.input_words. */
function inputWords(source: Source | undefined, labels: Record<string, string>, name: string): string {
  const pairs = source ? Object.entries(source) : [];
  if (pairs.length !== 1) return name.replace(/_/g, " ");
  const [kind, ref] = pairs[0]!;
  if (kind === "reading") return `the reading \u201c${labels[String(ref)] ?? String(ref)}\u201d`;
  if (kind === "output") {
    const [itemKey = "", outKey = ""] = String(ref).split(".", 2);
    return `the ${labelOf(outKey).toLowerCase()} worked out in \u201c${labels[itemKey] ?? itemKey}\u201d`;
  }
  if (kind === "value") return `the checklist's fixed ${name.replace(/_/g, " ")} (${String(ref)})`;
  const owner = REGISTER_WORDS[kind] ?? `the ${kind}'s`;
  return `${owner} ${String(ref).replace(/_/g, " ")}`;
}

const SOURCE_WORDS: Record<string, string> = {
  value: "a fixed value",
  profile: "the site's profile",
  equipment: "this equipment's rating",
  robot: "the robot's rating",
  tether: "the tether's rating",
  safety_line: "the safety line's rating",
  hose: "the hose's rating",
  anchor: "the anchor's certificate",
  drop: "the drop",
  reading: "another reading",
  output: "a calculation",
};

/** "Limit: at least 12 kN (from the site's profile)", or the source alone if the number is unknown. */
export function describeLimits(item: ChecklistItem, context: Context, labels: Record<string, string> = {}): string[] {
  const unit = item.unit ?? "";
  const lines: string[] = [];
  for (const bound of ["min", "max"] as const) {
    const source = item.limits?.[bound];
    if (!source) continue;
    const [kind = "value", ref = ""] = Object.entries(source)[0] ?? [];
    const from = SOURCE_WORDS[kind] ?? kind;
    const word = bound === "min" ? "at least" : "at most";
    try {
      const limit = Number(resolve(source, context, {}, {}));
      lines.push(`Limit: ${word} ${fmt(limit)} ${unit} (from ${from})`.replace(/\s+\)/, ")"));
    } catch {
      if (kind === "output") {
        lines.push(`Limit: ${word} ${inputWords(source, labels, String(ref))}, once it is worked out`);
      } else {
        const what = String(ref).replace(/_/g, " ");
        lines.push(`Limit: ${word} the value in ${from} (${what}); the server checks it`);
      }
    }
  }
  return lines;
}

export function fmt(value: number): string {
  if (!Number.isFinite(value)) return String(value);
  return Number(value.toPrecision(6)).toString();
}

/** Parse what was typed into a decimal field; a comma counts as the decimal mark. */
/** "2,600": a thousands separator or a decimal comma? Read the wrong way it is a figure a
 * thousand times off (2,600 kPa taken as 2.6 passed an "at most 2500" limit), so it is asked
 * again, in words that give both readings. A point stays a decimal point (a decimal keypad
 * gives the phone's own mark; three decimals typed with a point are meant). Null when the text
 * is not of that shape. */
export function ambiguousGrouping(text: string): string | null {
  const m = /^([-+]?)([1-9]\d{0,2}),(\d{3})$/.exec(text.trim());
  if (!m) return null;
  const [, sign = "", whole = "", part = ""] = m;
  return `${text.trim()}: ${sign}${whole}${part} or ${sign}${whole}.${part.replace(/0+$/, "") || "0"}? Type the figure without a thousands separator (${sign}${whole}${part}) or with fewer decimals.`;
}

export function parseDecimal(text: string): number | null {
  if (ambiguousGrouping(text) !== null) return null;
  const cleaned = text.trim().replace(",", ".");
  if (!/^[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?$/.test(cleaned)) return null;
  const value = Number(cleaned);
  return Number.isFinite(value) ? value : null;
}

function checkLimits(
  item: ChecklistItem,
  value: number,
  context: Context,
  readings: Record<string, unknown>,
  outputs: Record<string, Record<string, unknown>>,
): { verdict: LocalVerdict; margin: number | null; message: string } {
  const unit = item.unit ?? "";
  const margins: number[] = [];
  const problems: string[] = [];
  let used = false;
  for (const bound of ["min", "max"] as const) {
    const source = item.limits?.[bound];
    if (!source) continue;
    let limit: number;
    try {
      limit = Number(resolve(source, context, readings, outputs));
    } catch {
      return { verdict: "unknown", margin: null, message: "The server checks this against its limit." };
    }
    used = true;
    if (bound === "min") {
      margins.push(limit ? (value - limit) / Math.abs(limit) : value - limit);
      if (value < limit) problems.push(`${fmt(value)} ${unit} is below the minimum of ${fmt(limit)} ${unit}`);
    } else {
      margins.push(limit ? (limit - value) / Math.abs(limit) : limit - value);
      if (value > limit) problems.push(`${fmt(value)} ${unit} is above the maximum of ${fmt(limit)} ${unit}`);
    }
  }
  const margin = margins.length ? Math.min(...margins) : null;
  if (problems.length) return { verdict: "fail", margin, message: problems.join("; ") + "." };
  return { verdict: used ? "pass" : "recorded", margin, message: "" };
}

/** A timed series' schedule in seconds, its numbers resolved from their sources. */
export interface Schedule {
  interval_s: number;
  tolerance_s: number;
  min_duration_s: number;
  min_samples: number;
  /** How many readings a test kept on time takes to cover both min_samples and min_duration_s. */
  readings: number;
  /**
   * An older version's bare `interval_s`: the phone paces the readings by it, but the server
   * checks only their count, so neither is the spacing judged here.
   */
  legacy: boolean;
}

export type ScheduleResult = { ok: true; schedule: Schedule } | { ok: false; message: string };

const SECONDS_PER: Record<string, number> = { "": 1, s: 1, min: 60, h: 3600 };

/** A source's number in seconds; a profile threshold in minutes or hours is converted. */
function resolveSeconds(source: Source, context: Context): number {
  const [kind = "", ref = ""] = Object.entries(source)[0] ?? [];
  const value = Number(resolve(source, context, {}, {}));
  let unit = "s";
  if (kind === "profile") {
    const threshold = context.profile?.[String(ref)];
    if (threshold && typeof threshold === "object") unit = (threshold as Threshold).unit ?? "s";
  }
  const factor = SECONDS_PER[unit];
  if (factor === undefined || !Number.isFinite(value)) throw new MissingSource("not a time in seconds");
  return value * factor;
}

/**
 * The timing of a series item. Newer versions name a source for each number (`schedule`);
 * older ones carry only `interval_s`, read as that interval with no tolerance over
 * (min_samples - 1) intervals. A source the phone cannot find leaves the timing unknown, and
 * the phone then takes no readings (the server fails such an item).
 */
export function seriesSchedule(item: ChecklistItem, context: Context): ScheduleResult {
  const min_samples = item.min_samples ?? 3;
  let interval_s = item.interval_s ?? 30; // what versions without a schedule always used
  let tolerance_s = 0;
  let min_duration_s: number | null = null;
  const sources = item.schedule;
  if (sources) {
    const seconds = (source: Source | undefined) => {
      try {
        if (!source) throw new MissingSource("missing");
        return resolveSeconds(source, context);
      } catch {
        const [kind = "value", ref = ""] = Object.entries(source ?? {})[0] ?? [];
        throw new MissingSource(`${SOURCE_WORDS[kind] ?? kind}: ${String(ref).replace(/_/g, " ")}`);
      }
    };
    try {
      interval_s = seconds(sources.interval_s);
      tolerance_s = seconds(sources.tolerance_s);
      min_duration_s = seconds(sources.min_duration_s);
    } catch (error) {
      return {
        ok: false,
        message: `The phone does not know this test's timing (${(error as Error).message}); connect once to fetch it. The server checks the spacing.`,
      };
    }
  }
  min_duration_s ??= (min_samples - 1) * interval_s;
  if (!(interval_s > 0) || !(tolerance_s >= 0) || !(min_duration_s >= 0)) {
    return {
      ok: false,
      message: `This test's timing cannot be kept (one every ${fmt(interval_s)} s, ± ${fmt(tolerance_s)} s, over ${fmt(min_duration_s)} s); ask the competent person.`,
    };
  }
  const readings = Math.max(min_samples, Math.ceil(min_duration_s / interval_s - 1e-9) + 1);
  return {
    ok: true,
    schedule: { interval_s, tolerance_s, min_duration_s, min_samples, readings, legacy: !sources },
  };
}

/** "At least 7 readings over 180 s, one every 30 s (± 10 s)." */
export function describeSchedule(schedule: Schedule): string {
  const { readings, min_duration_s, interval_s, tolerance_s, legacy } = schedule;
  if (legacy) return `At least ${readings} readings, one every ${fmt(interval_s)} s.`;
  return `At least ${readings} readings over ${fmt(min_duration_s)} s, one every ${fmt(interval_s)} s (± ${fmt(tolerance_s)} s).`;
}

/**
 * What a series' times fall short of, as the server words it (checklists/verdicts.py with
 * compliance/engineering/decay.py schedule_problems, same arithmetic on the same numbers):
 * `spacing` can no longer be mended, the test must start again; `shortfall` is what it still
 * has to do. Times count from the first reading, and a gap or a duration exactly at its edge
 * keeps the schedule though floats make it a hair over (SLACK_S). A legacy schedule is judged on
 * the count alone.
 */
export function scheduleProblems(times: number[], schedule: Schedule): { spacing: string[]; shortfall: string[] } {
  const { interval_s, tolerance_s, min_duration_s, min_samples, readings, legacy } = schedule;
  const t0 = times[0] ?? 0;
  const rel = times.map((t) => t - t0);
  const spacing: string[] = [];
  const shortfall: string[] = [];
  if (legacy) {
    if (rel.length < min_samples) shortfall.push(`${rel.length} of at least ${min_samples} readings`);
    return { spacing, shortfall };
  }
  const gaps = rel.slice(1).map((t, n) => t - rel[n]!);
  const plan = `one every ${fmt(interval_s)} s (± ${fmt(tolerance_s)} s)`;
  const shortest = gaps.length ? Math.min(...gaps) : interval_s;
  const longest = gaps.length ? Math.max(...gaps) : interval_s;
  if (shortest < interval_s - tolerance_s - SLACK_S) spacing.push(`two readings were ${fmt(shortest)} s apart; the test needs ${plan}`);
  if (longest > interval_s + tolerance_s + SLACK_S) spacing.push(`two readings were ${fmt(longest)} s apart; the test needs ${plan}`);
  const duration = rel.length ? rel[rel.length - 1]! : 0;
  if (rel.length < min_samples || duration < min_duration_s - SLACK_S) {
    shortfall.push(
      rel.length < readings
        ? `${rel.length} of at least ${readings} readings`
        : `the test has run ${fmt(duration)} s; it must run at least ${fmt(min_duration_s)} s`,
    );
  }
  return { spacing, shortfall };
}

/**
 * Whether a reading taken `at` seconds after Start would already fail the spacing: the gap from
 * the last reading, counted as the server counts it, longer than interval + tolerance.
 */
export function readingLate(times: number[], at: number, schedule: Schedule): boolean {
  if (schedule.legacy || !times.length) return false;
  const t0 = times[0]!;
  return at - t0 - (times[times.length - 1]! - t0) > schedule.interval_s + schedule.tolerance_s + SLACK_S;
}

/** A sample's time: seconds rounded to 0.1. */
export function sampleTime(ms: number): number {
  return Math.round(ms / 100) / 10;
}

function sentence(parts: string[]): string {
  const text = parts.join("; ");
  return `${text.charAt(0).toUpperCase()}${text.slice(1)}.`;
}

/**
 * An item whose field has focus. It keeps its place (`failed`: it was in the stop-work block
 * when the field took the focus), so the field never moves under the thumb; a reading also keeps
 * the verdict of `text`, what was last committed (the field left, Enter, a pause in typing),
 * never of a number half typed.
 */
export interface Steady {
  failed: boolean;
  text?: string;
}

/** The draft as it is judged: readings being typed count with what was last committed. */
export function committedDraft(draft: Draft, steady: Record<string, Steady>): Draft {
  const held = Object.entries(steady).filter(([, s]) => s.text !== undefined);
  if (!held.length) return draft;
  const readings = { ...draft.readings };
  for (const [key, s] of held) readings[key] = s.text!;
  return { ...draft, readings };
}

const NEVER_BELOW_ZERO = new Set(["m/s", "kPa", "kN", "kg", "s", "L/min", "L", "mm", "m"]);

const SEVERITY: Partial<Record<LocalVerdict, number>> = { fail: 0, unknown: 1, missing: 1 };

/** The draft judged against every drop its subject serves, the worse governing each item
 * (mirrors checklists.services.evaluate_for_drops): a line on a 10 m and a 114 m drop is
 * checked at both, and a result that differs by drop names the drop that governed. */
export function evaluateForDrops(items: ChecklistItem[], draft: Draft, contexts: { label: string; context: Context }[]): ItemView[] {
  const all = contexts.map(({ label, context }) => ({ label, views: evaluateDraft(items, draft, context) }));
  if (all.length < 2) return all[0]?.views ?? [];
  return all[0]!.views.map((_, index) => {
    const options = all.map(({ label, views }) => ({ label, view: views[index]! }));
    const rank = (v: ItemView) => [SEVERITY[v.verdict] ?? 2, v.margin ?? Infinity] as const;
    const worst = options.reduce((a, b) => {
      const [ra, rb] = [rank(a.view), rank(b.view)];
      return rb[0] < ra[0] || (rb[0] === ra[0] && rb[1] < ra[1]) ? b : a;
    });
    const same = options.every((o) => o.view.verdict === worst.view.verdict && o.view.margin === worst.view.margin && o.view.message === worst.view.message);
    if (same) return worst.view;
    return { ...worst.view, message: worst.view.message ? `Drop ${worst.label}: ${worst.view.message}` : "" };
  });
}

/** Every item in order with what the phone can say about it now. */
export function evaluateDraft(items: ChecklistItem[], draft: Draft, context: Context): ItemView[] {
  const labels = Object.fromEntries(items.map((i) => [i.key, i.label]));
  const readings: Record<string, unknown> = {};
  const outputs: Record<string, Record<string, unknown>> = {};
  const views: ItemView[] = [];
  // Calculations only the server can run on this sheet (a rating the phone lacks), by item key.
  const serverOnly = new Set<string>();
  for (const item of items) {
    const base = {
      item,
      margin: null,
      limits: describeLimits(item, context, labels),
      ...cautionBand(item, context, readings, outputs, serverOnly),
    };
    switch (item.kind) {
      case "tick": {
        const value = draft.ticks[item.key];
        views.push({
          ...base,
          verdict: value ?? "missing",
          message: "",
        });
        break;
      }
      case "reading": {
        const text = draft.readings[item.key] ?? "";
        const value = parseDecimal(text);
        const ambiguous = ambiguousGrouping(text);
        if (ambiguous !== null) {
          views.push({ ...base, verdict: "missing", message: ambiguous });
          break;
        }
        if (value === null) {
          const tooLarge = /^[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?$/.test(text.trim().replace(",", "."));
          const notANumber = item.unit ? `Not a number: type the figure alone, in ${item.unit}.` : "Not a number.";
          const message = !text.trim() ? "" : tooLarge ? "Too large a number." : notANumber;
          views.push({ ...base, verdict: "missing", message });
          break;
        }
        if (value < 0 && item.unit && NEVER_BELOW_ZERO.has(item.unit)) {
          // A slipped sign: the server refuses it by name (checklists.verdicts.NEVER_BELOW_ZERO).
          views.push({ ...base, verdict: "missing", message: `A reading in ${item.unit} is never below zero: check the sign.` });
          break;
        }
        readings[item.key] = value;
        views.push({ ...base, ...checkLimits(item, value, context, readings, outputs) });
        break;
      }
      case "series": {
        const samples = draft.series[item.key] ?? [];
        if (samples.length >= (item.min_samples ?? 3)) readings[item.key] = samples;
        const timing = seriesSchedule(item, context);
        if (!timing.ok) {
          views.push({ ...base, verdict: samples.length ? "unknown" : "missing", message: timing.message });
          break;
        }
        const { spacing, shortfall } = scheduleProblems(samples.map((s) => s[0]!), timing.schedule);
        if (spacing.length) {
          const message = `The test did not keep its schedule: ${spacing.join("; ")}. Start it again.`;
          views.push({ ...base, verdict: "fail", message });
        } else if (shortfall.length) {
          views.push({ ...base, verdict: "missing", message: sentence(shortfall) });
        } else {
          views.push({ ...base, verdict: "recorded", message: "" });
        }
        break;
      }
      case "calc": {
        const inputs: Record<string, unknown> = {};
        let missing: MissingSource | null = null;
        for (const [name, source] of Object.entries(item.inputs ?? {})) {
          try {
            inputs[name] = resolve(source, context, readings, outputs, serverOnly);
          } catch (error) {
            missing = error as MissingSource;
            break;
          }
        }
        if (missing) {
          if (!missing.reading) serverOnly.add(item.key);
          views.push({
            ...base,
            verdict: missing.reading ? "missing" : "unknown",
            message: missing.reading
              ? "Computed once the readings it needs are in."
              : `The server computes this (the phone does not know ${missing.message}).`,
          });
          break;
        }
        try {
          const result = run(item.calc ?? "", inputs);
          outputs[item.key] = result.outputs;
          const check = result.governing.replace(/_/g, " ");
          const margin = result.margin;
          const short = margin === null ? "" : ` (margin ${wholePct(margin, false)})`;
          views.push({
            ...base,
            // Resolved again: the band may draw on this calculation's own outputs.
            ...cautionBand(item, context, readings, outputs, serverOnly),
            verdict: result.verdict,
            margin,
            calc: result,
            // As the server words it (checklists/verdicts.py): the calculation's reason first.
            message: result.verdict === "pass" ? "" : result.reason || `Fails its ${check} check${short}.`,
          });
        } catch (error) {
          if (error instanceof UnknownCalculation) {
            serverOnly.add(item.key);
            views.push({ ...base, verdict: "unknown", message: "The server computes this when the sheet is sent." });
          } else if (error instanceof CalcInputError) {
            const said = `${inputWords(item.inputs?.[error.field], labels, error.field)} ${error.problem}`;
            views.push({ ...base, verdict: "fail", message: `Cannot compute: ${said}.` });
          } else {
            throw error;
          }
        }
        break;
      }
      case "photo": {
        const photos = draft.photos[item.key] ?? [];
        views.push({
          ...base,
          verdict: item.required && photos.length === 0 ? "missing" : "recorded",
          message: item.required && photos.length === 0 ? "A photo is required." : "",
        });
        break;
      }
      case "note":
        views.push({ ...base, verdict: "recorded", message: "" });
        break;
    }
  }
  return views;
}

/**
 * A margin in whole percent, rounded toward its verdict so a failing one never reads "+0 %":
 * failing margins round down (-0.4 % shows "-1 %"), passing ones down to zero. Mirrors
 * compliance.engineering.working.whole_pct.
 */
export function wholePct(fraction: number, passed: boolean): string {
  if (!Number.isFinite(fraction)) return num(fraction);
  let whole = Math.floor(fraction * 100);
  if (!passed) whole = Math.min(whole, -1);
  else if (whole < 0) whole = 0;
  return `${whole >= 0 ? "+" : "-"}${Math.abs(whole)} %`;
}

/** Whether a verdict shows the caution: a pass whose margin is under the item's band. */
export function nearLimit(verdict: LocalVerdict, margin: number | null, band: number | null): boolean {
  return verdict === "pass" && margin !== null && band !== null && margin < band;
}

/**
 * The item's caution band and its reason, as the server resolves it (checklists/verdicts.py
 * `_caution_below`). A band that cannot be found, or is not a finite number, is no band.
 */
function cautionBand(
  item: ChecklistItem,
  context: Context,
  readings: Record<string, unknown>,
  outputs: Record<string, Record<string, unknown>>,
  serverOnly: ReadonlySet<string>,
): { band: number | null; bandReason: string } {
  const source = item.caution_below;
  if (!source) return { band: null, bandReason: "" };
  let band: unknown;
  try {
    band = resolve(source, context, readings, outputs, serverOnly);
  } catch {
    return { band: null, bandReason: "" };
  }
  if (typeof band !== "number" || !Number.isFinite(band)) return { band: null, bandReason: "" };
  const [kind = "", ref = ""] = Object.entries(source)[0] ?? [];
  const threshold = kind === "profile" ? context.profile?.[String(ref)] : undefined;
  const reason = threshold && typeof threshold === "object" ? (threshold as Threshold).source : undefined;
  return { band, bandReason: typeof reason === "string" ? reason.trim() : "" };
}

/**
 * Failed blocking items first (stop work), then the rest in the checklist's order. An item held
 * steady (its field has focus) stays in the part it was in when the field took the focus.
 */
export function ordered(
  views: ItemView[],
  steady: Record<string, Steady> = {},
): { failed: ItemView[]; rest: ItemView[] } {
  const failed = views.filter((v) => steady[v.item.key]?.failed ?? (v.item.blocking && v.verdict === "fail"));
  return { failed, rest: views.filter((v) => !failed.includes(v)) };
}

/** The sheet's verdict as the phone sees it, as the server words it: failed if any item failed. */
export function localVerdict(views: ItemView[]): "pass" | "fail" {
  return views.some((v) => v.verdict === "fail") ? "fail" : "pass";
}

/** Items that still need an answer before the sheet can be saved. */
export function stillNeeded(views: ItemView[]): ItemView[] {
  return views.filter((v) => v.verdict === "missing" && v.item.kind !== "calc");
}

export function toEntries(items: ChecklistItem[], draft: Draft): Record<string, Entry> {
  const entries: Record<string, Entry> = {};
  for (const item of items) {
    const key = item.key;
    if (item.kind === "tick" && draft.ticks[key]) entries[key] = { value: draft.ticks[key] };
    if (item.kind === "reading") {
      const value = parseDecimal(draft.readings[key] ?? "");
      if (value !== null) entries[key] = { value, unit: item.unit ?? "" };
    }
    if (item.kind === "series" && draft.series[key]?.length)
      entries[key] = { value: draft.series[key], unit: item.unit ?? "" };
    if (item.kind === "photo" && draft.photos[key]?.length)
      entries[key] = { value: draft.photos[key].map((p) => p.uuid) };
    if (item.kind === "note" && draft.notes[key]?.trim()) entries[key] = { value: draft.notes[key] };
  }
  return entries;
}

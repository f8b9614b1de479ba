/**
 * A site's daily records laid out by month and day for reading (the auditor's pages): which
 * months there are, each day of a month with its signed records, addenda and sheets, and the
 * day's state in words. Pure: no requests, no DOM, so it is tested on its own.
 */
import type { components } from "../api-schema";
import type { DailyRecord } from "../types";
import type { SignKind } from "../ui/signs";

export type Sheet = components["schemas"]["Sheet"];

const MONTH = /^(\d{4})-(0[1-9]|1[0-2])$/;
const DAY = /^(\d{4})-(0[1-9]|1[0-2])-(0[1-9]|[12]\d|3[01])$/;

const pad = (n: number) => String(n).padStart(2, "0");

/** A Date's calendar day on this computer as YYYY-MM-DD. */
function localDay(d: Date): string {
  return `${d.getFullYear()}-${pad(d.getMonth() + 1)}-${pad(d.getDate())}`;
}

/** "2026-12" when the text is a month, else null. */
export function asMonth(text: string | undefined): string | null {
  return text && MONTH.test(text) ? text : null;
}

/** "2026-12-03" when the text is a real calendar day, else null. */
export function asDay(text: string | undefined): string | null {
  const m = text ? DAY.exec(text) : null;
  if (!m) return null;
  const d = new Date(Number(m[1]), Number(m[2]) - 1, Number(m[3]));
  return localDay(d) === text ? text! : null;
}

/** A month's first and last day, as the list endpoints' `start` and `end`. */
export function monthBounds(month: string): { start: string; end: string } {
  const [y, m] = month.split("-").map(Number) as [number, number];
  const last = new Date(y, m, 0).getDate();
  return { start: `${month}-01`, end: `${month}-${pad(last)}` };
}

/** The month `steps` months from `month` (negative: earlier). */
export function monthFrom(month: string, steps: number): string {
  const [y, m] = month.split("-").map(Number) as [number, number];
  const d = new Date(y, m - 1 + steps, 1);
  return `${d.getFullYear()}-${pad(d.getMonth() + 1)}`;
}

/** The day `steps` days from `day` on the calendar. */
export function dayFrom(day: string, steps: number): string {
  const [y, m, d] = day.split("-").map(Number) as [number, number, number];
  return localDay(new Date(y, m - 1, d + steps));
}

function dateOf(day: string): Date {
  const [y, m, d] = day.split("-").map(Number) as [number, number, number];
  return new Date(y, m - 1, d);
}

/** "December 2026" in this computer's language. */
export function monthWords(month: string): string {
  return dateOf(`${month}-01`).toLocaleDateString([], { month: "long", year: "numeric" });
}

/**
 * "Wednesday 2 December 2026" (`long`), "Wed 2 Dec 2026" (`short`) or, inside a month's table,
 * "Wed 2 Dec" (`month`), in this computer's language.
 */
export function dayWords(day: string, style: "long" | "short" | "month" = "short"): string {
  const long = style === "long";
  return dateOf(day).toLocaleDateString([], {
    weekday: long ? "long" : "short",
    day: "numeric",
    month: long ? "long" : "short",
    ...(style === "month" ? {} : { year: "numeric" }),
  });
}

export interface MonthCount {
  month: string;
  records: number;
  addenda: number;
}

/**
 * The months to offer, newest first: from the month of the site's oldest record (or twelve
 * months back, if that is later) to the current month, each with its signed records and addenda.
 */
export function monthsOf(records: DailyRecord[], today: string): MonthCount[] {
  const current = today.slice(0, 7);
  let oldest = monthFrom(current, -11);
  for (const r of records) if (r.date.slice(0, 7) < oldest) oldest = r.date.slice(0, 7);
  const out: MonthCount[] = [];
  for (let month = current; month >= oldest; month = monthFrom(month, -1)) {
    const mine = records.filter((r) => r.date.startsWith(`${month}-`));
    out.push({ month, records: mine.filter((r) => r.kind === "record").length, addenda: mine.filter((r) => r.kind === "addendum").length });
  }
  return out;
}

export interface RecordDay {
  date: string;
  /** The day's signed records (one per job; usually one). */
  records: DailyRecord[];
  addenda: DailyRecord[];
  sheets: Sheet[];
}

/**
 * Every day of the month with its records, addenda and sheets, each on its job's date (the
 * server gives a sheet its job's date, whatever the phone's clock said when it was filled).
 */
export function monthDays(month: string, records: DailyRecord[], sheets: Sheet[]): RecordDay[] {
  const { start, end } = monthBounds(month);
  const days = new Map<string, RecordDay>();
  for (let d = start; d <= end; d = dayFrom(d, 1)) {
    days.set(d, { date: d, records: [], addenda: [], sheets: [] });
  }
  for (const r of records) {
    const day = days.get(r.date);
    if (day) (r.kind === "addendum" ? day.addenda : day.records).push(r);
  }
  for (const s of sheets) days.get(s.date)?.sheets.push(s);
  return [...days.values()];
}

export interface DayState {
  key: "signed" | "unsigned" | "open" | "none";
  sign: SignKind | null;
  word: string;
}

/**
 * A day's state in words, with its ISO 3864-1 sign: signed (safe condition); sheets but no
 * signed record on a past day (caution), or today or later (must do); nothing at all (no sign).
 */
export function dayState(day: RecordDay, today: string): DayState {
  if (day.records.length) return { key: "signed", sign: "safe", word: "Signed" };
  if (day.sheets.length) {
    return day.date < today
      ? { key: "unsigned", sign: "caution", word: "Not signed: sheets without a signed record" }
      : { key: "open", sign: "mustdo", word: "Not signed yet: sheets filled" };
  }
  return { key: "none", sign: null, word: "No sheets, no record" };
}

export function plural(n: number, one: string, many: string): string {
  return `${n} ${n === 1 ? one : many}`;
}

const VERDICT_WORDS: Record<Sheet["verdict"], string> = {
  pass: "pass",
  fail: "fail",
  na: "not applicable",
  recorded: "recorded",
};

/** "17 sheets: 16 pass, 1 fail", or "No sheets". */
export function sheetsWords(sheets: Sheet[]): string {
  if (!sheets.length) return "No sheets";
  const counts = (Object.keys(VERDICT_WORDS) as Sheet["verdict"][])
    .map((v) => [v, sheets.filter((s) => s.verdict === v).length] as const)
    .filter(([, n]) => n > 0)
    .map(([v, n]) => `${n} ${VERDICT_WORDS[v]}`);
  return `${plural(sheets.length, "sheet", "sheets")}: ${counts.join(", ")}`;
}

/** A day's records and sheets by the job they belong to, in job order: two jobs of one day (two
 * crews, or a second job planned later) each keep their own record, sheets and verdicts, rather
 * than one list in which no sheet says whose it is. */
export function byJob<R extends { job: number }>(records: R[], sheets: Sheet[]): { job: number; records: R[]; sheets: Sheet[] }[] {
  const jobs = [...new Set([...records.map((r) => r.job), ...sheets.map((s) => s.job)])].sort((a, b) => a - b);
  return jobs.map((job) => ({
    job,
    records: records.filter((r) => r.job === job),
    sheets: sheets.filter((s) => s.job === job),
  }));
}

export function verdictWord(verdict: Sheet["verdict"]): string {
  const word = VERDICT_WORDS[verdict] ?? verdict;
  return word.charAt(0).toUpperCase() + word.slice(1);
}

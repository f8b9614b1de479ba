/** The result every calculation returns, and how checks become a verdict; a port of result.py. */
import { CAUTION } from "./constants";
import { pct } from "./working";

export type OutputValue = number | string | null;
export type InputValue = number | string | [number, number][];
type Verdict = "pass" | "fail";

export interface CalcResult {
  name: string;
  inputs: Record<string, InputValue>;
  outputs: Record<string, OutputValue>;
  verdict: Verdict;
  margin: number | null;
  governing: string;
  steps: string[];
  reason: string;
  caution: string;
}

export interface Calculation {
  name: string;
  title: string;
  run(inputs: unknown): CalcResult;
}

/** One limit a calculation tests: margin = capacity/demand - 1 (null when unbounded). An
 * inconclusive check (a rising or scattered series) fails with no margin; `reason` says in words
 * what it found. */
export interface Check {
  key: string;
  margin: number | null;
  gate?: boolean;
  reason?: string;
  inconclusive?: boolean;
}

export function check(
  key: string,
  margin: number | null,
  gate = false,
  extra: { reason?: string; inconclusive?: boolean } = {},
): Check {
  return { key, margin, gate, ...extra };
}

const passed = (c: Check) => !c.inconclusive && (c.margin === null || c.margin >= 0);
const marginOf = (c: Check) => (c.margin === null ? Infinity : c.margin);

export function ratioMargin(capacity: number, demand: number): number | null {
  if (demand === 0) return null;
  return capacity / demand - 1;
}

function worst(checks: Check[]): Check {
  return checks.reduce((a, b) => (marginOf(b) < marginOf(a) ? b : a));
}

/** The check that decides the verdict; mirrors result.governing_check. */
function governingCheck(checks: Check[]): Check | null {
  const gates = checks.filter((c) => !passed(c) && c.gate);
  const failing = gates.length ? gates : checks.filter((c) => !passed(c));
  if (failing.length) {
    const definite = failing.filter((c) => !c.inconclusive);
    return definite.length ? worst(definite) : failing[0]!;
  }
  const bounded = checks.filter((c) => !c.gate && c.margin !== null);
  if (bounded.length) return worst(bounded);
  return checks.find((c) => !c.gate) ?? null;
}

function decide(checks: Check[]): [Verdict, number | null, string] {
  const w = governingCheck(checks);
  if (w === null) return ["pass", null, "none"];
  const verdict: Verdict = checks.every(passed) ? "pass" : "fail";
  return [verdict, w.inconclusive ? null : w.margin, w.key];
}

const jsonNumber = (v: number): number | null => (Number.isFinite(v) ? v : null);

export function build(args: {
  name: string;
  inputs: Record<string, InputValue>;
  outputs: Record<string, OutputValue>;
  checks: Check[];
  steps: string[];
}): CalcResult {
  const [verdict, rawMargin, governing] = decide(args.checks);
  const margin = rawMargin !== null && !Number.isFinite(rawMargin) ? null : rawMargin;
  const w = governingCheck(args.checks);
  const shown = w?.inconclusive ? "none: inconclusive" : margin === null ? "unbounded" : pct(margin);
  const outputs: Record<string, OutputValue> = {};
  for (const [k, v] of Object.entries(args.outputs)) outputs[k] = typeof v === "number" ? jsonNumber(v) : v;
  return {
    name: args.name,
    inputs: { ...args.inputs },
    outputs,
    verdict,
    margin,
    governing,
    steps: [...args.steps, `verdict: ${verdict} (governing check ${governing}, margin ${shown})`],
    reason: verdict === "fail" ? (w?.reason ?? "") : "",
    caution: CAUTION,
  };
}

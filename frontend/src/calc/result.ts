/** The result every calculation returns, and how checks become a verdict; a port of result.py. */
import { CAUTION } from "./constants";
import { pct } from "./working";

export type OutputValue = number | string | null;
export type InputValue = number | string | [number, number][];
export type Verdict = "pass" | "fail";

export interface CalcResult {
  name: string;
  inputs: Record<string, InputValue>;
  outputs: Record<string, OutputValue>;
  verdict: Verdict;
  margin: number | null;
  governing: string;
  steps: string[];
  caution: string;
}

export interface Calculation {
  name: string;
  title: string;
  run(inputs: unknown): CalcResult;
}

/** One limit a calculation tests: margin = capacity/demand - 1 (null when unbounded). */
export interface Check {
  key: string;
  margin: number | null;
  gate?: boolean;
}

export function check(key: string, margin: number | null, gate = false): Check {
  return { key, margin, gate };
}

const passed = (c: Check) => c.margin === null || c.margin >= 0;
const marginOf = (c: Check) => (c.margin === null ? Infinity : c.margin);

export function ratioMargin(capacity: number, demand: number): number | null {
  if (demand === 0) return null;
  return capacity / demand - 1;
}

function worst(checks: Check[]): Check {
  return checks.reduce((a, b) => (marginOf(b) < marginOf(a) ? b : a));
}

export function decide(checks: Check[]): [Verdict, number | null, string] {
  const gates = checks.filter((c) => !passed(c) && c.gate);
  const failing = gates.length ? gates : checks.filter((c) => !passed(c));
  if (failing.length) {
    const w = worst(failing);
    return ["fail", w.margin, w.key];
  }
  const bounded = checks.filter((c) => !c.gate && c.margin !== null);
  if (bounded.length) {
    const w = worst(bounded);
    return ["pass", w.margin, w.key];
  }
  const ungated = checks.filter((c) => !c.gate);
  return ["pass", null, ungated[0]?.key ?? "none"];
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
  const shown = margin === null ? "unbounded" : pct(margin);
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
    caution: CAUTION,
  };
}

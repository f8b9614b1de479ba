/**
 * Declared input fields and the one validator that checks them; a port of inputs.py.
 * Validation stops at the first bad field: unknown fields first (in the order given), then the
 * declared fields in their declared order, then the cross-field rules in their declared order.
 */
import { CAUTION } from "./constants";
import { CalcInputError, OutOfRange } from "./errors";
import { build, type CalcResult, type Calculation, type Check, type InputValue, type OutputValue } from "./result";
import { num } from "./working";

type FieldKind = "number" | "integer" | "choice" | "series";

export interface Field {
  name: string;
  kind: FieldKind;
  unit: string;
  description: string;
  required: boolean;
  default: number | string | null;
  greaterThan?: number;
  atLeast?: number;
  atMost?: number;
  limitReason: string;
  choices: string[];
  minItems: number;
}

interface NumberOptions {
  greaterThan?: number;
  atLeast?: number;
  atMost?: number;
  limitReason?: string;
  default?: number;
  optional?: boolean;
}

export function number(name: string, unit: string, description: string, o: NumberOptions = {}): Field {
  return {
    name,
    kind: "number",
    unit,
    description,
    required: o.default === undefined && !o.optional,
    default: o.default ?? null,
    greaterThan: o.greaterThan,
    atLeast: o.atLeast,
    atMost: o.atMost,
    limitReason: o.limitReason ?? "",
    choices: [],
    minItems: 0,
  };
}

export function integer(name: string, unit: string, description: string, o: { atLeast: number; atMost?: number }): Field {
  return { ...number(name, unit, description, { atLeast: o.atLeast, atMost: o.atMost }), kind: "integer" };
}

export function choice(name: string, description: string, choices: string[], o: { default?: string } = {}): Field {
  return {
    ...number(name, "", description),
    kind: "choice",
    required: o.default === undefined,
    default: o.default ?? null,
    choices,
  };
}

export function series(
  name: string,
  unit: string,
  description: string,
  o: { minItems: number; atLeast: number; atMost: number; limitReason: string },
): Field {
  return {
    ...number(name, unit, description, { atLeast: o.atLeast, atMost: o.atMost, limitReason: o.limitReason }),
    kind: "series",
    minItems: o.minItems,
  };
}

export type Rule =
  | { rule: "exactlyOne"; alternatives: string[][] }
  | { rule: "atMostOne"; names: string[] }
  | { rule: "together"; names: string[] }
  | { rule: "atMostFractionOf"; name: string; other: string; fraction: number; reason: string }
  | { rule: "atMostWhen"; name: string; maximum: number; when: string; value: string; reason: string }
  | { rule: "onlyWhen"; name: string; when: string; value: string };

/** Validated, normalised inputs with typed access. */
export class Inputs {
  private readonly values: Record<string, InputValue>;
  constructor(values: Record<string, InputValue>) {
    this.values = { ...values };
  }
  asDict(): Record<string, InputValue> {
    return { ...this.values };
  }
  has(name: string): boolean {
    return name in this.values;
  }
  number(name: string): number {
    const value = this.values[name];
    if (typeof value === "number") return value;
    throw new TypeError(`${name} is not a number`);
  }
  optionalNumber(name: string): number | null {
    return this.has(name) ? this.number(name) : null;
  }
  integer(name: string): number {
    return this.number(name);
  }
  text(name: string): string {
    const value = this.values[name];
    if (typeof value === "string") return value;
    throw new TypeError(`${name} is not text`);
  }
  series(name: string): [number, number][] {
    const value = this.values[name];
    if (Array.isArray(value)) return value;
    throw new TypeError(`${name} is not a series`);
  }
}

/** `value` as a finite number; -0 becomes 0. JSON.parse reads an integer too large for a double
 * as Infinity, which is refused here as the server refuses the integer itself. */
function finiteNumber(field: string, value: unknown, what = ""): number {
  const prefix = what ? `${what} ` : "";
  if (typeof value === "boolean") throw new CalcInputError(field, `${prefix}must be a number, not true or false`);
  if (typeof value === "string") throw new CalcInputError(field, `${prefix}must be a number, not text`);
  if (typeof value !== "number") throw new CalcInputError(field, `${prefix}must be a number`);
  if (!Number.isFinite(value)) throw new CalcInputError(field, `${prefix}must be a finite number`);
  return value + 0;
}

function checkBounds(spec: Field, value: number, what = ""): void {
  const prefix = what ? `${what} ` : "";
  const unit = spec.unit ? ` ${spec.unit}` : "";
  const reason = spec.limitReason ? ` (${spec.limitReason})` : "";
  if (spec.greaterThan !== undefined && value <= spec.greaterThan) {
    if (spec.greaterThan === 0) {
      throw new CalcInputError(spec.name, `${prefix}${value < 0 ? "cannot be negative" : "must be greater than zero"}`);
    }
    throw new CalcInputError(spec.name, `${prefix}must be greater than ${num(spec.greaterThan, 6)}${unit}`);
  }
  if (spec.atLeast !== undefined && value < spec.atLeast) {
    if (spec.atLeast === 0) throw new CalcInputError(spec.name, `${prefix}cannot be negative`);
    throw new CalcInputError(spec.name, `${prefix}must be at least ${num(spec.atLeast, 6)}${unit}`);
  }
  if (spec.atMost !== undefined && value > spec.atMost) {
    throw new CalcInputError(spec.name, `${prefix}must be at most ${num(spec.atMost, 6)}${unit}${reason}`);
  }
}

function validateField(spec: Field, raw: unknown): InputValue {
  switch (spec.kind) {
    case "number": {
      const value = finiteNumber(spec.name, raw);
      checkBounds(spec, value);
      return value;
    }
    case "integer": {
      const value = finiteNumber(spec.name, raw);
      if (!Number.isInteger(value)) throw new CalcInputError(spec.name, "must be a whole number");
      checkBounds(spec, value);
      return value;
    }
    case "choice": {
      const allowed = spec.choices.map((c) => `"${c}"`).join(", ");
      if (typeof raw !== "string") throw new CalcInputError(spec.name, `must be text, one of ${allowed}`);
      const wanted = raw.trim().toLowerCase();
      const found = spec.choices.find((c) => c.toLowerCase() === wanted);
      if (found === undefined) throw new CalcInputError(spec.name, `unknown value "${raw}"; use one of ${allowed}`);
      return found;
    }
    case "series": {
      if (!Array.isArray(raw)) throw new CalcInputError(spec.name, "must be a list of [seconds, value] pairs");
      if (raw.length < spec.minItems) {
        throw new CalcInputError(spec.name, `needs at least ${spec.minItems} samples, got ${raw.length}`);
      }
      const pairs: [number, number][] = [];
      raw.forEach((item: unknown, n: number) => {
        const what = `sample ${n + 1}`;
        if (!Array.isArray(item) || item.length !== 2) {
          throw new CalcInputError(spec.name, `${what} must be a [seconds, value] pair`);
        }
        const seconds = finiteNumber(spec.name, item[0], `${what} time`);
        const value = finiteNumber(spec.name, item[1], `${what} value`);
        if (seconds < 0) throw new CalcInputError(spec.name, `${what} time cannot be negative`);
        const last = pairs[pairs.length - 1];
        if (last && seconds <= last[0]) {
          throw new CalcInputError(
            spec.name,
            `${what} time must be later than the sample before it (${num(last[0])} s); times must strictly increase`,
          );
        }
        checkBounds(spec, value, `${what} value`);
        pairs.push([seconds, value]);
      });
      return pairs;
    }
  }
}

function applyRule(rule: Rule, values: Record<string, InputValue>): void {
  const given = (names: string[]) => names.filter((n) => n in values);
  switch (rule.rule) {
    case "exactlyOne": {
      const complete: string[][] = [];
      for (const group of rule.alternatives) {
        const have = given(group);
        if (have.length && have.length < group.length) {
          const missing = group.find((n) => !(n in values))!;
          throw new CalcInputError(missing, `is required with ${have[0]}`);
        }
        if (have.length) complete.push(group);
      }
      const described = rule.alternatives.map((g) => g.join(" with ")).join(" or ");
      if (!complete.length) throw new CalcInputError(rule.alternatives[0]![0]!, `is required (give ${described})`);
      if (complete.length > 1) throw new CalcInputError(complete[1]![0]!, `give ${described}, not more than one`);
      return;
    }
    case "atMostOne": {
      const have = given(rule.names);
      if (have.length > 1) throw new CalcInputError(have[1]!, `give either ${have[0]} or ${have[1]}, not both`);
      return;
    }
    case "together": {
      const have = given(rule.names);
      if (have.length && have.length < rule.names.length) {
        const missing = rule.names.find((n) => !(n in values))!;
        throw new CalcInputError(missing, `is required with ${have[0]}`);
      }
      return;
    }
    case "atMostFractionOf": {
      const value = values[rule.name];
      const other = values[rule.other];
      if (typeof value === "number" && typeof other === "number" && value > rule.fraction * other) {
        throw new CalcInputError(
          rule.name,
          `must be at most ${num(rule.fraction)} × ${rule.other} = ${num(rule.fraction * other)} (${rule.reason})`,
        );
      }
      return;
    }
    case "atMostWhen": {
      const value = values[rule.name];
      if (values[rule.when] === rule.value && typeof value === "number" && value > rule.maximum) {
        throw new CalcInputError(
          rule.name,
          `must be at most ${num(rule.maximum)} when ${rule.when} is "${rule.value}" (${rule.reason})`,
        );
      }
      return;
    }
    case "onlyWhen":
      if (rule.name in values && values[rule.when] !== rule.value) {
        throw new CalcInputError(rule.name, `applies only when ${rule.when} is "${rule.value}"`);
      }
  }
}

/** Check `raw` against the fields and rules; throw CalcInputError on the first problem. */
function validate(fields: Field[], rules: Rule[], raw: unknown): Inputs {
  if (raw === null || typeof raw !== "object" || Array.isArray(raw)) {
    throw new CalcInputError("inputs", "must be an object of named values");
  }
  const given = raw as Record<string, unknown>;
  const known = new Set(fields.map((f) => f.name));
  for (const key of Object.keys(given)) {
    if (!known.has(key)) throw new CalcInputError(key, "is not an input of this calculation");
  }
  const values: Record<string, InputValue> = {};
  for (const spec of fields) {
    const value = given[spec.name];
    if (value === undefined || value === null) {
      if (spec.default !== null) values[spec.name] = spec.default;
      else if (spec.required) throw new CalcInputError(spec.name, "is required");
      continue;
    }
    values[spec.name] = validateField(spec, value);
  }
  for (const rule of rules) applyRule(rule, values);
  return new Inputs(values);
}

const OUT_OF_RANGE = "out_of_range";

/** The first output that is not finite or check margin that is undefined, in words. */
function problemOf(outputs: Record<string, OutputValue>, checks: Check[] = []): string | null {
  for (const [key, value] of Object.entries(outputs)) {
    if (typeof value === "number" && !Number.isFinite(value)) return `${key} is ${num(value)}`;
  }
  for (const c of checks) {
    if (c.margin !== null && Number.isNaN(c.margin)) return `the margin of ${c.key} is ${num(c.margin)}`;
  }
  return null;
}

/** The failing result of a working that left the range of doubles; mirrors calculation.out_of_range. */
function outOfRange(
  name: string,
  inputs: Record<string, InputValue>,
  why: string,
  outputs: Record<string, OutputValue> = {},
  steps: string[] = [],
): CalcResult {
  const reason =
    `out of range: ${why}; the inputs' magnitudes take the working beyond the numbers it can hold,` +
    " so nothing is concluded (check the values and their units)";
  const shown: Record<string, OutputValue> = {};
  for (const [k, v] of Object.entries(outputs)) shown[k] = typeof v === "number" && !Number.isFinite(v) ? null : v;
  return {
    name,
    inputs: { ...inputs },
    outputs: shown,
    verdict: "fail",
    margin: null,
    governing: OUT_OF_RANGE,
    steps: [...steps, reason, `verdict: fail (governing check ${OUT_OF_RANGE}, margin none)`],
    reason,
    caution: CAUTION,
  };
}

/** build(), failing closed when an output is not finite or a margin undefined (build alone would
 * show them as null or unbounded); mirrors calculation.build_result. */
export function buildResult(args: {
  name: string;
  inputs: Record<string, InputValue>;
  outputs: Record<string, OutputValue>;
  checks: Check[];
  steps: string[];
}): CalcResult {
  const problem = problemOf(args.outputs, args.checks);
  if (problem !== null) return outOfRange(args.name, args.inputs, problem, args.outputs, args.steps);
  return build(args);
}

export function calculation(
  name: string,
  title: string,
  fields: Field[],
  rules: Rule[],
  compute: (values: Inputs) => CalcResult,
): Calculation {
  return {
    name,
    title,
    run: (inputs: unknown) => {
      const values = validate(fields, rules, inputs);
      try {
        return compute(values);
      } catch (error) {
        if (error instanceof OutOfRange) return outOfRange(name, values.asDict(), error.message);
        throw error;
      }
    },
  };
}

/**
 * Timed capture for a series item: Start, then a prompt every interval for the gauge reading.
 * The start time belongs to the sheet's draft, so a reload in the middle of a test resumes it.
 */
import { useEffect, useRef, useState } from "preact/hooks";
import { fmt, parseDecimal } from "../sheet";
import type { ChecklistItem } from "../types";

export function Curve({ samples, unit }: { samples: number[][]; unit: string }) {
  if (samples.length < 2) return null;
  const w = 320, h = 120, pad = 28;
  const ts = samples.map((s) => s[0]!);
  const vs = samples.map((s) => s[1]!);
  const t0 = Math.min(...ts), t1 = Math.max(...ts);
  let v0 = Math.min(...vs), v1 = Math.max(...vs);
  if (v1 - v0 < 1e-9) { v0 -= 1; v1 += 1; }
  const x = (t: number) => pad + ((t - t0) / (t1 - t0 || 1)) * (w - pad - 8);
  const y = (v: number) => 8 + (1 - (v - v0) / (v1 - v0)) * (h - pad - 8);
  const points = samples.map(([t, v]) => `${x(t!).toFixed(1)},${y(v!).toFixed(1)}`).join(" ");
  return (
    <svg class="curve" viewBox={`0 0 ${w} ${h}`} role="img" aria-label={`Curve of ${samples.length} readings`}>
      <line x1={pad} y1={h - pad} x2={w - 8} y2={h - pad} stroke="currentColor" stroke-width="1" />
      <line x1={pad} y1={8} x2={pad} y2={h - pad} stroke="currentColor" stroke-width="1" />
      <polyline points={points} fill="none" stroke="var(--accent)" stroke-width="3" />
      {samples.map(([t, v]) => <circle cx={x(t!)} cy={y(v!)} r="4" fill="var(--accent)" />)}
      <text x={pad - 4} y={14} font-size="11" text-anchor="end" fill="currentColor">{fmt(v1)}</text>
      <text x={pad - 4} y={h - pad} font-size="11" text-anchor="end" fill="currentColor">{fmt(v0)}</text>
      <text x={w - 8} y={h - 8} font-size="11" text-anchor="end" fill="currentColor">{fmt(t1)} s</text>
      <text x={pad} y={h - 8} font-size="11" fill="currentColor">{unit}</text>
    </svg>
  );
}

export function SeriesCapture({ item, samples, onChange, startedAt, onTimer }: {
  item: ChecklistItem;
  samples: number[][];
  onChange: (samples: number[][]) => void;
  /** When the timer started (ms since the epoch), or null when it is not running. */
  startedAt: number | null;
  onTimer: (startedAt: number | null) => void;
}) {
  const interval = item.interval_s ?? 30;
  const needed = item.min_samples ?? 3;
  const unit = item.unit ?? "";
  const [now, setNow] = useState(Date.now());
  const [text, setText] = useState("");
  const [problem, setProblem] = useState("");
  const field = useRef<HTMLInputElement>(null);

  useEffect(() => {
    if (startedAt === null) return;
    const timer = setInterval(() => setNow(Date.now()), 250);
    return () => clearInterval(timer);
  }, [startedAt]);

  const elapsed = startedAt === null ? 0 : Math.max(0, Math.round((now - startedAt) / 1000));
  const nextDue = samples.length * interval;
  const due = startedAt !== null && elapsed >= nextDue;
  const wasDue = useRef(false);
  useEffect(() => {
    if (due && !wasDue.current) {
      navigator.vibrate?.(200);
      field.current?.focus();
    }
    wasDue.current = due;
  }, [due]);

  function start() {
    onChange([]);
    onTimer(Date.now());
    setNow(Date.now());
    setProblem("");
  }

  function add(event: Event) {
    event.preventDefault();
    const value = parseDecimal(text);
    if (value === null) {
      setProblem("Type the gauge reading as a number.");
      return;
    }
    const t = startedAt === null ? 0 : Math.round((Date.now() - startedAt) / 1000);
    const last = samples[samples.length - 1];
    const time = last && t <= last[0]! ? last[0]! + 1 : t;
    onChange([...samples, [time, value]]);
    setText("");
    setProblem("");
  }

  return (
    <div class="series" data-testid={`series-${item.key}`}>
      <p class="muted small">A reading every {interval} s after Start; at least {needed}.</p>
      {startedAt === null ? (
        <button class="btn btn-primary" type="button" onClick={start} data-testid="series-start">
          {samples.length ? "Start again" : "Start timed test"}
        </button>
      ) : (
        <form class="series-form" onSubmit={add}>
          <p class={due ? "prompt prompt-due" : "prompt"} role="status" aria-live="polite">
            {due ? `Read the gauge now (${elapsed} s)` : `Next reading in ${nextDue - elapsed} s (${elapsed} s so far)`}
          </p>
          <div class="input-unit">
            <input ref={field} inputMode="decimal" autocomplete="off" value={text} aria-label={`Reading in ${unit}`}
              onInput={(e) => setText((e.target as HTMLInputElement).value)} data-testid="series-value" />
            <span class="unit">{unit}</span>
          </div>
          <div class="row">
            <button class="btn btn-primary" type="submit" data-testid="series-add">Add reading</button>
            <button class="btn" type="button" onClick={() => onTimer(null)} data-testid="series-stop">Stop timer</button>
          </div>
          {problem && <p class="error">{problem}</p>}
        </form>
      )}
      {samples.length > 0 && (
        <>
          <Curve samples={samples} unit={unit} />
          <ol class="samples">
            {samples.map(([t, v]) => <li>{t} s: {fmt(v!)} {unit}</li>)}
          </ol>
        </>
      )}
    </div>
  );
}

/**
 * Timed capture for a series item such as a vacuum decay test: Start, then each reading when it
 * is due on the item's schedule (reading n, counting from 0 at Start, at n × interval), with a
 * countdown before and a plain warning when the spacing can no longer pass.
 *
 * Times come from the phone's monotonic clock, never from Date.now(). At Start the phone keeps
 * `performance.timeOrigin + performance.now()` (milliseconds on the epoch's scale) in the sheet's
 * draft; a sample's time is the same sum at Add minus it, in seconds rounded to 0.1. Within one
 * page timeOrigin is fixed, so that is a pure difference of performance.now(): setting the
 * phone's wall clock during the test changes nothing. A reload resumes the test from the draft.
 * The new page's timeOrigin is tied to the wall clock as the browser read it when its process
 * started: a reload in the same process measures on the same monotonic clock, but if the wall
 * clock was changed and the browser restarted since Start (an app killed in the background, a
 * phone restarted), the elapsed time is off by that change. A clock set forward makes the next
 * reading look late (the warning and the spacing check say so, and the test is started again);
 * a clock set back that puts the time before the last reading stops the test: the times can no
 * longer be trusted, and Add stays off until it is started again.
 */
import { useEffect, useRef, useState } from "preact/hooks";
import { ambiguousGrouping, describeSchedule, fmt, parseDecimal, readingLate, sampleTime, type ScheduleResult } from "../sheet";
import type { ChecklistItem } from "../types";
import { Sign } from "./signs";

/** Now on the phone's monotonic clock, in milliseconds on the epoch's scale. */
function monotonicNow(): number {
  return performance.timeOrigin + performance.now();
}

function Curve({ samples, unit }: { samples: number[][]; unit: string }) {
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

export function SeriesCapture({ item, timing, samples, onChange, startedAt, onTimer }: {
  item: ChecklistItem;
  /** The item's schedule, resolved from its sources with the sheet's context. */
  timing: ScheduleResult;
  samples: number[][];
  onChange: (samples: number[][]) => void;
  /** monotonicNow() at Start, or null when the timer is not running. */
  startedAt: number | null;
  onTimer: (startedAt: number | null) => void;
}) {
  const unit = item.unit ?? "";
  const [now, setNow] = useState(monotonicNow);
  const [text, setText] = useState("");
  const [problem, setProblem] = useState("");
  const field = useRef<HTMLInputElement>(null);

  useEffect(() => {
    if (startedAt === null) return;
    setNow(monotonicNow());
    const timer = setInterval(() => setNow(monotonicNow()), 250);
    return () => clearInterval(timer);
  }, [startedAt]);

  const schedule = timing.ok ? timing.schedule : null;
  const running = startedAt !== null && schedule !== null;
  const elapsed = startedAt === null ? 0 : (now - startedAt) / 1000;
  const times = samples.map((s) => s[0]!);
  const last = times[times.length - 1];
  // Time cannot run back past a reading already taken: the clock was changed (see above).
  const backwards = running && last !== undefined && elapsed < last;
  const dueAt = samples.length * (schedule?.interval_s ?? 0);
  const due = running && !backwards && elapsed >= dueAt;
  // A reading taken now would leave too long a gap: the spacing fails whatever comes after.
  const late = due && schedule !== null && readingLate(times, sampleTime(now - startedAt!), schedule);
  const lateAfter = schedule ? schedule.interval_s + schedule.tolerance_s : 0;
  const wasDue = useRef(false);
  useEffect(() => {
    if (due && !wasDue.current) {
      navigator.vibrate?.(200);
      field.current?.focus();
    }
    wasDue.current = due;
  }, [due]);

  function start() {
    if (samples.length) {
      const what = samples.length === 1 ? "the reading" : `the ${samples.length} readings`;
      if (!confirm(`Clear ${what} of this test and start it again?`)) return;
    }
    onChange([]);
    onTimer(monotonicNow());
    setNow(monotonicNow());
    setText("");
    setProblem("");
  }

  function add(event: Event) {
    event.preventDefault();
    if (startedAt === null || !schedule) return;
    const value = parseDecimal(text);
    if (value === null) {
      setProblem(ambiguousGrouping(text) ?? "Type the gauge reading as a number.");
      return;
    }
    const t = sampleTime(monotonicNow() - startedAt);
    if (last !== undefined && t <= last) {
      setProblem("The phone's clock went back since Start; start the test again.");
      return;
    }
    if (t < dueAt - 0.05) {
      setProblem(`Reading ${samples.length + 1} is due at ${fmt(dueAt)} s.`);
      return;
    }
    onChange([...samples, [t, value]]);
    setText("");
    setProblem("");
  }

  const restart = (
    <button class="btn" type="button" onClick={start} data-testid="series-restart">Start again</button>
  );

  return (
    <div class="series" data-testid={`series-${item.key}`}>
      {schedule ? (
        <p class="muted small" data-testid="series-plan">{describeSchedule(schedule)}</p>
      ) : (
        <p class="error" data-testid="series-plan">{!timing.ok && timing.message}</p>
      )}
      {!running ? (
        <button class={samples.length ? "btn" : "btn btn-primary"} type="button" onClick={start} disabled={!schedule}
          data-testid="series-start">
          {samples.length ? "Start again" : "Start timed test"}
        </button>
      ) : (
        <form class="series-form" onSubmit={add}>
          {/* Only a change of state is announced (a reading due, the timer stopped), never the
              seconds: a live countdown buries "Read the gauge now" under one message a second. */}
          <p role="status" class="sr-only" data-testid="series-announce">
            {backwards ? "Stopped: the phone's clock went back since Start." : due ? `Read the gauge now: reading ${samples.length + 1} is due.` : ""}
          </p>
          <p class={due ? "prompt prompt-due" : "prompt"}>
            {backwards
              ? "Stopped: the phone's clock went back since Start."
              : due
                ? `Read the gauge now (${Math.floor(elapsed)} s)`
                : `Next reading in ${Math.ceil(dueAt - elapsed)} s (${Math.floor(elapsed)} s so far)`}
          </p>
          {late && (
            <div class="series-warning" role="alert">
              <Sign kind="caution" />
              <p data-testid="series-late">
                {`Reading ${samples.length + 1} is late: more than ${fmt(lateAfter)} s since the last one. ` +
                  "The spacing will fail; start the test again."}
              </p>
              {restart}
            </div>
          )}
          {backwards && (
            <div class="series-warning" role="alert">
              <Sign kind="caution" />
              <p>The times can no longer be trusted; start the test again.</p>
              {restart}
            </div>
          )}
          <div class="input-unit">
            <input ref={field} inputMode="decimal" autocomplete="off" value={text} aria-label={`Reading in ${unit}`}
              onInput={(e) => setText((e.target as HTMLInputElement).value)} data-testid="series-value" />
            <span class="unit">{unit}</span>
          </div>
          <div class="row">
            <button class="btn btn-primary" type="submit" disabled={!due} data-testid="series-add">Add reading</button>
            <button class="btn" type="button" onClick={() => onTimer(null)} data-testid="series-stop">Stop timer</button>
          </div>
          {problem && <p class="error">{problem}</p>}
        </form>
      )}
      {samples.length > 0 && (
        <>
          <Curve samples={samples} unit={unit} />
          <ol class="samples">
            {samples.map(([t, v]) => <li>{fmt(t!)} s: {fmt(v!)} {unit}</li>)}
          </ol>
        </>
      )}
    </div>
  );
}

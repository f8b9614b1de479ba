import { useEffect, useMemo, useRef, useState } from "preact/hooks";
import { loadJob, loadReference, loadVersions, today } from "../repo";
import { enqueue } from "../outbox";
import {
  buildContexts,
  committedDraft,
  emptyDraft,
  evaluateForDrops,
  isEmptyDraft,
  localVerdict,
  nearLimit,
  ordered,
  seriesSchedule,
  stillNeeded,
  toEntries,
  type ItemView,
  type Steady,
} from "../sheet";
import { quantityLines } from "../quantities";
import { draftDelete, draftGet, draftKey, draftPut, outboxAll, type OutboxEntry, type PhotoEntry } from "../storage";
import { opensOn, waitingSheet } from "../job_rules";
import { canRecord, READ_ONLY_WORDS } from "../signoff";
import type { ChecklistVersion, Draft, JobDetail, Reference, TickValue, User } from "../types";
import { deviceTime, newUuid } from "../uuid";
import { BottomBar, CautionLine, Header } from "./common";
import { go, href, timeOf } from "./hooks";
import { SeriesCapture } from "./Series";
import { Badge, VerdictBadge } from "./signs";

/** A reading is judged once typing has paused this long, even if its field keeps the focus. */
const COMMIT_PAUSE_MS = 1500;

function PhotoThumb({ blob }: { blob: Blob }) {
  const url = useMemo(() => URL.createObjectURL(blob), [blob]);
  useEffect(() => () => URL.revokeObjectURL(url), [url]);
  return <img src={url} alt="Photo taken for this item" class="thumb" />;
}

export function SheetScreen({ id, requirement, user }: { id: number; requirement: string; user: User }) {
  const [job, setJob] = useState<JobDetail | null>(null);
  const [versions, setVersions] = useState<ChecklistVersion[] | null>(null);
  const [reference, setReference] = useState<Reference | null>(null);
  const [error, setError] = useState("");
  const [draft, setDraft] = useState<Draft>(emptyDraft());
  const [remarks, setRemarks] = useState("");
  const [tried, setTried] = useState(false);
  // Save refused for want of answers: said once per tap, and the focus taken to the first.
  const [short, setShort] = useState<{ count: number; first: string; tap: number } | null>(null);
  const [openWorking, setOpenWorking] = useState<Record<string, boolean>>({});
  const [sheetUuid, setSheetUuid] = useState(() => newUuid());
  const [timers, setTimers] = useState<Record<string, number>>({});
  // A check of this requirement saved on this phone and not sent yet: the server does not know it.
  const [waiting, setWaiting] = useState<OutboxEntry | null>(null);
  // Drafts: restored once the checklist version is known, then kept as the operator goes.
  const key = draftKey(user.id, id, requirement);
  // A read-only person (an auditor) reads the sheet: nothing is typed, so nothing is kept.
  const writer = canRecord(user);
  const [draftState, setDraftState] = useState<{ ready: boolean; restoredAt: string; keptAt: string; other: string }>(
    { ready: false, restoredAt: "", keptAt: "", other: "" });
  const pending = useRef<ReturnType<typeof setTimeout> | null>(null);
  const latest = useRef<() => Promise<void>>(async () => undefined);
  const saved = useRef(false);
  // Items whose field has focus keep their place, and a reading its last committed verdict.
  const [steady, setSteady] = useState<Record<string, Steady>>({});
  const pauses = useRef<Record<string, ReturnType<typeof setTimeout>>>({});
  const pointer = useRef<{ down: boolean; after: (() => void)[] }>({ down: false, after: [] });
  // The tick item being answered keeps its place (a phone may not focus a tapped button) until
  // the person goes on to another part of the sheet: `goOn` lets it go then.
  const working = useRef<string | null>(null);
  const goOn = useRef<(to: EventTarget | null) => void>(() => undefined);

  useEffect(() => {
    (async () => {
      try {
        const [j, v] = await Promise.all([loadJob(id), loadVersions()]);
        setJob(j.value);
        setVersions(v.value);
      } catch {
        setError("This check is not kept on this phone yet; connect once to fetch it.");
      }
      setWaiting(waitingSheet(await outboxAll().catch(() => []), id, requirement));
      try {
        setReference((await loadReference()).value);
      } catch {
        setReference(null); // limits are then described by where they come from
      }
    })();
  }, [id]);

  const req = job?.requirements.find((r) => r.key === requirement);
  const version =
    versions?.find((v) => v.id === req?.version) ??
    versions?.filter((v) => v.checklist === req?.checklist).sort((a, b) => b.number - a.number)[0];
  const contexts = useMemo(() => (job && req ? buildContexts(job, req, reference) : []), [job, req, reference]);
  const context = contexts[0]?.context ?? {};
  const views = useMemo(
    () => (version ? evaluateForDrops(version.items, committedDraft(draft, steady), contexts) : []),
    [version, draft, steady, contexts],
  );

  useEffect(() => {
    if (!version || draftState.ready || !writer) return;
    (async () => {
      const kept = await draftGet(key).catch(() => null);
      if (kept && kept.version === version.id) {
        setDraft(kept.draft);
        setRemarks(kept.remarks);
        setSheetUuid(kept.sheet_uuid);
        setTimers(kept.timers ?? {});
        setDraftState({ ready: true, restoredAt: kept.saved_at, keptAt: kept.saved_at, other: "" });
      } else {
        const other = kept ? "Answers kept for another version of this checklist were not restored." : "";
        setDraftState({ ready: true, restoredAt: "", keptAt: "", other });
      }
    })();
  }, [version?.id]);

  // What to write now; refreshed every render so the debounced call sees the latest answers.
  latest.current = async () => {
    if (!version || saved.current || !writer) return;
    if (isEmptyDraft(draft) && !remarks.trim() && Object.keys(timers).length === 0) {
      await draftDelete(key);
      setDraftState((d) => ({ ...d, keptAt: "" }));
      return;
    }
    const saved_at = new Date().toISOString();
    await draftPut({ key, job: id, requirement, version: version.id, sheet_uuid: sheetUuid, draft, remarks, timers, saved_at });
    setDraftState((d) => ({ ...d, keptAt: saved_at }));
  };

  useEffect(() => {
    if (!draftState.ready || saved.current) return;
    if (pending.current) clearTimeout(pending.current);
    pending.current = setTimeout(() => {
      pending.current = null;
      void latest.current().catch(() => undefined);
    }, 400);
  }, [draft, remarks, timers, draftState.ready]);

  // Leaving the screen (back, sign-in prompt, closing the tab) writes what is pending at once.
  useEffect(() => {
    const flush = () => {
      if (!pending.current) return;
      clearTimeout(pending.current);
      pending.current = null;
      void latest.current().catch(() => undefined);
    };
    const onHide = () => document.visibilityState === "hidden" && flush();
    window.addEventListener("pagehide", flush);
    document.addEventListener("visibilitychange", onHide);
    return () => {
      window.removeEventListener("pagehide", flush);
      document.removeEventListener("visibilitychange", onHide);
      flush();
    };
  }, []);

  // A field left by a tap is let go only once that tap's click is done: moving the item (or
  // showing its verdict) between press and release would move the target under the finger.
  useEffect(() => {
    const runAfter = () => {
      pointer.current.down = false;
      for (const fn of pointer.current.after.splice(0)) fn();
    };
    const down = () => {
      pointer.current.down = true;
    };
    const up = () => setTimeout(runAfter, 0); // in case no click follows the release
    const moved = (e: Event) => goOn.current(e.target);
    document.addEventListener("pointerdown", down, true);
    document.addEventListener("pointerup", up, true);
    document.addEventListener("pointercancel", runAfter, true);
    document.addEventListener("click", runAfter); // bubbling: after the target's own handler
    document.addEventListener("click", moved);
    document.addEventListener("focusin", moved);
    return () => {
      document.removeEventListener("click", moved);
      document.removeEventListener("focusin", moved);
      document.removeEventListener("pointerdown", down, true);
      document.removeEventListener("pointerup", up, true);
      document.removeEventListener("pointercancel", runAfter, true);
      document.removeEventListener("click", runAfter);
      for (const timer of Object.values(pauses.current)) clearTimeout(timer);
    };
  }, []);

  // A focused element removed from the page may leave without a focusout: let such items go.
  useEffect(() => {
    // A calculation held with the reading it reads has no field: it goes when the reading goes.
    const held = new Set(Object.keys(steady).flatMap((key) => readers(key)));
    for (const key of Object.keys(steady))
      if (!held.has(key) && key !== working.current && !hasFocus(key) && !pointer.current.down) letGo(key);
  });

  function startAfresh() {
    if (!confirm("Clear every answer on this sheet?")) return;
    setDraft(emptyDraft());
    setRemarks("");
    setTimers({});
    setSteady({});
    working.current = null;
    setTried(false);
    setDraftState((d) => ({ ...d, restoredAt: "" }));
  }

  if (error || (job && !req) || (versions && !version)) {
    return (
      <main class="screen">
        <Header title="Check" back={href({ name: "job", id })} />
        <p class="error">{error || "This check is not part of the job, or its checklist is not on this phone."}</p>
      </main>
    );
  }
  if (!job || !req || !version) return <main class="screen"><Header title="Check" back={href({ name: "job", id })} /><p>Loading…</p></main>;

  const { failed, rest } = ordered(views, steady);
  const opens = opensOn(job.date, today());
  const records = writer && !opens;
  const needed = stillNeeded(views);
  const set = <K extends keyof Draft>(part: K, key: string, value: Draft[K][string]) =>
    setDraft((d) => ({ ...d, [part]: { ...d[part], [key]: value } }));

  function hasFocus(key: string): boolean {
    return document.getElementById(`item-${key}`)?.contains(document.activeElement) ?? false;
  }

  /** The calculations that read this reading: they keep their place while it is typed too,
   * or a figure half typed moves a calculation above the field under the person's finger. */
  function readers(key: string): string[] {
    return (version?.items ?? [])
      .filter((i) => i.kind === "calc" && Object.values(i.inputs ?? {}).some((source) => (source as Record<string, unknown>).reading === key))
      .map((i) => i.key);
  }

  /** The item's field took the focus: keep it where it is, and a reading at its current verdict. */
  function holdSteady(key: string, reading: boolean) {
    const inStopWork = (k: string) => failed.some((v) => v.item.key === k);
    const text = draft.readings[key] ?? "";
    setSteady((s) => {
      if (s[key]) return s;
      const held: Record<string, Steady> = { ...s, [key]: reading ? { failed: inStopWork(key), text } : { failed: inStopWork(key) } };
      for (const other of reading ? readers(key) : []) if (!held[other]) held[other] = { failed: inStopWork(other) };
      return held;
    });
  }

  /** Commit what has been typed: the reading is judged, in place while its field has focus. */
  function commit(key: string, text: string) {
    setSteady((s) => (s[key] && s[key].text !== undefined ? { ...s, [key]: { ...s[key], text } } : s));
  }

  function typed(key: string, text: string) {
    set("readings", key, text);
    clearTimeout(pauses.current[key]);
    pauses.current[key] = setTimeout(() => commit(key, text), COMMIT_PAUSE_MS);
  }

  /** The focus left the item: judge it on what was typed and let it take its place. */
  function letGo(key: string) {
    clearTimeout(pauses.current[key]);
    delete pauses.current[key];
    const go = () => {
      if (hasFocus(key)) return; // back in the field before the tap was done
      setSteady((s) => {
        if (!(key in s)) return s;
        const others = { ...s };
        for (const gone of [key, ...readers(key)]) delete others[gone];
        return others;
      });
    };
    if (pointer.current.down) pointer.current.after.push(go);
    else go();
  }

  goOn.current = (to) => {
    const key = working.current;
    if (!key || (to instanceof Node && document.getElementById(`item-${key}`)?.contains(to))) return;
    working.current = null;
    letGo(key);
  };

  /** A tick answered: the item stays where it is, in the part it was in, until the person goes on. */
  function tick(key: string, value: TickValue) {
    if (working.current !== key) goOn.current(null);
    holdSteady(key, false);
    working.current = key;
    set("ticks", key, value);
  }

  async function save() {
    if (!job || !req || !version) return;
    setTried(true);
    // Judged on everything typed, a field still being typed in included.
    const live = evaluateForDrops(version.items, draft, contexts);
    const missing = stillNeeded(live);
    if (missing.length) {
      const first = document.getElementById(`item-${missing[0]!.item.key}`);
      first?.scrollIntoView({ block: "center" });
      first?.querySelector<HTMLElement>("button, input, textarea")?.focus({ preventScroll: true });
      setShort((s) => ({ count: missing.length, first: missing[0]!.item.label, tap: (s?.tap ?? 0) + 1 }));
      return;
    }
    setShort(null);
    const failures = live.filter((v) => v.item.blocking && v.verdict === "fail");
    const photos: PhotoEntry[] = Object.entries(draft.photos).flatMap(([itemKey, list]) =>
      list.map((p) => ({
        client_uuid: p.uuid,
        job: job.id,
        sheet_uuid: sheetUuid,
        item_key: itemKey,
        blob: p.blob,
        name: p.name,
        created_at: new Date().toISOString(),
        uploaded: false,
      })),
    );
    saved.current = true;
    if (pending.current) clearTimeout(pending.current);
    pending.current = null;
    try {
      await enqueue(
      {
        type: "sheet",
        data: {
          job: job.id,
          version: version.id,
          anchor: req.anchor,
          equipment: req.equipment,
          entries: toEntries(version.items, draft),
          device_time: deviceTime(),
          remarks: remarks.trim(),
        },
      },
      {
        label: `${req.title}, ${req.subject}`,
        job: job.id,
        requirement: req.key,
        local_verdict: localVerdict(live),
        local_failures: failures.map((v) => `${v.item.label}${v.message ? ` (${v.message})` : ""}`),
      },
      { uuid: sheetUuid, photos, draft: key },
      );
    } catch (error) {
      saved.current = false;
      alert(`Not saved: ${error instanceof Error ? error.message : String(error)}. The answers stay on this sheet.`);
      return;
    }
    go({ name: "job", id: job.id });
  }

  function renderItem(view: ItemView, inPlace: boolean) {
    const { item } = view;
    const key = item.key;
    const showMissing = tried && view.verdict === "missing" && item.kind !== "calc";
    const typedIn = item.kind === "reading" || item.kind === "series";
    return (
      <li key={key} id={`item-${key}`} class={`card item item-${item.kind}${showMissing ? " item-missing" : ""}`}
        data-testid={`item-${key}`} data-verdict={view.verdict}
        onFocusIn={typedIn ? () => holdSteady(key, item.kind === "reading") : undefined}
        onFocusOut={typedIn ? (e: FocusEvent) => {
          const to = e.relatedTarget;
          if (!(to instanceof Node && (e.currentTarget as HTMLElement).contains(to))) letGo(key);
        } : undefined}>
        <div class="item-head">
          <span class="item-label">{item.label}</span>
          {item.blocking && <span class="tag">Blocking</span>}
        </div>
        <p class="muted small">{item.reason}</p>

        {item.kind === "tick" && (
          <div class="ticks" role="group" aria-label={item.label}>
            {(["pass", "fail", ...(item.allow_na ? ["na"] : [])] as TickValue[]).map((value) => (
              <button type="button" class={`btn tick tick-${value}`} aria-pressed={draft.ticks[key] === value}
                onClick={() => tick(key, value)} data-testid={`tick-${key}-${value}`}>
                {value === "pass" ? "Pass" : value === "fail" ? "Fail" : "N/A"}
              </button>
            ))}
          </div>
        )}

        {item.kind === "reading" && (
          <div class="input-unit">
            <input inputMode="decimal" autocomplete="off" value={draft.readings[key] ?? ""} aria-label={`${item.label} in ${item.unit ?? ""}`}
              onInput={(e) => typed(key, (e.target as HTMLInputElement).value)}
              onKeyDown={(e) => e.key === "Enter" && (e.target as HTMLInputElement).blur()}
              data-testid={`reading-${key}`} />
            <span class="unit">{item.unit}</span>
          </div>
        )}

        {item.kind === "series" && (
          <SeriesCapture item={item} timing={seriesSchedule(item, context)}
            samples={draft.series[key] ?? []} onChange={(s) => set("series", key, s)}
            startedAt={timers[key] ?? null}
            onTimer={(at) => setTimers((t) => {
              const next = { ...t };
              if (at === null) delete next[key];
              else next[key] = at;
              return next;
            })} />
        )}

        {item.kind === "photo" && (
          <div class="photos">
            <label class="btn btn-file">
              Take photo
              <input type="file" accept="image/*" capture="environment" data-testid={`photo-${key}`}
                onChange={(e) => {
                  const input = e.target as HTMLInputElement;
                  const files = Array.from(input.files ?? []);
                  const added = files.map((f) => ({ uuid: newUuid(), blob: f as Blob, name: f.name || "photo.jpg" }));
                  set("photos", key, [...(draft.photos[key] ?? []), ...added]);
                  input.value = "";
                }} />
            </label>
            <ul class="thumbs">
              {(draft.photos[key] ?? []).map((p) => (
                <li key={p.uuid}>
                  <PhotoThumb blob={p.blob} />
                  <button type="button" class="btn btn-small" onClick={() =>
                    set("photos", key, (draft.photos[key] ?? []).filter((q) => q.uuid !== p.uuid))}>Remove</button>
                </li>
              ))}
            </ul>
          </div>
        )}

        {item.kind === "note" && (
          <textarea rows={3} maxLength={8000} value={draft.notes[key] ?? ""} aria-label={item.label}
            onInput={(e) => set("notes", key, (e.target as HTMLTextAreaElement).value)} data-testid={`note-${key}`} />
        )}

        {view.limits.map((line) => <p class="limit small">{line}</p>)}
        {item.kind === "calc" && <p class="muted small">Worked out from the readings and ratings; the server recomputes on sync.</p>}

        {view.verdict !== "missing" || item.kind === "calc" || view.message ? (
          <div class="verdict" data-testid={`verdict-${key}`}>
            {(item.kind !== "note" && item.kind !== "photo") && <VerdictBadge verdict={view.verdict} margin={view.margin} band={view.band} />}
            {view.message && <p class="small">{view.message}</p>}
            {nearLimit(view.verdict, view.margin, view.band) && view.bandReason && (
              <p class="small" data-testid={`caution-${key}`}>{view.bandReason}</p>
            )}
          </div>
        ) : null}
        {view.calc && (
          <>
            <button type="button" class="btn btn-small" aria-expanded={!!openWorking[key]}
              onClick={() => setOpenWorking((o) => ({ ...o, [key]: !o[key] }))}>
              {openWorking[key] ? "Hide the working" : "Show the working"}
            </button>
            {openWorking[key] && (
              <div class="working">
                <ul class="plain small" data-testid={`outputs-${key}`}>
                  {quantityLines(view.calc.outputs).map((q) => <li key={q.key}>{q.text}</li>)}
                </ul>
                <ol class="small">{view.calc.steps.map((s) => <li>{s}</li>)}</ol>
              </div>
            )}
          </>
        )}
        {inPlace && item.blocking && view.verdict === "fail" && (
          <p class="error" role="alert" data-testid={`stop-${key}`}>Stop work: this blocking item failed.</p>
        )}
        {showMissing && <p class="error small">This needs an answer before saving.</p>}
      </li>
    );
  }

  return (
    <main class="screen with-bar">
      <Header title={version.title} back={href({ name: "job", id })}
        sub={<span>{req.subject} · version {version.number} · {job.site_name}</span>} />
      {draftState.restoredAt && (
        <div class="note row-note" role="status" data-testid="draft-restored">
          <span>Restored the answers kept on this phone at {timeOf(draftState.restoredAt)}.</span>
          <button type="button" class="btn btn-small" onClick={startAfresh} data-testid="draft-clear">Start afresh</button>
        </div>
      )}
      {draftState.other && <p class="note">{draftState.other}</p>}
      {!writer && <p class="note" data-testid="sheet-read-only">{READ_ONLY_WORDS} This sheet cannot be filled in here.</p>}
      {writer && opens && (
        <p class="note" data-testid="sheet-opens">
          Opens on {opens}: this job's pre-start checks are made on its day. Read it now; fill it in on {opens}.
        </p>
      )}
      {waiting && (
        <p class="note" data-testid="sheet-waiting">
          Saved on this phone at {timeOf(waiting.created_at)}, waiting to send; what you fill in here is a new check.
          {waiting.local_verdict === "fail" ? " The one saved failed a blocking item on this phone." : ""}
        </p>
      )}
      {req.latest_sheet !== null && (
        <p class="note" data-testid="sheet-done" data-verdict={req.latest_verdict ?? ""}>
          {req.satisfied
            ? "Done: this check was saved and passed."
            : req.latest_version !== null && req.latest_version !== req.version
              ? "Saved before against an older version of this checklist: it does not count until filled again against this one."
              : `Saved before, with the verdict ${req.latest_verdict ?? "unknown"}.`}{" "}
          What you fill in here is a new check: once saved, it is the one that counts.
        </p>
      )}
      <fieldset class="bare" disabled={!records}>
      {failed.length > 0 && (
        <section class="alert-block" data-testid="failed-top">
          <h2><Badge kind="held" word="Stop work: blocking item failed" /></h2>
          <ul class="list">{failed.map((v) => renderItem(v, false))}</ul>
        </section>
      )}
      <ul class="list" data-testid="items">{rest.map((v) => renderItem(v, true))}</ul>
      <label class="field card">
        <span>Remarks for the daily record (optional)</span>
        <textarea rows={3} value={remarks} onInput={(e) => setRemarks((e.target as HTMLTextAreaElement).value)} data-testid="remarks" />
      </label>
      </fieldset>
      {writer && (
        <p class="muted small" data-testid="draft-note">
          {draftState.keptAt
            ? `Answers kept on this phone as you go (last at ${timeOf(draftState.keptAt)}); they stay until the check is saved.`
            : "Answers are kept on this phone as you go."}
        </p>
      )}
      {short && (
        <p key={short.tap} class="sr-only" role="alert" data-testid="save-short">
          Not saved: {short.count} still to answer. The first is: {short.first}.
        </p>
      )}
      <CautionLine job={job.id} />
      <BottomBar>
        {writer && (
          <span class="bar-note" data-testid="still-needed" data-draft={draftState.keptAt ? "kept" : draftState.ready ? "none" : ""} data-kept-at={draftState.keptAt}>
            {needed.length ? `${needed.length} still to answer` : failed.length ? "Saving records a stop work" : "Ready to save"}
          </span>
        )}
        {records ? (
          <button type="button" class="btn btn-primary" onClick={save} data-testid="save">Save check</button>
        ) : opens ? (
          <span class="bar-note" data-testid="opens-on">Opens on {opens}</span>
        ) : (
          <span class="bar-note" data-testid="read-only">{READ_ONLY_WORDS}</span>
        )}
      </BottomBar>
    </main>
  );
}

import { useEffect, useMemo, useState } from "preact/hooks";
import { loadJob, loadReference, loadVersions, type Reference } from "../repo";
import { enqueue } from "../outbox";
import {
  buildContext,
  emptyDraft,
  evaluateDraft,
  fmt,
  ordered,
  stillNeeded,
  toEntries,
  type Draft,
  type ItemView,
} from "../sheet";
import type { PhotoEntry } from "../storage";
import type { ChecklistVersion, JobDetail, TickValue } from "../types";
import { deviceTime, newUuid } from "../uuid";
import { BottomBar, CautionLine, Header } from "./common";
import { go, href } from "./hooks";
import { SeriesCapture } from "./Series";
import { Badge, VerdictBadge } from "./signs";

function PhotoThumb({ blob }: { blob: Blob }) {
  const url = useMemo(() => URL.createObjectURL(blob), [blob]);
  useEffect(() => () => URL.revokeObjectURL(url), [url]);
  return <img src={url} alt="Photo taken for this item" class="thumb" />;
}

export function SheetScreen({ id, requirement }: { id: number; requirement: string }) {
  const [job, setJob] = useState<JobDetail | null>(null);
  const [versions, setVersions] = useState<ChecklistVersion[] | null>(null);
  const [reference, setReference] = useState<Reference | null>(null);
  const [error, setError] = useState("");
  const [draft, setDraft] = useState<Draft>(emptyDraft());
  const [remarks, setRemarks] = useState("");
  const [tried, setTried] = useState(false);
  const [openWorking, setOpenWorking] = useState<Record<string, boolean>>({});
  const sheetUuid = useMemo(() => newUuid(), [id, requirement]);

  useEffect(() => {
    (async () => {
      try {
        const [j, v] = await Promise.all([loadJob(id), loadVersions()]);
        setJob(j.value);
        setVersions(v.value);
      } catch {
        setError("This check is not kept on this phone yet; connect once to fetch it.");
      }
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
  const context = useMemo(() => (job && req ? buildContext(job, req, reference) : {}), [job, req, reference]);
  const views = useMemo(() => (version ? evaluateDraft(version.items, draft, context) : []), [version, draft, context]);

  if (error || (job && !req) || (versions && !version)) {
    return (
      <main class="screen">
        <Header title="Check" back={href({ name: "job", id })} />
        <p class="error">{error || "This check is not part of the job, or its checklist is not on this phone."}</p>
      </main>
    );
  }
  if (!job || !req || !version) return <main class="screen"><Header title="Check" back={href({ name: "job", id })} /><p>Loading…</p></main>;

  const { failed, rest } = ordered(views);
  const needed = stillNeeded(views);
  const set = <K extends keyof Draft>(part: K, key: string, value: Draft[K][string]) =>
    setDraft((d) => ({ ...d, [part]: { ...d[part], [key]: value } }));

  async function save() {
    if (!job || !req || !version) return;
    setTried(true);
    if (needed.length) {
      document.getElementById(`item-${needed[0]!.item.key}`)?.scrollIntoView({ block: "center" });
      return;
    }
    const failures = views.filter((v) => v.item.blocking && v.verdict === "fail");
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
        local_verdict: views.some((v) => v.verdict === "fail") ? "fail" : "pass",
        local_failures: failures.map((v) => `${v.item.label}${v.message ? ` (${v.message})` : ""}`),
      },
      { uuid: sheetUuid, photos },
    );
    go({ name: "job", id: job.id });
  }

  function renderItem(view: ItemView) {
    const { item } = view;
    const key = item.key;
    const showMissing = tried && view.verdict === "missing" && item.kind !== "calc";
    return (
      <li key={key} id={`item-${key}`} class={`card item item-${item.kind}${showMissing ? " item-missing" : ""}`}
        data-testid={`item-${key}`} data-verdict={view.verdict}>
        <div class="item-head">
          <span class="item-label">{item.label}</span>
          {item.blocking && <span class="tag">Blocking</span>}
        </div>
        <p class="muted small">{item.reason}</p>

        {item.kind === "tick" && (
          <div class="ticks" role="group" aria-label={item.label}>
            {(["pass", "fail", ...(item.allow_na ? ["na"] : [])] as TickValue[]).map((value) => (
              <button type="button" class={`btn tick tick-${value}`} aria-pressed={draft.ticks[key] === value}
                onClick={() => set("ticks", key, value)} data-testid={`tick-${key}-${value}`}>
                {value === "pass" ? "Pass" : value === "fail" ? "Fail" : "N/A"}
              </button>
            ))}
          </div>
        )}

        {item.kind === "reading" && (
          <div class="input-unit">
            <input inputMode="decimal" autocomplete="off" value={draft.readings[key] ?? ""} aria-label={`${item.label} in ${item.unit ?? ""}`}
              onInput={(e) => set("readings", key, (e.target as HTMLInputElement).value)} data-testid={`reading-${key}`} />
            <span class="unit">{item.unit}</span>
          </div>
        )}

        {item.kind === "series" && (
          <SeriesCapture item={item} samples={draft.series[key] ?? []} onChange={(s) => set("series", key, s)} />
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
          <textarea rows={3} value={draft.notes[key] ?? ""} aria-label={item.label}
            onInput={(e) => set("notes", key, (e.target as HTMLTextAreaElement).value)} data-testid={`note-${key}`} />
        )}

        {view.limits.map((line) => <p class="limit small">{line}</p>)}
        {item.kind === "calc" && <p class="muted small">Worked out from the readings and ratings; the server recomputes on sync.</p>}

        {view.verdict !== "missing" || item.kind === "calc" || view.message ? (
          <div class="verdict" data-testid={`verdict-${key}`}>
            {(item.kind !== "note" && item.kind !== "photo") && <VerdictBadge verdict={view.verdict} margin={view.margin} />}
            {view.message && <p class="small">{view.message}</p>}
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
                <ul class="plain small">
                  {Object.entries(view.calc.outputs).map(([k, v]) => (
                    <li>{k.replace(/_/g, " ")}: {typeof v === "number" ? fmt(v) : String(v)}</li>
                  ))}
                </ul>
                <ol class="small">{view.calc.steps.map((s) => <li>{s}</li>)}</ol>
              </div>
            )}
          </>
        )}
        {showMissing && <p class="error small">This needs an answer before saving.</p>}
      </li>
    );
  }

  return (
    <main class="screen with-bar">
      <Header title={version.title} back={href({ name: "job", id })}
        sub={<span>{req.subject} · version {version.number} · {job.site_name}</span>} />
      {failed.length > 0 && (
        <section class="alert-block" data-testid="failed-top">
          <h2><Badge kind="held" word="Stop work: blocking item failed" /></h2>
          <ul class="list">{failed.map(renderItem)}</ul>
        </section>
      )}
      <ul class="list" data-testid="items">{rest.map(renderItem)}</ul>
      <label class="field card">
        <span>Remarks for the daily record (optional)</span>
        <textarea rows={3} value={remarks} onInput={(e) => setRemarks((e.target as HTMLTextAreaElement).value)} data-testid="remarks" />
      </label>
      <CautionLine job={job.id} />
      <BottomBar>
        <span class="bar-note" data-testid="still-needed">
          {needed.length ? `${needed.length} still to answer` : failed.length ? "Saving records a stop work" : "Ready to save"}
        </span>
        <button type="button" class="btn btn-primary" onClick={save} data-testid="save">Save check</button>
      </BottomBar>
    </main>
  );
}

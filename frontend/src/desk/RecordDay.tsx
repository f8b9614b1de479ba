/**
 * One day at one site, for reading: its signed record (signer, time, meaning, place in the
 * chain, seal), the signed PDF, the server's check of it, its addenda, every sheet filled for
 * the day with its items, and the export of a period.
 */
import { useEffect, useState } from "preact/hooks";
import type { ChecklistVersion, DailyRecord, Equipment } from "../types";
import { dateTimeOf } from "../ui/hooks";
import { Badge } from "../ui/signs";
import { dayFrom as todayFrom, desk, type SiteAnchor } from "./api";
import { DeskCaution } from "./parts";
import { ExportPanel, PdfLink, VerifyPanel } from "./recordChecks";
import { byJob, dayFrom, dayState, dayWords, plural, sheetsWords, verdictWord, type Sheet } from "./recordMonth";
import { errorWords, recordsHref, Trail, useRecordSite, Waiting } from "./recordPage";
import { records } from "./recordsApi";

interface DayData {
  records: DailyRecord[];
  sheets: Sheet[];
}

/** Names for what the sheets give as numbers: anchors, equipment, checklist versions. */
interface Names {
  anchors: Map<number, string>;
  equipment: Map<number, string>;
  versions: Map<number, ChecklistVersion>;
}

const KIND_WORDS: Record<string, string> = {
  anchor: "Anchor",
  robot: "Robot",
  tether: "Suspension tether",
  safety_line: "Safety line",
  hose: "Water hose",
  site: "The site",
};

function subjectWords(sheet: Sheet, names: Names | null): string {
  const kind = KIND_WORDS[sheet.subject_kind] ?? sheet.subject_kind;
  if (sheet.anchor) return `${kind} ${names?.anchors.get(sheet.anchor) ?? `number ${sheet.anchor}`}`;
  if (sheet.equipment) return `${kind} ${names?.equipment.get(sheet.equipment) ?? `number ${sheet.equipment}`}`;
  return kind;
}

type Entry = Sheet["entries"][number];

/**
 * What was entered, in words: a reading with its unit, a series or photos by count, a note's
 * text. A tick says it in its verdict, and a calculation in the server's message beside it, so
 * neither repeats it here (a calculation's inputs are the readings already listed).
 */
function valueWords(entry: Entry): string | null {
  const v: unknown = entry.value;
  if (entry.kind === "tick" || entry.kind === "calc") return null;
  if (entry.kind === "photo" && (!Array.isArray(v) || !v.length)) return "No photo";
  if (v === null || v === undefined || v === "") return "No value";
  if (typeof v === "number") return entry.unit ? `${v} ${entry.unit}` : String(v);
  if (typeof v === "string") return v;
  if (Array.isArray(v)) {
    if (entry.kind === "series") return `${plural(v.length, "reading", "readings")} over time`;
    if (entry.kind === "photo") return plural(v.length, "photo", "photos");
    return plural(v.length, "value", "values");
  }
  return "Recorded";
}

function SheetItems({ sheet, version }: { sheet: Sheet; version: ChecklistVersion | undefined }) {
  const labels = new Map((version?.items ?? []).map((i) => [i.key, i.label]));
  return (
    <details class="desk-details">
      <summary>{plural(sheet.entries.length, "item", "items")}</summary>
      <ul class="desk-entries">
        {sheet.entries.map((e) => (
          <li key={e.item_key} data-verdict={e.verdict}>
            <span class="desk-entry-label">{labels.get(e.item_key) ?? e.item_key}</span>
            {valueWords(e) !== null && <span>{valueWords(e)}</span>}
            <Badge kind={e.verdict === "fail" ? "held" : e.verdict === "pass" ? "safe" : "closed"} word={verdictWord(e.verdict as Sheet["verdict"])} />
            {e.message && <span class="muted">{e.message}</span>}
          </li>
        ))}
      </ul>
    </details>
  );
}

function SheetTable({ sheets, names }: { sheets: Sheet[]; names: Names | null }) {
  if (!sheets.length) return <p data-testid="day-no-sheets">No sheet was filled for this day.</p>;
  return (
    <table class="desk-table desk-sheets" data-testid="day-sheet-table">
      <thead>
        <tr>
          <th scope="col">Checklist</th>
          <th scope="col">Checked</th>
          <th scope="col">Filled by, when</th>
          <th scope="col">Verdict</th>
          <th scope="col">Items and remarks</th>
        </tr>
      </thead>
      <tbody>
        {sheets.map((s) => {
          const version = names?.versions.get(s.version);
          return (
            <tr key={s.id} data-testid={`sheet-${s.id}`} data-verdict={s.verdict}>
              <th scope="row">
                {version?.title ?? s.checklist}
                <span class="muted small"> (version {s.version_number})</span>
              </th>
              <td>{subjectWords(s, names)}</td>
              <td>{s.filled_by}, {dateTimeOf(s.device_time ?? s.received_at)}</td>
              <td>
                <Badge kind={s.verdict === "fail" ? "held" : s.verdict === "pass" ? "safe" : "closed"} word={verdictWord(s.verdict)} />
                {s.blocking_failures ? <span class="desk-block-note">{plural(s.blocking_failures, "blocking item failed", "blocking items failed")}</span> : null}
              </td>
              <td>
                <SheetItems sheet={s} version={version} />
                {s.remarks && <p>{s.remarks}</p>}
              </td>
            </tr>
          );
        })}
      </tbody>
    </table>
  );
}

/** The addendum's text is inside its sealed document: one request per addendum, on this page only. */
function AddendumText({ id }: { id: number }) {
  const [text, setText] = useState<string | null>(null);
  const [error, setError] = useState("");
  useEffect(() => {
    records.detail(id).then((r) => setText(String(r.document.text ?? "")), (e) => setError(errorWords(e)));
  }, [id]);
  if (error) return <p class="error">The addendum's text could not be read: {error}</p>;
  return text === null ? <p class="muted">Reading the addendum…</p> : <blockquote class="desk-quote" data-testid="addendum-text">{text}</blockquote>;
}

function RecordFacts({ record }: { record: DailyRecord }) {
  return (
    <dl class="desk-cert desk-record-facts">
      <dt>Signed by</dt>
      <dd data-testid="record-signer">{record.signer_name}, {record.signer_role}</dd>
      <dt>Signed at</dt>
      <dd data-testid="record-time"><time dateTime={record.signed_at}>{dateTimeOf(record.signed_at)}</time></dd>
      <dt>Meaning of the signature</dt>
      <dd data-testid="record-meaning">{record.meaning}</dd>
      <dt>Place in the chain</dt>
      <dd>
        {record.kind === "addendum" ? "Addendum" : "Record"} {record.sequence} of this organisation's chain at the site
        {record.previous_seal ? "" : ", the first"}
      </dd>
      <dt>Seal (SHA-256)</dt>
      <dd class="desk-hex" data-testid="record-seal">{record.seal}</dd>
      {record.previous_seal ? (
        <>
          <dt>Seal before it</dt>
          <dd class="desk-hex">{record.previous_seal}</dd>
        </>
      ) : null}
    </dl>
  );
}

function AddendumCard({ addendum: a }: { addendum: DailyRecord }) {
  return (
    <section class="desk-addendum" aria-labelledby={`addendum-${a.id}`} data-testid={`addendum-${a.id}`}>
      <h3 id={`addendum-${a.id}`}>Addendum of {dateTimeOf(a.signed_at)}</h3>
      <AddendumText id={a.id} />
      <RecordFacts record={a} />
      <div class="desk-actions">
        <PdfLink record={a} label="Download the addendum's signed PDF" />
      </div>
      <VerifyPanel check={() => records.verifyRecord(a.id)} label="Check this addendum's signature on the server" testid="addendum-verify" />
    </section>
  );
}

function RecordCard({ record, addenda }: { record: DailyRecord; addenda: DailyRecord[] }) {
  return (
    <section class="desk-record" aria-labelledby={`record-${record.id}`} data-testid={`record-${record.id}`}>
      <div class="desk-item-head">
        <h2 id={`record-${record.id}`}>Daily record {record.sequence}</h2>
        <Badge kind="safe" word={addenda.length ? `Signed, ${plural(addenda.length, "addendum", "addenda")}` : "Signed"} testid="record-state" />
      </div>
      <RecordFacts record={record} />
      <div class="desk-actions">
        <PdfLink record={record} label="Download the signed PDF" />
      </div>
      <VerifyPanel check={() => records.verifyRecord(record.id)} label="Check this record's signature on the server" testid="record-verify" />
      {addenda.map((a) => (
        <AddendumCard key={a.id} addendum={a} />
      ))}
    </section>
  );
}

export function RecordDay({ siteId, day, user }: { siteId: number; day: string; user: number }) {
  const { site, missing, error } = useRecordSite(siteId, user);
  const [data, setData] = useState<DayData | null>(null);
  const [loadError, setLoadError] = useState("");
  const [names, setNames] = useState<Names | null>(null);
  useEffect(() => {
    Promise.all([records.sheets(siteId, day, day), records.ofPeriod(siteId, day, day)]).then(
      ([sheets, rows]) => setData({ sheets, records: rows }),
      (e) => setLoadError(errorWords(e)),
    );
    // Names only: without them the sheets show numbers, so a failure here is not an error.
    Promise.all([desk.siteAnchors(siteId), desk.equipment(), records.versions()]).then(
      ([anchors, equipment, versions]: [SiteAnchor[], Equipment[], ChecklistVersion[]]) =>
        setNames({
          anchors: new Map(anchors.map((a) => [a.id, a.label])),
          equipment: new Map(equipment.map((e) => [e.id, e.label])),
          versions: new Map(versions.map((v) => [v.id, v])),
        }),
      () => undefined,
    );
  }, [siteId, day]);
  const month = day.slice(0, 7);
  const title = `Daily records: ${dayWords(day, "long")}`;
  if (!site || !data) return <Waiting title={title} error={error || loadError} missing={missing} what="the day" />;

  const today = todayFrom(0);
  const signed = data.records.filter((r) => r.kind === "record");
  const addenda = data.records.filter((r) => r.kind === "addendum");
  // The server filtered on the jobs' date, so every sheet here is of this day.
  const state = dayState({ date: day, records: signed, addenda, sheets: data.sheets }, today);
  // An addendum whose record is not among the day's (not expected): shown on its own.
  const loose = addenda.filter((a) => !signed.some((r) => r.id === a.amends));
  const jobs = byJob(signed, data.sheets);

  return (
    <>
      <Trail site={site} month={month} />
      <div class="desk-title">
        <h1>{site.name}: {dayWords(day, "long")}</h1>
        <nav aria-label="Other days" class="desk-actions">
          <a class="btn" href={recordsHref(site.id, dayFrom(day, -1))} data-testid="day-previous">Previous day</a>
          <a class="btn" href={recordsHref(site.id, dayFrom(day, 1))} data-testid="day-next">Next day</a>
        </nav>
      </div>
      <p class="desk-day-summary" data-testid="day-summary" data-state={state.key}>
        {state.sign ? <Badge kind={state.sign} word={state.word} /> : <span>{state.word}</span>}
        <span>{sheetsWords(data.sheets)}.</span>
      </p>
      {signed.length === 0 && (
        <p data-testid="day-no-record">No daily record of this day is signed{data.sheets.length ? " although sheets were filled" : ""}.</p>
      )}
      {jobs.length > 1 ? (
        jobs.map((group) => (
          <section key={group.job} class="desk-day-job" aria-labelledby={`job-${group.job}-head`} data-testid={`day-job-${group.job}`}>
            <h2 id={`job-${group.job}-head`}>Job {group.job}: {group.records.length ? "signed" : "not signed"}, {sheetsWords(group.sheets).toLowerCase()}</h2>
            {group.records.map((r) => (
              <RecordCard key={r.id} record={r} addenda={addenda.filter((a) => a.amends === r.id)} />
            ))}
            <h3>Sheets filled for job {group.job}</h3>
            <SheetTable sheets={group.sheets} names={names} />
          </section>
        ))
      ) : (
        <>
          {signed.map((r) => (
            <RecordCard key={r.id} record={r} addenda={addenda.filter((a) => a.amends === r.id)} />
          ))}
          <section aria-labelledby="sheets-head">
            <h2 id="sheets-head">Sheets filled for this day</h2>
            <SheetTable sheets={data.sheets} names={names} />
          </section>
        </>
      )}
      {loose.map((a) => (
        <AddendumCard key={a.id} addendum={a} />
      ))}
      <ExportPanel siteId={site.id} start={day} end={day} />
      <DeskCaution />
    </>
  );
}

/**
 * Signing the day's record. The supervisor (the competent person) re-enters the password at the
 * moment of signing and picks what the signature means; the server seals the record and chains
 * it. Signing needs signal and is never queued: the re-authentication happens now or not at all.
 */
import { useEffect, useRef, useState } from "preact/hooks";
import { api, ApiError, OfflineError } from "../api";
import { keepRecord, loadJob, loadRecordOf } from "../repo";
import { cachePut, outboxAll } from "../storage";
import { dataChanged } from "../status";
import { pdfWords, watchPdf, type PdfState } from "../record_pdf";
import { canSign, lapsedOf, MEANINGS, meaningUnavailable, readinessOf, sealShort, STATEMENT } from "../signoff";
import { holdsOfDay, holdTitle, madeNote } from "../holds";
import type { DailyRecord, JobDetail, Meaning, User } from "../types";
import { BottomBar, CautionLine, Header, loadWords, plainReason } from "./common";
import { errorLines } from "../refusals";
import { dateTimeOf, href, timeOf, useDataVersion, useStatus } from "./hooks";
import { Badge, StateBadge } from "./signs";

const ROLE_WORDS: Record<string, string> = {
  supervisor: "Supervisor (competent person)",
  admin: "Organisation admin",
};

function RecordCard({ record }: { record: DailyRecord }) {
  return (
    <section class="card record" data-testid="record">
      <h2><Badge kind="safe" word="Day's record signed and sealed" /></h2>
      <dl class="facts">
        <dt>Seal</dt>
        <dd>
          <code class="seal" data-testid="seal" data-seal={record.seal}>{sealShort(record.seal)}</code>
          <span class="muted small"> (first 16 of {record.seal.length} hex characters)</span>
        </dd>
        <dt>Signed by</dt>
        <dd data-testid="signer">{record.signer_name}, {ROLE_WORDS[record.signer_role] ?? record.signer_role}</dd>
        <dt>Signed at</dt>
        <dd data-testid="signed-at">{dateTimeOf(record.signed_at)}</dd>
        <dt>Meaning</dt>
        <dd data-testid="meaning">{record.meaning}</dd>
        <dt>Place in the site's chain</dt>
        <dd>Record {record.sequence}{record.previous_seal ? `, after seal ${sealShort(record.previous_seal)}` : ", the first"}</dd>
      </dl>
      <RecordPdf record={record} />
      <p class="muted small">The PDF carries the record itself, so an auditor can check it on its own.</p>
    </section>
  );
}

/** The PDF link once the server has rendered it; until then, words saying it is being prepared. */
function RecordPdf({ record }: { record: DailyRecord }) {
  const [state, setState] = useState<PdfState>(record.pdf_ready ? { kind: "ready" } : { kind: "preparing", retryAfterS: 0 });
  useEffect(() => {
    if (record.pdf_ready) {
      setState({ kind: "ready" });
      return undefined;
    }
    return watchPdf(record.id, setState);
  }, [record.id, record.pdf_ready]);
  if (state.kind === "ready") {
    return (
      <a class="btn btn-primary" href={api.recordPdf(record.id)} download data-testid="record-pdf">
        Download the signed PDF
      </a>
    );
  }
  return (
    <p class={state.kind === "refused" ? "error" : "note"} role="status" data-testid="record-pdf-wait">
      {pdfWords(state)}
    </p>
  );
}

export function SignOff({ id, user }: { id: number; user: User }) {
  const status = useStatus();
  const [job, setJob] = useState<JobDetail | null>(null);
  const [record, setRecord] = useState<DailyRecord | null | undefined>(undefined);
  const [recordKept, setRecordKept] = useState("");
  const [loadError, setLoadError] = useState("");
  const [meaning, setMeaning] = useState<Meaning | null>(null);
  const [remarks, setRemarks] = useState("");
  const [password, setPassword] = useState("");
  // A refused signature puts the focus back in the emptied password box (it went to the page,
  // and the signer had to find the box again).
  const passwordAt = useRef<HTMLInputElement>(null);
  const [refusedAt, setRefusedAt] = useState(0);
  useEffect(() => {
    if (refusedAt) passwordAt.current?.focus();
  }, [refusedAt]);
  const [problems, setProblems] = useState<string[]>([]);
  const [busy, setBusy] = useState(false);
  const [justSigned, setJustSigned] = useState(false);
  const [waitingHere, setWaitingHere] = useState(0);
  const version = useDataVersion();

  useEffect(() => {
    outboxAll().then((all) => setWaitingHere(all.filter((e) => e.job === id && e.status === "waiting").length));
  }, [id, version]);

  useEffect(() => {
    (async () => {
      try {
        const loaded = await loadJob(id);
        setJob(loaded.value);
        try {
          const found = await loadRecordOf(loaded.value);
          setRecord(found.value);
          setRecordKept(found.fromCache ? found.savedAt : "");
        } catch {
          setRecord(null);
          setRecordKept("unknown");
        }
      } catch (e) {
        setLoadError(loadWords(e));
      }
    })();
  }, [id]);

  const back = href({ name: "job", id });
  if (loadError) return <main class="screen"><Header title="Day's record" back={back} /><p class="error">{loadError}</p></main>;
  if (!job || record === undefined) return <main class="screen"><Header title="Day's record" back={back} /><p class="muted">Loading…</p></main>;

  const sub = <span>{job.site_name} · {job.date}</span>;

  if (record) {
    return (
      <main class="screen">
        <Header title="Day's record" back={back} sub={sub} />
        {justSigned && <p class="note" role="status" data-testid="signed-message">Signed. The server sealed the record and added it to the site's chain.</p>}
        <RecordCard record={record} />
        <CautionLine job={job.id} />
      </main>
    );
  }

  const openHolds = job.holds.filter((h) => !h.cleared_at);
  const dayHolds = holdsOfDay(job.holds, timeOf);
  const stateReady = job.state === "closed" || job.state === "held";

  let refusal = "";
  if (!canSign(user)) refusal = "Only the supervisor (the competent person) or an admin signs the day's record.";
  else if (!stateReady) refusal = "Close the job (or leave it held) before signing the day's record.";
  if (refusal) {
    return (
      <main class="screen">
        <Header title="Day's record" back={back} sub={sub} />
        <section class="card" data-testid="sign-refusal">
          <StateBadge state={job.state} />
          <p>{refusal}</p>
          <p class="muted small">Not signed yet.</p>
        </section>
        <CautionLine job={job.id} />
      </main>
    );
  }

  async function sign(event: Event) {
    event.preventDefault();
    if (!job || busy) return;
    const found: string[] = [];
    if (!meaning) found.push("Choose what your signature means.");
    else if (meaningUnavailable(meaning, job.holds, readinessOf(job), lapsedOf(job), job.unread_wind ?? "")) found.push(meaningUnavailable(meaning, job.holds, readinessOf(job), lapsedOf(job), job.unread_wind ?? ""));
    if (meaning === "reviewed_exceptions" && !remarks.trim()) found.push("Write the exceptions in the remarks: the meaning points to them.");
    if (!password) found.push("Re-enter your password to sign.");
    if (found.length) {
      setProblems(found);
      return;
    }
    setBusy(true);
    setProblems([]);
    try {
      const signed = await api.sign(job.id, password, meaning!, remarks.trim());
      await keepRecord(signed);
      setPassword("");
      setRecord(signed);
      setJustSigned(true);
      window.scrollTo(0, 0);
      // Signing a held job closes it: fetch the state the server now holds.
      try {
        const fresh = await api.job(job.id);
        await cachePut(`job:${job.id}`, fresh);
        setJob(fresh);
      } catch {
        /* the kept copy refreshes on the next sync */
      }
      dataChanged();
    } catch (e) {
      setPassword("");
      setRefusedAt(Date.now());
      if (e instanceof OfflineError) setProblems(["No connection: signing needs signal, because your password is checked by the server at this moment. Nothing was signed or queued."]);
      else if (e instanceof ApiError && e.status === 400) setProblems(errorLines(e.body));
      else if (e instanceof ApiError) setProblems([`Not signed: ${e.message}`]);
      else setProblems([e instanceof Error ? e.message : String(e)]);
    } finally {
      setBusy(false);
    }
  }

  return (
    <main class="screen with-bar">
      <Header title="Sign the day's record" back={back} sub={sub} />
      <section class="card state-card">
        <StateBadge state={job.state} testid="job-state" />
        {recordKept === "unknown" && <p class="muted small">Could not ask the server whether this day is already signed; it refuses a second signature.</p>}
      </section>

      <section class="card" data-testid="sign-day">
        <h2>What you sign</h2>
        <p>
          {job.drops.length} {job.drops.length === 1 ? "drop" : "drops"} planned;{" "}
          {job.requirements.filter((r) => r.satisfied).length} of {job.requirements.length} pre-start checks done and passing
          {job.requirements.some((r) => r.latest_verdict === "fail") &&
            `; ${job.requirements.filter((r) => r.latest_verdict === "fail").length} with a failed item as the latest`}.
        </p>
        <a class="inline-link" href={href({ name: "job", id: job.id })} data-testid="sign-read-day">Read the day's checks and holds first</a>
      </section>

      {dayHolds.stopped && (
        <section class="card" data-testid="sign-holds-day">
          <h2><Badge kind={openHolds.length ? "held" : "caution"} word={dayHolds.headline} /></h2>
          <ul class="plain">
            {dayHolds.lines.map((line, n) => <li key={n}>{line}</li>)}
          </ul>
          <p class="muted small">Every stop-work hold of the day is in the record, cleared ones included.</p>
        </section>
      )}

      {openHolds.length > 0 ? (
        <section class="card alert" data-testid="sign-holds">
          <h2><Badge kind="held" word={`Stop work: ${openHolds.length} open ${openHolds.length === 1 ? "hold" : "holds"}`} /></h2>
          <p>Signing does not clear a hold. The record shows {openHolds.length === 1 ? "it" : "them"} as open.</p>
          <ul class="plain">
            {openHolds.map((h) => (
              <li key={h.id} class="hold">
                <p><strong>{holdTitle(job.requirements, h.requirement)}</strong></p>
                <p data-testid="hold-reason">{plainReason(h.reason)}</p>
                <p class="muted small">Open since {dateTimeOf(h.opened_at)}{madeNote(h, dateTimeOf)}.</p>
              </li>
            ))}
          </ul>
        </section>
      ) : (
        !dayHolds.stopped && <p class="card" data-testid="sign-no-holds"><Badge kind="safe" word={dayHolds.headline} /></p>
      )}

      <form id="sign-form" onSubmit={sign} class="sign-form">
        <fieldset class="choices" data-testid="meanings">
          <legend>What your signature means</legend>
          {MEANINGS.map((m) => {
            const blocked = meaningUnavailable(m.code, job.holds, readinessOf(job), lapsedOf(job), job.unread_wind ?? "");
            const chosen = meaning === m.code;
            return (
              <label key={m.code} class={`choice${chosen ? " choice-on" : ""}${blocked ? " choice-off" : ""}`} data-testid={`meaning-${m.code}`}>
                <input type="radio" name="meaning" value={m.code} checked={chosen} disabled={!!blocked}
                  onChange={() => setMeaning(m.code)} />
                <span class="choice-text">
                  {m.text}
                  {chosen && <strong class="choice-word"> Chosen.</strong>}
                  {blocked && <span class="choice-word small" data-testid="meaning-off"> {blocked}</span>}
                </span>
              </label>
            );
          })}
        </fieldset>

        <label class="field">
          <span>Remarks for the record {meaning === "reviewed_exceptions" ? "(needed: the exceptions)" : "(optional)"}</span>
          <textarea rows={3} value={remarks} onInput={(e) => setRemarks((e.target as HTMLTextAreaElement).value)} data-testid="sign-remarks" />
        </label>

        <section class="card statement" data-testid="statement">
          <h2>What signing means</h2>
          <p>{STATEMENT}</p>
          <p class="muted small">Signed as {user.name || user.username}. The server checks your password now; signing is never saved to send later.</p>
        </section>

        <label class="field">
          <span>Your password (re-enter it to sign)</span>
          <input type="password" name="password" autocomplete="current-password" value={password} ref={passwordAt}
            onInput={(e) => setPassword((e.target as HTMLInputElement).value)} data-testid="sign-password" />
        </label>

        {problems.length > 0 && (
          <div class="card alert" role="alert" data-testid="sign-error">
            <Badge kind="caution" word="Not signed" />
            {problems.map((line) => <p>{line}</p>)}
          </div>
        )}
        {waitingHere > 0 && (
          <p class="card alert" data-testid="sign-waiting">
            <Badge kind="mustdo" word={`${waitingHere} ${waitingHere === 1 ? "record" : "records"} of this job still on this phone`} />
            <span>They go to the server first, so the signed record holds them. Signing opens once they are sent.</span>
          </p>
        )}
        {!status.online && <p class="note" data-testid="sign-offline">Offline: signing needs signal. Last sync {timeOf(status.lastSync)}.</p>}
      </form>

      <CautionLine job={job.id} />

      <BottomBar>
        <button class="btn btn-primary" type="submit" form="sign-form" disabled={busy || !status.online || waitingHere > 0} data-testid="sign-submit">
          {busy ? "Signing…" : status.online ? "Sign the record" : "Sign (needs signal)"}
        </button>
      </BottomBar>
    </main>
  );
}

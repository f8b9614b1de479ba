import { useEffect, useRef, useState } from "preact/hooks";
import { api, ApiError, OfflineError } from "../api";
import { keptJob, loadJob, loadRecordOf, today } from "../repo";
import { enqueue } from "../outbox";
import { cachePut, outboxAll, outboxDismiss, type OutboxEntry } from "../storage";
import { refreshCounts, requestSync } from "../sync";
import { dataChanged } from "../status";
import type { DailyRecord, JobDetail, Reason, Requirement, User } from "../types";
import { deviceTime } from "../uuid";
import { holdClearedBy, holdTitle, madeNote, ownerClears, REGISTER_CLEARS } from "../holds";
import { BottomBar, CautionLine, Header, loadWords, plainReason } from "./common";
import { activeRefusals, errorLines } from "../refusals";
import { checkAgainWhy, mayClose, nextReadAgain, officeBlockers, opensOn, windLapsed } from "../job_rules";
import { dropNote, PART_NOTE_MAX, tapGuard, type DropChoice } from "../drops";
import { dateTimeOf, href, timeOf, useDataVersion, useStatus } from "./hooks";
import { canRecord, canSign, READ_ONLY_WORDS } from "../signoff";
import { Badge, StateBadge, type SignKind } from "./signs";

/** Taps on a drop's buttons: one log per tap, whatever the screen re-renders in between. */
const dropTaps = tapGuard();

function requirementStatus(
  req: Requirement, mine: OutboxEntry | undefined, opens: string | null, again: string | null,
): { kind: SignKind; word: string } {
  if (opens) return { kind: "mustdo", word: `Opens on ${opens}` };
  if (mine?.status === "waiting") {
    return mine.local_verdict === "fail"
      ? { kind: "held", word: "Failed on this phone, waiting to send" }
      : { kind: "caution", word: "Saved on this phone, waiting to send" };
  }
  if (mine?.status === "rejected") return { kind: "caution", word: "Not accepted by the server" };
  if (again && req.satisfied) return { kind: "mustdo", word: "Check again" };  // the wind ran out
  if (req.satisfied) return { kind: "safe", word: "Done" };
  if (req.latest_verdict === "fail") return { kind: "held", word: "Failed" };
  if (again) return { kind: "mustdo", word: "Check again" };
  return { kind: "mustdo", word: "To do" };
}

/** For a weather check that counts now, when to read the wind again: at work the job is stopped
 * then unless it is (the server's beat holds it within the minute). */
function readAgainBy(req: Requirement, state: string, nowMs: number): string {
  if (!req.read_again_by || !req.satisfied || state === "closed" || state === "held") return "";
  if (windLapsed(req, nowMs)) return "";
  return `Read the wind again by ${timeOf(req.read_again_by)}.`;
}

/** Why a weather check that counted no longer does by the phone's clock, in words ("" if it
 * still counts). */
function windRanOut(req: Requirement, state: string, nowMs: number): string {
  if (state === "closed" || !windLapsed(req, nowMs)) return "";
  return `The wind reading ran out at ${timeOf(req.read_again_by ?? null)}: read it again.`;
}

export function JobScreen({ id, user }: { id: number; user: User }) {
  const version = useDataVersion();
  const status = useStatus();
  const [job, setJob] = useState<JobDetail | null>(null);
  const [kept, setKept] = useState("");
  const [outbox, setOutbox] = useState<OutboxEntry[]>([]);
  const [error, setError] = useState("");
  const [message, setMessage] = useState("");
  // The answer to the bar's buttons (start, pause, close), shown beside the bar: a refusal is
  // announced and takes the focus, or it would be given far above the button tapped.
  const [answer, setAnswer] = useState<{ text: string; reasons?: Reason[]; refused?: boolean } | null>(null);
  const answerAt = useRef<HTMLElement>(null);
  const [closing, setClosing] = useState(false);
  const [closeReason, setCloseReason] = useState("");
  const [busy, setBusy] = useState(false);
  const [record, setRecord] = useState<DailyRecord | null>(null);
  const [dropOpen, setDropOpen] = useState<{ drop: number; choice: DropChoice | null; note: string; problem: string } | null>(null);
  // The phone's clock, read again when a weather check runs out (a screen left open at work
  // showed the check "Done" past its time, and the job working after the server stopped it).
  const [nowMs, setNowMs] = useState(Date.now());

  // Ask the server; offline, the copy kept on this phone, said to be one.
  const refresh = () =>
    loadJob(id).then((loaded) => {
      setJob(loaded.value);
      setKept(loaded.fromCache ? loaded.savedAt : "");
    });

  useEffect(() => {
    refresh().catch((e) => setError(loadWords(e)));
  }, [id]);

  // Signal back over a kept copy, or records sent: ask again (it went on saying "Offline" until
  // the screen was left).
  useEffect(() => {
    if (status.online && kept) refresh().catch(() => undefined);
  }, [status.online, version]);

  // The reason's box opens far above the bar's button: brought into view, the focus in it.
  const closeAt = useRef<HTMLTextAreaElement>(null);
  useEffect(() => {
    if (closing) closeAt.current?.focus();
  }, [closing]);

  useEffect(() => {
    const el = answerAt.current;
    if (!el || !answer) return;
    el.scrollIntoView({ block: answer.refused ? "start" : "nearest" });
    if (answer.refused) el.focus({ preventScroll: true });
  }, [answer]);

  useEffect(() => {
    (async () => {
      setOutbox((await outboxAll()).filter((e) => e.job === id));
      const copy = await keptJob(id);
      if (copy) setJob(copy);
    })();
  }, [version, id]);

  useEffect(() => {
    if (!job || job.state === "closed") return;
    const next = nextReadAgain(job.requirements, Date.now());
    const working = job.state === "working";
    // At a reading's time, show it run out; at work, ask the server again every 20 s: a stop
    // made elsewhere (the owner, the register, the beat on a lapsed wind reading) reaches an
    // open screen (it said "Working" until the operator left it). Offline, the kept copy.
    const wait = working ? 2e4 : next && next - Date.now() + 1e3;
    if (!wait) return;
    const timer = setTimeout(() => {
      setNowMs(Date.now());
      if (working) refresh().catch(() => undefined);
    }, Math.min(wait, 2e9));
    return () => clearTimeout(timer);
  }, [job, nowMs, id]);

  // Whether the day's record is signed: only asked once the day can be signed.
  const dayOver = job?.state === "closed" || job?.state === "held";
  useEffect(() => {
    if (!job || !dayOver) return;
    loadRecordOf(job).then((r) => setRecord(r.value)).catch(() => undefined);
  }, [id, dayOver, version]);

  if (error && !job) return <main class="screen"><Header title="Job" back={href({ name: "jobs" })} /><p class="error">{error}</p></main>;
  if (!job) return <main class="screen"><Header title="Job" back={href({ name: "jobs" })} /><p class="muted">Loading…</p></main>;

  const latestFor = (key: string) =>
    [...outbox].reverse().find((e) => e.requirement === key && e.record.type === "sheet");
  const openHolds = job.holds.filter((h) => !h.cleared_at);
  const localFails = outbox.filter((e) => e.status === "waiting" && e.local_verdict === "fail");
  const rejected = activeRefusals(outbox);
  const opens = opensOn(job.date, today());
  // What an open hold already says is not said twice.
  const heldBack = officeBlockers(job.blockers).filter((b) => !openHolds.some((h) => h.requirement === b.requirement));
  const waitingHere = outbox.filter((e) => e.status === "waiting");
  const signHere = canSign(user) && dayOver && !record;


  async function start() {
    if (!job) return;
    setBusy(true);
    setAnswer(null);
    try {
      await requestSync();
      const updated = await api.start(job.id);
      await cachePut(`job:${job.id}`, updated);
      setJob(updated);
      dataChanged();
      setAnswer({ text: "Work started. The server confirmed every pre-start check." });
    } catch (e) {
      if (e instanceof ApiError && e.status === 409) {
        setAnswer({ text: e.message || "Work cannot start yet.", reasons: (e.body.reasons as Reason[] | undefined) ?? [], refused: true });
      } else if (e instanceof OfflineError) {
        setAnswer({ text: "Starting work needs a connection: the server confirms every check first.", refused: true });
      } else {
        setAnswer({ text: e instanceof Error ? e.message : String(e), refused: true });
      }
    } finally {
      setBusy(false);
    }
  }

  async function pause() {
    if (!job) return;
    await enqueue(
      { type: "job_action", data: { job: job.id, action: "pause", reason: "Paused on the roof." } },
      { label: "Pause work", job: job.id },
    );
    setAnswer({ text: "Pause queued; the server's answer shows on this screen once sent." });
  }

  async function close(event: Event) {
    event.preventDefault();
    if (!job) return;
    if (job.state === "held" && !closeReason.trim()) {
      setAnswer({ text: "Closing a held job needs a reason.", refused: true });
      return;
    }
    await enqueue(
      { type: "job_action", data: { job: job.id, action: "close", reason: closeReason.trim() } },
      { label: "Close work for the day", job: job.id },
    );
    setClosing(false);
    setAnswer({ text: "Close queued; the server's answer shows on this screen once sent." });
  }

  /** Log the drop with the note the operator chose or typed; a repeated tap does nothing. */
  async function logDrop(dropId: number, label: string, choice: DropChoice, typed: string) {
    if (!job) return;
    const made = dropNote(choice, typed);
    if ("problem" in made) {
      setDropOpen({ drop: dropId, choice, note: typed, problem: made.problem });
      return;
    }
    const tap = `drop:${dropId}`;
    if (!dropTaps.begin(tap, Date.now())) return;
    try {
      await enqueue(
        { type: "drop_log", data: { drop: dropId, device_time: deviceTime(), note: made.note } },
        { label: `Drop done: ${label} (${made.note})`, job: job.id },
      );
      setDropOpen(null);
      setMessage(`Drop ${label} logged: ${made.note}`);
    } finally {
      dropTaps.end(tap);
    }
  }

  async function dismiss(uuid: string) {
    await outboxDismiss(uuid);
    await refreshCounts();
    dataChanged();
  }

  const dropsDone = (dropId: number) =>
    outbox.filter((e) => e.record.type === "drop_log" && e.record.data.drop === dropId && e.status !== "rejected").length;

  return (
    <main class="screen with-bar">
      <Header title={job.site_name} back={href({ name: "jobs" })} sub={<span>{job.date} · Supervisor {job.supervisor_name}</span>} />
      <section class="card state-card">
        <StateBadge state={job.state} testid="job-state" />
        {error && (
          <p class="error small" data-testid="job-refresh-failed">
            The server did not answer as expected ({error}); this is the copy kept on this phone.
          </p>
        )}
        <p class="muted small">
          {kept ? `Offline: the state the server gave at ${timeOf(kept)}.` : error ? "" : "State from the server."}
        </p>
        {waitingHere.length > 0 && (
          <p class="note" data-testid="job-waiting">
            {waitingHere.length} {waitingHere.length === 1 ? "record" : "records"} saved on this phone, waiting to send.
            The state shown changes once the server has them.
          </p>
        )}
      </section>

      {record && (
        <a class="card card-link record-link" href={href({ name: "sign", id: job.id })} data-testid="record-signed">
          <Badge kind="safe" word="Day's record signed" />
          <span class="small">{record.signer_name}, {dateTimeOf(record.signed_at)}. Open to see the seal and the PDF.</span>
        </a>
      )}
      {signHere && (
        <section class="card" data-testid="sign-card">
          <Badge kind="mustdo" word="Day's record not signed yet" />
          <p class="small">As the competent person, review the day and sign it. Signing needs signal.</p>
          {waitingHere.length > 0 && <p class="small"><strong>Send the records waiting on this phone first, so the record holds them.</strong></p>}
          <a class="btn btn-primary" href={href({ name: "sign", id: job.id })} data-testid="sign-action">Sign the day's record</a>
        </section>
      )}

      {localFails.length > 0 && (
        <section class="card alert" data-testid="local-stop">
          <Badge kind="held" word="Stop work" />
          <p>A blocking item failed on this phone and is not sent yet:</p>
          <ul>{localFails.map((e) => <li key={e.client_uuid}>{e.label}: {(e.local_failures ?? []).join("; ")}</li>)}</ul>
        </section>
      )}

      {openHolds.length > 0 && (
        <section class="card alert" data-testid="holds">
          <h2><Badge kind="held" word="Stop work: open holds" /></h2>
          <p data-testid="holds-do">Keep the robot off the facade (if it is up, bring it down safely) and tell the supervisor.</p>
          <ul class="plain">
            {openHolds.map((h) => (
              <li key={h.id} class="hold">
                <p><strong>{holdTitle(job.requirements, h.requirement)}</strong></p>
                <p data-testid="hold-reason">{plainReason(h.reason)}</p>
                {holdClearedBy(h.requirement) === "owner" ? (
                  <p class="muted small" data-testid="hold-owner-clears">Since {timeOf(h.opened_at)}. {ownerClears(h.requirement)}</p>
                ) : holdClearedBy(h.requirement) === "register" ? (
                  <p class="muted small" data-testid="hold-register-clears">Since {timeOf(h.opened_at)}. {REGISTER_CLEARS}</p>
                ) : (
                  <>
                    <p class="muted small">Since {timeOf(h.opened_at)}{madeNote(h, timeOf)}. {h.item_key === "weather_due" ? "Reading the wind again clears it." : "A new passing check after the repair clears it."}</p>
                    <a class="btn" href={href({ name: "sheet", id: job.id, requirement: h.requirement })}>Re-check</a>
                  </>
                )}
              </li>
            ))}
          </ul>
        </section>
      )}

      {message && <p class="note" role="status" data-testid="job-message">{message}</p>}

      {rejected.length > 0 && (
        <section class="card" data-testid="rejected">
          <h2><Badge kind="caution" word="Not accepted by the server" /></h2>
          <ul class="plain">
            {rejected.map((e) => (
              <li key={e.client_uuid}>
                <strong>{e.label}</strong>
                {errorLines(e.errors).map((line) => <p class="small">{line}</p>)}
                <button class="btn btn-small" type="button" onClick={() => void dismiss(e.client_uuid)}
                  data-testid="dismiss-refusal">Dismiss</button>
              </li>
            ))}
          </ul>
        </section>
      )}

      {heldBack.length > 0 && job.state !== "closed" && (
        <section class="card alert" data-testid="blockers">
          <h2><Badge kind="held" word="The server will refuse to start this job" /></h2>
          <ul class="plain">
            {heldBack.map((b, n) => <li key={n}><p>{b.message}</p></li>)}
          </ul>
          <p class="muted small">No check on this phone puts these right: the supervisor changes the plan or the register, or the owner the access, first.</p>
        </section>
      )}

      {opens && (
        <p class="note" data-testid="job-opens">
          This job is for {opens}. Its pre-start checks open on {opens}: they can be read now, and filled on the day.
        </p>
      )}

      <section>
        <h2>Pre-start checks</h2>
        <ul class="list" data-testid="requirements">
          {job.requirements.map((req) => {
            const mine = latestFor(req.key);
            const again = job.state === "closed" ? null : checkAgainWhy(job.blockers, req.key) || windRanOut(req, job.state, nowMs) || null;
            const s = requirementStatus(req, mine, opens, again);
            return (
              <li key={req.key}>
                <a class="card card-link req" href={href({ name: "sheet", id: job.id, requirement: req.key })}
                  data-testid={`req-${req.key}`} data-status={s.kind}>
                  <span class="card-title">{req.title}</span>
                  <span class="muted">{req.subject}</span>
                  <Badge kind={s.kind} word={s.word} />
                  {again && s.word === "Check again" && <span class="small" data-testid="req-again">{again}</span>}
                  {readAgainBy(req, job.state, nowMs) && <span class="small" data-testid="req-read-by">{readAgainBy(req, job.state, nowMs)}</span>}
                </a>
              </li>
            );
          })}
        </ul>
      </section>

      <section>
        <h2>Drops</h2>
        <ul class="list">
          {job.drops.map((d) => (
            <li key={d.id} class="card drop">
              <span class="card-title">{d.label}</span>
              <span class="muted">{d.length_m} m</span>
              {dropsDone(d.id) > 0 && <Badge kind="safe" word={`Logged done ×${dropsDone(d.id)}`} />}
              {job.state !== "working" ? (
                <span class="muted small">Drops are logged while work is under way.</span>
              ) : !canRecord(user) ? null : dropOpen?.drop !== d.id ? (
                <button class="btn" type="button" onClick={() => setDropOpen({ drop: d.id, choice: null, note: "", problem: "" })}
                  data-testid="drop-log">Log drop done</button>
              ) : (
                <div class="drop-choice" role="group" aria-label={`What was done on drop ${d.label}`}>
                  <button class="btn btn-primary" type="button" onClick={() => void logDrop(d.id, d.label, "whole", "")}
                    data-testid="drop-whole">Whole drop done</button>
                  <button class="btn" type="button" aria-pressed={dropOpen.choice === "part"}
                    onClick={() => setDropOpen({ ...dropOpen, choice: "part", problem: "" })} data-testid="drop-part">Part of the drop</button>
                  {dropOpen.choice === "part" && (
                    <>
                      <label class="field">
                        <span>Which part was done?</span>
                        <textarea rows={2} maxLength={PART_NOTE_MAX} value={dropOpen.note} data-testid="drop-part-note"
                          onInput={(e) => setDropOpen({ ...dropOpen, note: (e.target as HTMLTextAreaElement).value, problem: "" })} />
                      </label>
                      <button class="btn btn-primary" type="button" onClick={() => void logDrop(d.id, d.label, "part", dropOpen.note)}
                        data-testid="drop-part-send">Log part done</button>
                    </>
                  )}
                  {dropOpen.problem && <p class="error small" role="alert">{dropOpen.problem}</p>}
                  <button class="btn" type="button" onClick={() => setDropOpen(null)} data-testid="drop-cancel">Cancel</button>
                </div>
              )}
            </li>
          ))}
        </ul>
      </section>

      {closing && (
        <form class="card" onSubmit={close} data-testid="close-form">
          <label class="field">
            <span>Why is work closing? {job.state === "held" ? "(needed for a held job)" : "(optional)"}</span>
            <textarea rows={3} ref={closeAt} value={closeReason} onInput={(e) => setCloseReason((e.target as HTMLTextAreaElement).value)} />
          </label>
          <div class="row">
            <button class="btn btn-primary" type="submit">Close work</button>
            <button class="btn" type="button" onClick={() => setClosing(false)}>Keep open</button>
          </div>
        </form>
      )}

      <CautionLine job={job.id} />

      {answer && (
        <section key={answer.refused ? "refused" : "answer"} ref={answerAt} tabIndex={-1} class={answer.refused ? "card alert bar-answer" : "note bar-answer"}
          role={answer.refused ? "alert" : "status"} data-testid={answer.refused ? "bar-refused" : "bar-answer"}>
          <p>{answer.text}</p>
          {answer.reasons && answer.reasons.length > 0 && (
            <ul class="plain" data-testid="start-reasons">
              {answer.reasons.map((r, n) => <li key={n}><Badge kind="mustdo" word={r.message} /></li>)}
            </ul>
          )}
        </section>
      )}

      <BottomBar>
        {signHere && job.state === "closed" && (
          <a class="btn btn-primary" href={href({ name: "sign", id: job.id })} data-testid="sign-action-bar">Sign the day's record</a>
        )}
        {!canRecord(user) && <span class="bar-note" data-testid="read-only">{READ_ONLY_WORDS}</span>}
        {canRecord(user) && opens && job.state !== "closed" && (
          <span class="bar-note" data-testid="opens-on">Opens on {opens}</span>
        )}
        {canRecord(user) && !opens && job.state === "held" && (
          <span class="bar-note" data-testid="held-note">Stopped: see the holds above</span>
        )}
        {canRecord(user) && !opens && job.state !== "working" && job.state !== "closed" && job.state !== "held" && (
          <button class="btn btn-primary" type="button" onClick={start} disabled={busy || !status.online}
            data-testid="start" title={status.online ? "" : "Needs a connection"}>
            {status.online ? "Start work" : "Start (needs signal)"}
          </button>
        )}
        {canRecord(user) && job.state === "working" && (
          <button class="btn" type="button" onClick={pause} data-testid="pause">Pause work</button>
        )}
        {mayClose(user, job) && (
          <button class="btn" type="button" onClick={() => setClosing(true)} data-testid="close">Close work</button>
        )}
      </BottomBar>
    </main>
  );
}

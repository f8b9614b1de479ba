/**
 * A record's signed PDF, the server's check of a record or an export, and the export of a
 * period. The verdict is the server's, shown word for word with the signer it names: these
 * screens never call a record verified on their own.
 */
import { useEffect, useState } from "preact/hooks";
import { api } from "../api";
import { retryAfterSeconds, watchPdf, type PdfState } from "../record_pdf";
import type { DailyRecord } from "../types";
import { Badge, type SignKind } from "../ui/signs";
import { fieldErrors } from "./api";
import { describedBy, FieldErrors } from "./parts";
import { errorWords } from "./recordPage";
import { records, type CheckAnswer, type VerifyAnswer } from "./recordsApi";

function pdfWaitWords(state: PdfState): string {
  switch (state.kind) {
    case "preparing":
      return state.retryAfterS > 0
        ? `The signed PDF is being prepared; this page asks again in ${state.retryAfterS} s and offers it here when it is ready.`
        : "The signed PDF is being prepared.";
    case "offline":
      return `The signed PDF is being prepared. No connection to ask for it now; this page asks again in ${state.retryAfterS} s.`;
    case "refused":
      return `The signed PDF cannot be fetched: ${state.message}`;
    case "ready":
      return "The signed PDF is ready.";
  }
}

/** The record's signed PDF once rendered; until then, words saying it is being prepared. */
export function PdfLink({ record, label }: { record: DailyRecord; label: string }) {
  const [state, setState] = useState<PdfState>(record.pdf_ready ? { kind: "ready" } : { kind: "preparing", retryAfterS: 0 });
  useEffect(() => (record.pdf_ready ? undefined : watchPdf(record.id, setState)), [record.id, record.pdf_ready]);
  if (state.kind === "ready") {
    return (
      <a class="btn btn-primary" href={api.recordPdf(record.id)} download data-testid="record-pdf">
        {label}
      </a>
    );
  }
  return (
    <p class={state.kind === "refused" ? "error" : "note"} role="status" data-testid="record-pdf-wait">
      {pdfWaitWords(state)}
    </p>
  );
}

function verdictSign(answer: VerifyAnswer): SignKind {
  if (answer.ok) return "safe";
  return answer.intact ? "caution" : "held";
}

/** The server's verdict as it gave it: its words, the signer and trust it names, each check. */
function Verdict({ answer }: { answer: VerifyAnswer }) {
  const kind = verdictSign(answer);
  // The badge's word is the verdict's own opening (the server's words up to its first colon).
  const opening = answer.verdict.split(":")[0]?.trim() || answer.verdict;
  const checks = answer.checks ?? [];
  return (
    <div class={`desk-verdict desk-verdict-${kind}`} data-testid="verify-result" data-ok={String(answer.ok)}
      data-intact={String(answer.intact)} data-vouched={String(answer.vouched)}>
      <p class="desk-verdict-head">
        <span>The server's verdict:</span> <Badge kind={kind} word={opening} testid="verify-opening" />
      </p>
      <p class="desk-verdict-text" data-testid="verify-verdict">{answer.verdict}</p>
      {answer.signer && (
        <dl class="desk-cert" data-testid="verify-signer">
          <dt>Signer's organisation</dt>
          <dd data-testid="verify-organisation">{answer.signer.organisation || "Not named in the file"}</dd>
          <dt>Certificate</dt>
          <dd>{answer.signer.subject}</dd>
          <dt>SHA-256 fingerprint</dt>
          <dd class="desk-hex" data-testid="verify-fingerprint">{answer.signer.fingerprint_sha256}</dd>
          {answer.trust ? (
            <>
              <dt>Trust anchor</dt>
              <dd>{answer.trust}</dd>
            </>
          ) : null}
        </dl>
      )}
      {checks.length > 0 && (
        <ul class="desk-verify-checks" data-testid="verify-checks">
          {checks.map((c) => (
            <li key={c.name} data-ok={String(c.ok)}>
              <Badge kind={c.ok ? "safe" : "held"} word={c.ok ? "Check passed" : "Check failed"} />
              <span>{c.detail}</span>
            </li>
          ))}
        </ul>
      )}
    </div>
  );
}

type Checking =
  | { kind: "idle" }
  | { kind: "working" }
  | { kind: "pending"; detail: string }
  | { kind: "done"; answer: VerifyAnswer }
  | { kind: "failed"; message: string };

/**
 * A button that asks the server for its verdict (a stored record checked where it is kept, or
 * an export just built sent back to verify/) and shows it. Checking stores nothing.
 */
export function VerifyPanel({ check: ask, label, testid }: { check: () => Promise<CheckAnswer>; label: string; testid: string }) {
  const [state, setState] = useState<Checking>({ kind: "idle" });
  async function check() {
    setState({ kind: "working" });
    try {
      const got = await ask();
      if (got.kind === "pending") {
        setState({ kind: "pending", detail: got.detail || "The file is still being prepared; check it again in a moment." });
        return;
      }
      setState({ kind: "done", answer: got.answer });
    } catch (e) {
      setState({ kind: "failed", message: errorWords(e) });
    }
  }
  return (
    <div class="desk-verify" data-testid={testid}>
      <button type="button" class="btn" onClick={() => void check()} disabled={state.kind === "working"} data-testid="verify-button">
        {label}
      </button>
      <div aria-live="polite">
        {state.kind === "working" && <p class="muted" data-testid="verify-working">The server is checking the file…</p>}
        {state.kind === "pending" && <p class="note" data-testid="verify-pending">{state.detail}</p>}
        {state.kind === "failed" && <p class="error" data-testid="verify-failed">The check could not be made: {state.message}</p>}
        {state.kind === "done" && <Verdict answer={state.answer} />}
      </div>
    </div>
  );
}

type Exporting =
  | { kind: "idle" }
  | { kind: "working" }
  | { kind: "pending"; detail: string; retryAfterS: number }
  | { kind: "ready"; url: string; name: string; blob: Blob }
  | { kind: "failed"; errors: Record<string, string[]> };

/**
 * The export of a site and period: every signed PDF in it and a signed manifest that verifies
 * offline. The server builds it on request; while record PDFs are still rendering it answers
 * 202, and this asks again after the time it gave.
 */
export function ExportPanel({ siteId, start: firstStart, end: firstEnd }: { siteId: number; start: string; end: string }) {
  const [start, setStart] = useState(firstStart);
  const [end, setEnd] = useState(firstEnd);
  const [state, setState] = useState<Exporting>({ kind: "idle" });

  // A built file's address is let go when a new one replaces it or the page closes.
  useEffect(() => (state.kind === "ready" ? () => URL.revokeObjectURL(state.url) : undefined), [state]);
  useEffect(() => {
    if (state.kind !== "pending") return undefined;
    const handle = setTimeout(() => void build(), state.retryAfterS * 1000);
    return () => clearTimeout(handle);
  }, [state]);

  async function build() {
    setState({ kind: "working" });
    try {
      const got = await records.export(siteId, start, end);
      if (got.kind === "pending") {
        const retryAfterS = retryAfterSeconds(got.retryAfter);
        setState({ kind: "pending", detail: got.detail, retryAfterS });
      } else {
        setState({ kind: "ready", url: URL.createObjectURL(got.blob), name: got.name, blob: got.blob });
      }
    } catch (e) {
      setState({ kind: "failed", errors: fieldErrors(e) });
    }
  }

  const errors = state.kind === "failed" ? state.errors : {};
  const general = [...(errors[""] ?? []), ...(errors.site ?? [])];
  return (
    <section aria-labelledby="export-head" class="desk-export" data-testid="export">
      <h2 id="export-head">Export a period</h2>
      <p>
        Every signed record and addendum of this site in the period, as signed PDFs with a signed list of them, in one ZIP
        file that can be checked offline. Change the dates for another period (at most 400 days).
      </p>
      <form class="desk-export-form" onSubmit={(e) => { e.preventDefault(); void build(); }}>
        <label class="field" for="export-start">
          From
          <input id="export-start" type="date" value={start} required onInput={(e) => setStart(e.currentTarget.value)}
            aria-describedby={describedBy(errors.start && "err-export-start")} aria-invalid={errors.start ? true : undefined} />
        </label>
        <FieldErrors id="err-export-start" messages={errors.start} />
        <label class="field" for="export-end">
          To
          <input id="export-end" type="date" value={end} required onInput={(e) => setEnd(e.currentTarget.value)}
            aria-describedby={describedBy(errors.end && "err-export-end")} aria-invalid={errors.end ? true : undefined} />
        </label>
        <FieldErrors id="err-export-end" messages={errors.end} />
        <button type="submit" class="btn" disabled={state.kind === "working"} data-testid="export-build">
          Prepare the export
        </button>
      </form>
      <div aria-live="polite">
        {state.kind === "working" && <p class="muted" data-testid="export-working">The server is putting the export together…</p>}
        {state.kind === "pending" && (
          <p class="note" data-testid="export-pending">{state.detail} This page asks again in {state.retryAfterS} s.</p>
        )}
        {general.length > 0 && <p class="error" role="alert" data-testid="export-failed">{general.join(" ")}</p>}
        {state.kind === "ready" && (
          <div class="desk-export-ready">
            <a class="btn btn-primary" href={state.url} download={state.name} data-testid="export-download">
              Download {state.name} ({Math.max(1, Math.round(state.blob.size / 1024))} kB)
            </a>
            <VerifyPanel
              key={state.url}
              check={() => records.verify(state.blob, state.name)}
              label="Check this export on the server"
              testid="export-verify"
            />
          </div>
        )}
      </div>
    </section>
  );
}

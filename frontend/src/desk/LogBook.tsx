/**
 * The building's anchor log book: every entry newest first, and the form the owner signs an
 * entry with (inspection, load test, repair, modification, removal from service, return).
 * Signing re-enters the password, as the server requires; removing an anchor holds every open
 * job that plans to use it, whichever contractor's.
 */
import { useState } from "preact/hooks";
import { ApiError } from "../api";
import { Badge } from "../ui/signs";
import { dayFrom, desk, fieldErrors, type LogEntryInput } from "./api";
import { DeskCaution, ErrorSummary, FieldErrors, invalidProps, useFormErrors, type ErrorField, type Errors } from "./parts";
import { KIND_WORDS, RESULT_WORDS, SiteTitle, SiteWaiting, useSite, type SiteData } from "./site";

type Kind = LogEntryInput["kind"];

const KINDS: Kind[] = ["periodic_inspection", "load_test", "repair", "modification", "removed_from_service", "returned_to_service"];
const WITH_RESULT = new Set<Kind>(["periodic_inspection", "load_test"]);

const DETAILS_LABEL: Partial<Record<Kind, string>> = {
  removed_from_service: "Reason for removing it from service",
  returned_to_service: "What was done before returning it to service",
};

/** A 403 that names the password is the server refusing the one re-entered; show it at the field. */
function sortErrors(e: unknown): Errors {
  if (e instanceof ApiError && e.status === 403 && /password/i.test(e.message)) {
    return { password: ["Wrong password: nothing was signed or stored. Re-enter the password you sign in with."] };
  }
  return fieldErrors(e);
}

function EntryForm({ data, onSigned }: { data: SiteData; onSigned: () => Promise<void> }) {
  const [anchor, setAnchor] = useState("");
  const [kind, setKind] = useState<Kind>("periodic_inspection");
  const [result, setResult] = useState<"pass" | "fail">("pass");
  const [on, setOn] = useState(dayFrom(0));
  const [by, setBy] = useState("");
  const [company, setCompany] = useState("");
  const [details, setDetails] = useState("");
  const [password, setPassword] = useState("");
  const { errors, setErrors, show, shown, form } = useFormErrors();
  const [busy, setBusy] = useState(false);
  const [done, setDone] = useState("");

  async function submit(event: Event) {
    event.preventDefault();
    setDone("");
    const local: Errors = {};
    if (!anchor) local.anchor = ["Choose the anchor."];
    if (!details.trim()) local.details = ["Say what was done and found."];
    if (!password) local.password = ["Re-enter your password to sign."];
    if (Object.keys(local).length) return show(local);
    const body: LogEntryInput = {
      anchor: Number(anchor),
      kind,
      result: WITH_RESULT.has(kind) ? result : "none",
      performed_on: on,
      details: details.trim(),
      password,
    };
    if (by.trim()) body.performed_by = by.trim();
    if (company.trim()) body.performed_by_company = company.trim();
    setBusy(true);
    setErrors({});
    try {
      const entry = await desk.addLogEntry(body);
      // A fresh form: a removal from service is never one click away from being signed twice.
      setAnchor("");
      setKind("periodic_inspection");
      setDetails("");
      setBy("");
      setCompany("");
      await onSigned();
      setDone(`Signed into the log book: ${KIND_WORDS[entry.kind].toLowerCase()} of anchor ${entry.anchor_label}, entry ${entry.sequence}.`);
    } catch (e) {
      show(sortErrors(e));
    } finally {
      setPassword("");
      setBusy(false);
    }
  }

  const err = (field: string) => invalidProps(errors[field] && `err-log-${field}`);
  const fields: Record<string, ErrorField> = {
    anchor: { label: "Anchor", id: "log-anchor" },
    kind: { label: "What was done", id: "log-kind" },
    result: { label: "Result", id: `log-result-${result}` },
    performed_on: { label: "Done on", id: "log-on" },
    performed_by: { label: "Done by (the competent person)", id: "log-by" },
    performed_by_company: { label: "Their company", id: "log-company" },
    details: { label: DETAILS_LABEL[kind] ?? "What was done and found", id: "log-details" },
    password: { label: "Your password", id: "log-password" },
  };
  if (!WITH_RESULT.has(kind)) delete fields.result;
  return (
    <form class="desk-form" onSubmit={submit} data-testid="log-form" noValidate ref={form}>
      {done && <p class="note" role="status" data-testid="log-done">{done}</p>}
      <ErrorSummary errors={errors} fields={fields} head="Nothing was signed into the log book. Put these right:" formId="err-log-form" shown={shown} />
      <div class="field">
        <label for="log-anchor">Anchor</label>
        <select id="log-anchor" value={anchor} onChange={(e) => setAnchor(e.currentTarget.value)} {...err("anchor")}>
          <option value="">Choose the anchor</option>
          {data.anchors.map((a) => <option key={a.id} value={String(a.id)}>{a.label}</option>)}
        </select>
        <FieldErrors id="err-log-anchor" messages={errors.anchor} />
      </div>
      <div class="field">
        <label for="log-kind">What was done</label>
        <select id="log-kind" value={kind} onChange={(e) => setKind(e.currentTarget.value as Kind)} {...err("kind")}>
          {KINDS.map((k) => <option key={k} value={k}>{KIND_WORDS[k]}</option>)}
        </select>
        <FieldErrors id="err-log-kind" messages={errors.kind} />
      </div>
      {kind === "removed_from_service" && (
        <p class="caution-line" data-testid="removal-warning">
          <Badge kind="held" word="Stop work" />
          <span>Removing the anchor puts every open job that plans to use it on hold, whichever contractor's, until it is returned to service.</span>
        </p>
      )}
      {WITH_RESULT.has(kind) && (
        <fieldset class="desk-ratings">
          <legend>Result</legend>
          <div class="desk-pick">
            {(["pass", "fail"] as const).map((r) => (
              <label key={r} class={`desk-radio${result === r ? " desk-radio-on" : ""}`}>
                <input type="radio" id={`log-result-${r}`} name="log-result" value={r} checked={result === r} onChange={() => setResult(r)}
                  {...(result === r ? err("result") : {})} />
                {RESULT_WORDS[r]}
              </label>
            ))}
          </div>
          <FieldErrors id="err-log-result" messages={errors.result} />
          {result === "fail" && (
            <p class="muted small" data-testid="log-fail-stops" role="note">
              A failed {kind === "load_test" ? "load test" : "inspection"} takes this anchor out of service: every open job
              using it stops work until you sign its return to service.
            </p>
          )}
        </fieldset>
      )}
      <div class="field">
        <label for="log-on">Done on</label>
        <input id="log-on" type="date" value={on} max={dayFrom(0)} onInput={(e) => setOn(e.currentTarget.value)} {...err("performed_on")} />
        <FieldErrors id="err-log-performed_on" messages={errors.performed_on} />
      </div>
      <div class="field">
        <label for="log-by">Done by <span class="muted">(the competent person; blank for you)</span></label>
        <input id="log-by" type="text" value={by} autocomplete="off" onInput={(e) => setBy(e.currentTarget.value)} {...err("performed_by")} />
        <FieldErrors id="err-log-performed_by" messages={errors.performed_by} />
      </div>
      <div class="field">
        <label for="log-company">Their company <span class="muted">(optional)</span></label>
        <input id="log-company" type="text" value={company} autocomplete="off" onInput={(e) => setCompany(e.currentTarget.value)} {...err("performed_by_company")} />
        <FieldErrors id="err-log-performed_by_company" messages={errors.performed_by_company} />
      </div>
      <div class="field">
        <label for="log-details">{DETAILS_LABEL[kind] ?? "What was done and found"}</label>
        <textarea id="log-details" rows={3} value={details} onInput={(e) => setDetails(e.currentTarget.value)} {...err("details")} />
        <FieldErrors id="err-log-details" messages={errors.details} />
      </div>
      <div class="field">
        <label for="log-password">Your password, to sign the entry</label>
        <input id="log-password" type="password" autocomplete="current-password" value={password} onInput={(e) => setPassword(e.currentTarget.value)}
          {...err("password")} />
        <FieldErrors id="err-log-password" messages={errors.password} />
      </div>
      <p class="muted small">Signing means: I made or witnessed the work recorded here and its result is as stated.</p>
      <button class="btn btn-primary" type="submit" disabled={busy} data-testid="log-submit">
        {busy ? "Signing…" : "Sign into the log book"}
      </button>
    </form>
  );
}

export function DeskLogBook({ siteId }: { siteId?: number }) {
  const { data, empty, error, reload } = useSite(siteId);
  if (!data) return <SiteWaiting title="Anchor log book" empty={empty} error={error} />;
  const entries = [...data.log].sort((a, b) => b.sequence - a.sequence);
  return (
    <>
      <SiteTitle title="Anchor log book" page="log" data={data} />
      <p>
        <a class="btn" href={`/api/v1/anchor-log/pdf/?site=${data.site.id}`} download data-testid="log-pdf">Download the signed log book (PDF)</a>
      </p>
      <div class="desk-columns">
        <section aria-labelledby="entries-head">
          <h2 id="entries-head">Entries, newest first ({entries.length})</h2>
          {entries.length === 0 ? (
            <p class="muted" data-testid="log-none">Nothing is recorded yet.</p>
          ) : (
            <table class="desk-table desk-log" data-testid="log-entries">
              <thead>
                <tr>
                  <th scope="col">No.</th><th scope="col">Date</th><th scope="col">Anchor</th><th scope="col">What</th>
                  <th scope="col">Result</th><th scope="col">Who</th><th scope="col">Details</th>
                </tr>
              </thead>
              <tbody>
                {entries.map((e) => (
                  <tr key={e.id} data-testid={`entry-${e.sequence}`} data-kind={e.kind}>
                    <td>{e.sequence}</td>
                    <td>{e.performed_on}</td>
                    <th scope="row">{e.anchor_label}</th>
                    <td>{KIND_WORDS[e.kind]}</td>
                    <td>{RESULT_WORDS[e.result ?? "none"]}</td>
                    <td>{e.performed_by}{e.performed_by_company ? `, ${e.performed_by_company}` : ""}<br /><span class="muted small">signed by {e.recorded_by}, {e.organisation}</span></td>
                    <td>{e.details}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          )}
        </section>
        <section aria-labelledby="sign-head" class="desk-side">
          <h2 id="sign-head">Sign an entry</h2>
          {data.site.owned ? (
            <EntryForm data={data} onSigned={reload} />
          ) : (
            <p class="muted" data-testid="log-owner-only">
              Only the building's owner signs entries in its anchor log book. Your crews' pre-use checks reach it from their check sheets.
            </p>
          )}
        </section>
      </div>
      <DeskCaution />
    </>
  );
}

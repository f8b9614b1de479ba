/**
 * Who may work at the building: the site's dated grants to contractors, a form to give one and
 * a way to end one now (with a reason). Only the site's owner manages these; a contractor sees
 * the site while a grant covers the day.
 */
import { useEffect, useState } from "preact/hooks";
import { Badge, type SignKind } from "../ui/signs";
import { dayFrom, desk, fieldErrors, type Grant } from "./api";
import { DeskCaution, ErrorSummary, FieldErrors, invalidProps, useFormErrors } from "./parts";
import { SiteTitle, SiteWaiting, useSite } from "./site";

function grantState(g: Grant, today: string): { sign: SignKind; word: string } {
  if (g.ended_at) return { sign: "closed", word: "Ended" };
  if (g.ends_on < today) return { sign: "closed", word: "Run out" };
  if (g.starts_on > today) return { sign: "mustdo", word: "Starts later" };
  return { sign: "safe", word: "In force" };
}

/** What ending a grant did, for the owner: it stops the contractor's robots at work there. */
function endedWords(name: string, stopped: number): string {
  const jobs =
    stopped === 0
      ? "None of their jobs was at work here."
      : `${stopped === 1 ? "1 job" : `${stopped} jobs`} of theirs at work here stopped at once; their crew is told to bring the robot down safely.`;
  return `Access ended for ${name}. ${jobs}`;
}

function EndGrant({ site, grant, onEnded }: { site: number; grant: Grant; onEnded: (words: string) => Promise<void> }) {
  const [reason, setReason] = useState("");
  const { errors, setErrors, show, shown, form } = useFormErrors();
  const [busy, setBusy] = useState(false);
  const id = `end-${grant.id}`;

  async function submit(event: Event) {
    event.preventDefault();
    if (!reason.trim()) return show({ reason: ["Say why the grant ends."] });
    // It acts at once, on a robot that may be on the facade: asked first (it ended on one click).
    if (!confirm(`End access for ${grant.contractor_name} now? Any robot of theirs at work at this site stops at once.`)) return;
    setBusy(true);
    setErrors({});
    try {
      const ended = await desk.endGrant(site, grant.id, reason.trim());
      await onEnded(endedWords(grant.contractor_name, ended.work_stopped));
    } catch (e) {
      show(fieldErrors(e));
      setBusy(false);
    }
  }

  return (
    <form class="desk-inline" onSubmit={submit} data-testid={`end-grant-${grant.id}`} noValidate ref={form}>
      <ErrorSummary errors={errors} shown={shown} formId={`err-${id}-form`} head={`Access was not ended for ${grant.contractor_name}. Put this right:`}
        fields={{ reason: { label: "Reason for ending access", id: `${id}-reason` } }} />
      <div class="field">
        <label for={`${id}-reason`}>Reason for ending access to {grant.contractor_name}</label>
        <input id={`${id}-reason`} type="text" autocomplete="off" value={reason} onInput={(e) => setReason(e.currentTarget.value)}
          {...invalidProps(errors.reason && `err-${id}-reason`)} />
        <FieldErrors id={`err-${id}-reason`} messages={errors.reason} />
      </div>
      <button class="btn" type="submit" disabled={busy} data-testid="end-grant-submit">End access now</button>
    </form>
  );
}

function GiveGrant({ site, known, onGiven }: { site: number; known: { id: number; name: string }[]; onGiven: () => Promise<void> }) {
  const [choice, setChoice] = useState(known.length ? String(known[0]!.id) : "other");
  const [number, setNumber] = useState("");
  const [from, setFrom] = useState(dayFrom(0));
  const [to, setTo] = useState(dayFrom(365));
  const { errors, setErrors, show, shown, form } = useFormErrors();
  const [busy, setBusy] = useState(false);
  const [done, setDone] = useState("");

  async function submit(event: Event) {
    event.preventDefault();
    setDone("");
    const text = choice === "other" ? number.trim() : choice;
    const local: Record<string, string[]> = {};
    if (!/^\d+$/.test(text)) local.contractor = ["Enter the contractor's organisation number (a whole number)."];
    if (!from) local.starts_on = ["Enter the first day of access."];
    if (!to) local.ends_on = ["Enter the last day of access."];
    else if (from && to < from) local.ends_on = ["The last day comes before the first: enter a later day."];
    if (Object.keys(local).length) return show(local);
    setBusy(true);
    setErrors({});
    try {
      const g = await desk.grant(site, { contractor: Number(text), starts_on: from, ends_on: to });
      setNumber("");
      await onGiven();
      setDone(`Access given to ${g.contractor_name} from ${g.starts_on} to ${g.ends_on}.`);
    } catch (e) {
      show(fieldErrors(e));
    } finally {
      setBusy(false);
    }
  }

  return (
    <form class="desk-form" onSubmit={submit} data-testid="grant-form" noValidate ref={form}>
      {done && <p class="note" role="status" data-testid="grant-done">{done}</p>}
      <ErrorSummary errors={errors} shown={shown} formId="err-grant-form" head="No access was given. Put these right:"
        fields={{
          contractor: choice === "other" ? { label: "Contractor's organisation number", id: "grant-number" } : { label: "Contractor", id: "grant-contractor" },
          starts_on: { label: "From", id: "grant-from" },
          ends_on: { label: "To (last day)", id: "grant-to" },
        }} />
      <div class="field">
        <label for="grant-contractor">Contractor</label>
        <select id="grant-contractor" value={choice} onChange={(e) => setChoice(e.currentTarget.value)}
          {...invalidProps(errors.contractor && choice !== "other" && "err-grant-contractor")}>
          {known.map((c) => <option key={c.id} value={String(c.id)}>{c.name}</option>)}
          <option value="other">Another contractor, by its organisation number</option>
        </select>
      </div>
      {choice === "other" && (
        <div class="field">
          <label for="grant-number">Contractor's organisation number <span class="muted">(from the platform's staff: Parapet lists no other organisations)</span></label>
          <input id="grant-number" type="text" inputMode="numeric" autocomplete="off" value={number} onInput={(e) => setNumber(e.currentTarget.value)}
            {...invalidProps(errors.contractor && "err-grant-contractor")} />
        </div>
      )}
      <FieldErrors id="err-grant-contractor" messages={errors.contractor} />
      <div class="field">
        <label for="grant-from">From</label>
        <input id="grant-from" type="date" value={from} onInput={(e) => setFrom(e.currentTarget.value)} {...invalidProps(errors.starts_on && "err-grant-starts_on")} />
        <FieldErrors id="err-grant-starts_on" messages={errors.starts_on} />
      </div>
      <div class="field">
        <label for="grant-to">To (last day)</label>
        <input id="grant-to" type="date" value={to} onInput={(e) => setTo(e.currentTarget.value)} {...invalidProps(errors.ends_on && "err-grant-ends_on")} />
        <FieldErrors id="err-grant-ends_on" messages={errors.ends_on} />
      </div>
      <button class="btn btn-primary" type="submit" disabled={busy} data-testid="grant-submit">{busy ? "Giving…" : "Give access"}</button>
    </form>
  );
}

export function DeskGrants({ siteId }: { siteId?: number }) {
  const { data, empty, error } = useSite(siteId);
  const [grants, setGrants] = useState<Grant[] | null>(null);
  const [grantError, setGrantError] = useState("");
  const [ended, setEnded] = useState("");
  const site = data?.site.id;

  async function load() {
    if (site === undefined) return;
    try {
      setGrants(await desk.grants(site));
    } catch (e) {
      setGrantError(Object.values(fieldErrors(e)).flat().join(" "));
    }
  }
  useEffect(() => void load(), [site]);

  if (!data) return <SiteWaiting title="Access grants" empty={empty} error={error} />;
  const today = dayFrom(0);
  const known = [...new Map((grants ?? []).map((g) => [g.contractor, { id: g.contractor, name: g.contractor_name }])).values()];

  return (
    <>
      <SiteTitle title="Access grants" page="grants" data={data} />
      {grantError && <p class="error" role="alert" data-testid="grants-error">{grantError}</p>}
      {ended && <p class="note" role="status" data-testid="grant-ended">{ended}</p>}
      {!grants && !grantError && <p class="muted">Loading the grants…</p>}
      {grants && (
        <div class="desk-columns">
          <section aria-labelledby="grants-head">
            <h2 id="grants-head">Grants ({grants.length})</h2>
            {grants.length === 0 ? <p class="muted">No contractor has been given access.</p> : (
              <ul class="list desk-items desk-grants">
                {grants.map((g) => {
                  const state = grantState(g, today);
                  return (
                    <li key={g.id} class="card" data-testid={`grant-${g.id}`} data-state={state.word}>
                      <div class="desk-item-head">
                        <strong class="card-title">{g.contractor_name}</strong>
                        <Badge kind={state.sign} word={state.word} testid="grant-state" />
                      </div>
                      <span>{g.starts_on} to {g.ends_on}{g.ended_at ? `; ended on ${g.ended_at.slice(0, 10)}${g.ended_reason ? `: ${g.ended_reason}` : ""}` : ""}</span>
                      {!g.ended_at && g.ends_on >= today && (
                        <EndGrant site={data.site.id} grant={g} onEnded={async (words) => { setEnded(words); await load(); }} />
                      )}
                    </li>
                  );
                })}
              </ul>
            )}
          </section>
          <section aria-labelledby="grant-add-head" class="desk-side">
            <h2 id="grant-add-head">Give access</h2>
            <GiveGrant site={data.site.id} known={known} onGiven={load} />
          </section>
        </div>
      )}
      <DeskCaution />
    </>
  );
}

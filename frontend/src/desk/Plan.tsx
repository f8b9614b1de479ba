/**
 * Planning a day: create the job for a site and a date, then add its drops. While the kit and
 * the anchor pair are being chosen, the server's plan check says what it would refuse (booked
 * elsewhere that day, out of service) and what would block the start, beside each field.
 */
import { useEffect, useRef, useState } from "preact/hooks";
import type { Anchor, Equipment, JobDetail, Site, User } from "../types";
import { go, href } from "../ui/hooks";
import { Badge, StateBadge } from "../ui/signs";
import { registerBlockers } from "../job_rules";
import { dayFrom, desk, fieldErrors, type Conflict, type DropInput, type PlanChoice } from "./api";
import { ConflictLines, DeskCaution, ErrorSummary, FieldErrors, invalidProps, useFormErrors, type ErrorField, type Errors } from "./parts";
import { RoofPlan, SLOT_WORDS, type AnchorSlot } from "./RoofPlan";

function CreateJob({ user }: { user: User }) {
  const [sites, setSites] = useState<Site[] | null>(null);
  const [site, setSite] = useState("");
  const [date, setDate] = useState(dayFrom(1));
  const { errors, setErrors, show, shown, form } = useFormErrors();
  const [busy, setBusy] = useState(false);

  useEffect(() => {
    desk.sites().then(
      (list) => {
        setSites(list);
        if (list.length === 1) setSite(String(list[0]!.id));
      },
      (e) => show(fieldErrors(e)),
    );
  }, []);

  async function submit(event: Event) {
    event.preventDefault();
    const local: Errors = {};
    if (!site) local.site = ["Choose a site."];
    if (!date) local.date = ["Enter the day of work."];
    if (Object.keys(local).length) return show(local);
    setBusy(true);
    setErrors({});
    try {
      const job = await desk.createJob({ site: Number(site), date, supervisor: user.id });
      go({ name: "desk", page: "plan", id: job.id });
    } catch (e) {
      show(fieldErrors(e));
    } finally {
      setBusy(false);
    }
  }

  return (
    <>
      <div class="desk-title">
        <h1>Plan a day</h1>
      </div>
      <p>First the job: one site, one day, with you as its supervisor. Its drops come next.</p>
      <form class="desk-form desk-narrow" onSubmit={submit} data-testid="create-job" noValidate ref={form}>
        <ErrorSummary errors={errors} shown={shown} formId="err-form" head="The job was not created. Put these right:"
          fields={{ site: { label: "Site", id: "f-site" }, date: { label: "Day of work", id: "f-date" } }} />
        <div class="field">
          <label for="f-site">Site</label>
          <select id="f-site" value={site} onChange={(e) => setSite(e.currentTarget.value)} {...invalidProps(errors.site && "err-site")}>
            <option value="">{sites ? "Choose a site" : "Loading the sites…"}</option>
            {(sites ?? []).map((s) => (
              <option key={s.id} value={String(s.id)}>{s.name}{s.address ? `, ${s.address}` : ""}</option>
            ))}
          </select>
          <FieldErrors id="err-site" messages={errors.site} />
        </div>
        <div class="field">
          <label for="f-date">Day of work</label>
          <input id="f-date" type="date" value={date} required onInput={(e) => setDate(e.currentTarget.value)}
            {...invalidProps(errors.date && "err-date")} />
          <FieldErrors id="err-date" messages={errors.date} />
        </div>
        <button class="btn btn-primary" type="submit" disabled={busy} data-testid="create-job-submit">
          {busy ? "Creating…" : "Create the job"}
        </button>
      </form>
      <DeskCaution />
    </>
  );
}

const KIT: { field: "robot" | "tether" | "safety_line" | "hose"; label: string }[] = [
  { field: "robot", label: "Robot" },
  { field: "tether", label: "Suspension tether" },
  { field: "safety_line", label: "Safety line" },
  { field: "hose", label: "Water hose" },
];

type Field = (typeof KIT)[number]["field"] | AnchorSlot;
type Choice = Record<Field, number | null>;

const NONE: Choice = { robot: null, tether: null, safety_line: null, hose: null, anchor: null, safety_anchor: null };

const ANCHOR_SLOTS: { slot: AnchorSlot; label: string }[] = [
  { slot: "anchor", label: "Main anchor (tether)" },
  { slot: "safety_anchor", label: "Safety anchor (safety line)" },
];

/** The add-drop form's fields in its order, as its summary names them. */
const DROP_FIELDS: Record<string, ErrorField> = {
  label: { label: "Drop name", id: "f-label" },
  length_m: { label: "Length of the drop", id: "f-length" },
  ...Object.fromEntries(KIT.map((k) => [k.field, { label: k.label, id: `f-${k.field}` }])),
  ...Object.fromEntries(ANCHOR_SLOTS.map((a) => [a.slot, { label: a.label, id: `f-${a.slot}` }])),
};

function equipmentWords(item: Equipment): string {
  const parts = [item.label];
  if (item.in_service === false) parts.push("out of service");
  if (item.next_inspection_due) parts.push(`inspection due ${item.next_inspection_due}`);
  return parts.join(" · ");
}

function anchorWords(anchor: Anchor, today: string): string {
  const cert = anchor.certification;
  if (!cert) return `${anchor.label} · no certificate on record`;
  return `${anchor.label} · ${cert.valid_until < today ? "certificate ended" : "certified to"} ${cert.valid_until}`;
}

interface Reference {
  site: Site | null;
  anchors: Anchor[];
  kit: Record<string, Equipment[]>;
}

function Planner({ jobId }: { jobId: number }) {
  const [job, setJob] = useState<JobDetail | null>(null);
  const [ref, setRef] = useState<Reference | null>(null);
  const [loadError, setLoadError] = useState("");
  const [label, setLabel] = useState("");
  const [length, setLength] = useState("");
  const [choice, setChoice] = useState<Choice>(NONE);
  const [pickFor, setPickFor] = useState<AnchorSlot>("anchor");
  const [conflicts, setConflicts] = useState<Conflict[]>([]);
  const [checking, setChecking] = useState<"idle" | "checking" | "done" | "failed">("idle");
  const { errors, setErrors, show, shown, form } = useFormErrors();
  const [busy, setBusy] = useState(false);
  const [added, setAdded] = useState("");
  const checkSeq = useRef(0);

  useEffect(() => {
    (async () => {
      try {
        const loaded = await desk.job(jobId);
        setJob(loaded);
        const [sites, anchors, ...kits] = await Promise.all([
          desk.sites(),
          desk.anchors(loaded.site),
          ...KIT.map((k) => desk.equipment(k.field)),
        ]);
        const kit: Record<string, Equipment[]> = {};
        KIT.forEach((k, i) => (kit[k.field] = kits[i] as Equipment[]));
        setRef({ site: (sites as Site[]).find((s) => s.id === loaded.site) ?? null, anchors: anchors as Anchor[], kit });
      } catch (e) {
        setLoadError(Object.values(fieldErrors(e)).flat().join(" "));
      }
    })();
  }, [jobId]);

  // Ask the server what stands against the choices so far; only the latest answer counts.
  useEffect(() => {
    const chosen: PlanChoice = {};
    for (const [field, id] of Object.entries(choice)) if (id !== null) chosen[field as Field] = id;
    // The length is checked with the lines and the building's height once it reads as a number.
    const metres = Number(length.trim().replace(",", "."));
    if (length.trim() && Number.isFinite(metres)) chosen.length_m = metres;
    const n = ++checkSeq.current;
    if (!Object.keys(chosen).length) {
      setConflicts([]);
      setChecking("idle");
      return;
    }
    setChecking("checking");
    desk.planCheck(jobId, chosen).then(
      (answer) => {
        if (n !== checkSeq.current) return;
        setConflicts(answer.conflicts);
        setChecking("done");
      },
      () => n === checkSeq.current && setChecking("failed"),
    );
  }, [choice, length, jobId]);

  // A new choice stands on its own: the server's earlier answer about that field no longer applies.
  function choose(field: Field, value: number | null) {
    setChoice((c) => ({ ...c, [field]: value }));
    setErrors((e) => {
      const { [field]: _gone, ...rest } = e;
      return rest;
    });
  }

  function pickOnPlan(anchor: number) {
    choose(pickFor, anchor);
    if (pickFor === "anchor") setPickFor("safety_anchor");
  }

  async function submit(event: Event) {
    event.preventDefault();
    setAdded("");
    const local: Errors = {};
    const metres = Number(length.trim().replace(",", "."));
    if (!label.trim()) local.label = ["Name the drop."];
    if (!length.trim()) local.length_m = ["Enter the drop's length in metres."];
    else if (!Number.isFinite(metres)) local.length_m = ["Enter the drop's length in metres, a number."];
    for (const k of KIT) if (choice[k.field] === null) local[k.field] = [`Choose the ${k.label.toLowerCase()}.`];
    for (const a of ANCHOR_SLOTS) if (choice[a.slot] === null) local[a.slot] = [`Choose the ${a.label.toLowerCase()}.`];
    if (Object.keys(local).length) return show(local);
    const data: Partial<DropInput> = { label: label.trim() };
    if (length.trim()) data.length_m = metres;
    for (const [field, id] of Object.entries(choice)) if (id !== null) data[field as Field] = id;
    setBusy(true);
    setErrors({});
    try {
      const drop = await desk.addDrop(jobId, data);
      setAdded(`Drop ${drop.label} added.`);
      setLabel("");
      setLength("");
      setChoice(NONE);
      setPickFor("anchor");
      setJob(await desk.job(jobId));
    } catch (e) {
      show(fieldErrors(e));
    } finally {
      setBusy(false);
    }
  }

  if (loadError) return <><h1>Plan a day</h1><p class="error" role="alert">{loadError}</p></>;
  if (!job || !ref) return <><h1>Plan a day</h1><p class="muted">Loading the job…</p></>;

  const nameOf = (list: { id: number; label: string }[], id: number) => list.find((x) => x.id === id)?.label ?? `#${id}`;
  const allKit = Object.values(ref.kit).flat();
  const refusals = conflicts.filter((c) => c.refuses).length;
  const cautions = conflicts.length - refusals;
  const outline = Array.isArray(ref.site?.roof_outline) ? ref.site.roof_outline : [];

  return (
    <>
      <div class="desk-title">
        <h1>Plan drops: {job.site_name}, {job.date}</h1>
        <StateBadge state={job.state} testid="plan-job-state" />
      </div>
      <p class="muted">Supervisor {job.supervisor_name} · <a class="inline-link" href={href({ name: "desk", page: "jobs" })}>All days and jobs</a></p>
      {job.state !== "closed" && registerBlockers(job.blockers).length > 0 && (
        <section class="card alert" data-testid="job-blockers" aria-label="Why the server will refuse to start this job">
          <Badge kind="held" word="The server will refuse to start this job" />
          <ul>{registerBlockers(job.blockers).map((r, n) => <li key={n}>{r.message}</li>)}</ul>
        </section>
      )}

      <section aria-labelledby="drops-head">
        <h2 id="drops-head">Drops planned ({job.drops.length})</h2>
        {job.drops.length === 0 ? (
          <p class="muted" data-testid="drops-none">No drops yet.</p>
        ) : (
          <table class="desk-table" data-testid="drops">
            <thead>
              <tr>
                <th scope="col">Drop</th><th scope="col">Length</th><th scope="col">Robot</th>
                <th scope="col">Main anchor</th><th scope="col">Safety anchor</th>
                <th scope="col">Tether</th><th scope="col">Safety line</th><th scope="col">Hose</th>
              </tr>
            </thead>
            <tbody>
              {job.drops.map((d) => (
                <tr key={d.id} data-testid={`drop-${d.label}`}>
                  <th scope="row">{d.label}</th>
                  <td>{d.length_m} m</td>
                  <td>{nameOf(allKit, d.robot)}</td>
                  <td>{nameOf(ref.anchors, d.anchor)}</td>
                  <td>{nameOf(ref.anchors, d.safety_anchor)}</td>
                  <td>{nameOf(allKit, d.tether)}</td>
                  <td>{nameOf(allKit, d.safety_line)}</td>
                  <td>{nameOf(allKit, d.hose)}</td>
                </tr>
              ))}
            </tbody>
          </table>
        )}
      </section>

      {job.state !== "planned" && job.state !== "cleared" ? (
        <p class="note" data-testid="plan-closed">
          Drops are planned only before work starts; this job is {job.state}.
        </p>
      ) : (
      <section aria-labelledby="add-head">
        <h2 id="add-head">Add a drop</h2>
        {added && <p class="note" role="status" data-testid="drop-added">{added}</p>}
        <form class="desk-form desk-plan" onSubmit={submit} data-testid="add-drop" noValidate ref={form}>
          <div class="desk-plan-fields">
            <ErrorSummary errors={errors} shown={shown} formId="err-form" fields={DROP_FIELDS} head="The drop was not added. Put these right:" />
            <div class="field">
              <label for="f-label">Drop name</label>
              <input id="f-label" type="text" value={label} onInput={(e) => setLabel(e.currentTarget.value)}
                {...invalidProps(errors.label && "err-label")} autocomplete="off" />
              <FieldErrors id="err-label" messages={errors.label} />
            </div>
            <div class="field">
              <label for="f-length">Length of the drop</label>
              <span class="input-unit">
                <input id="f-length" type="text" inputMode="decimal" value={length} onInput={(e) => setLength(e.currentTarget.value)}
                  {...invalidProps(errors.length_m && "err-length_m")} autocomplete="off" />
                <span class="unit">m</span>
              </span>
              <FieldErrors id="err-length_m" messages={errors.length_m} />
            </div>
            {KIT.map((k) => (
              <div class="field" key={k.field}>
                <label for={`f-${k.field}`}>{k.label}</label>
                <select id={`f-${k.field}`} value={choice[k.field] === null ? "" : String(choice[k.field])}
                  onChange={(e) => choose(k.field, e.currentTarget.value ? Number(e.currentTarget.value) : null)}
                  {...invalidProps(errors[k.field] && `err-${k.field}`)}>
                  <option value="">Choose…</option>
                  {(ref.kit[k.field] ?? []).map((item) => (
                    <option key={item.id} value={String(item.id)}>{equipmentWords(item)}</option>
                  ))}
                </select>
                <ConflictLines field={k.field} conflicts={conflicts} />
                <FieldErrors id={`err-${k.field}`} messages={errors[k.field]} />
              </div>
            ))}
          </div>
          <fieldset class="desk-anchors">
            <legend>Anchor pair</legend>
            <div class="desk-pick" role="radiogroup" aria-label="Choosing on the plan">
              {ANCHOR_SLOTS.map((a) => (
                <label key={a.slot} class={`desk-radio${pickFor === a.slot ? " desk-radio-on" : ""}`}>
                  <input type="radio" name="pick-for" value={a.slot} checked={pickFor === a.slot} onChange={() => setPickFor(a.slot)} />
                  Choosing on the plan: {a.label.toLowerCase()}
                </label>
              ))}
            </div>
            <RoofPlan outline={outline} anchors={ref.anchors} chosen={{ anchor: choice.anchor, safety_anchor: choice.safety_anchor }} onPick={pickOnPlan} />
            {ANCHOR_SLOTS.map((a) => (
              <div class="field" key={a.slot}>
                <label for={`f-${a.slot}`}>{a.label} <span class="muted">(marked “{SLOT_WORDS[a.slot]}” on the plan)</span></label>
                <select id={`f-${a.slot}`} value={choice[a.slot] === null ? "" : String(choice[a.slot])}
                  onChange={(e) => choose(a.slot, e.currentTarget.value ? Number(e.currentTarget.value) : null)}
                  {...invalidProps(errors[a.slot] && `err-${a.slot}`)}>
                  <option value="">Choose…</option>
                  {ref.anchors.map((anchor) => (
                    <option key={anchor.id} value={String(anchor.id)}>{anchorWords(anchor, dayFrom(0))}</option>
                  ))}
                </select>
                <ConflictLines field={a.slot} conflicts={conflicts} />
                <FieldErrors id={`err-${a.slot}`} messages={errors[a.slot]} />
              </div>
            ))}
          </fieldset>
          <div class="desk-submit">
            <p class="desk-check" role="status" data-testid="plan-check" data-state={checking} data-refusals={refusals}>
              {checking === "idle" && "The plan check runs as you choose."}
              {checking === "checking" && "Checking the choices…"}
              {checking === "failed" && "The plan check did not answer; the server still checks when the drop is added."}
              {checking === "done" && (conflicts.length
                ? `Plan check: ${refusals} refused, ${cautions} ${cautions === 1 ? "caution" : "cautions"}; each is shown beside its field.`
                : "Plan check: nothing stands against these choices.")}
            </p>
            <button class="btn btn-primary" type="submit" disabled={busy} data-testid="add-drop-submit">
              {busy ? "Adding…" : "Add the drop"}
            </button>
          </div>
        </form>
      </section>
      )}
      <DeskCaution />
    </>
  );
}

export function DeskPlan({ user, jobId }: { user: User; jobId?: number }) {
  return jobId === undefined ? <CreateJob user={user} /> : <Planner jobId={jobId} />;
}

/**
 * The equipment register: every item by kind, its state in words and shape, its next
 * inspection; new entries from a form drawn from the kind's ratings, field by field.
 * Taking an item out of service needs a reason; each change is the server's audit entry.
 */
import { useEffect, useState } from "preact/hooks";
import type { Equipment } from "../types";
import { Badge } from "../ui/signs";
import { desk, fieldErrors, type EquipmentInput, type EquipmentKind, type RatingField } from "./api";
import { DeskCaution, ErrorSummary, FieldErrors, invalidProps, useFormErrors, type ErrorField } from "./parts";

const MINIMUM_WORDS: Record<string, string> = {
  above_zero: "greater than zero",
  zero_or_more: "zero or more",
};

/** Why and since when an item is out of service, as the register recorded it. */
function outOfServiceWords(item: Equipment): string {
  const since = item.out_of_service_since ? `Out of service since ${item.out_of_service_since}` : "Out of service";
  const why = item.out_of_service_reason?.trim();
  return why ? `${since}: ${why}` : `${since}; no reason was recorded.`;
}

function ItemCard({ item, onChanged }: { item: Equipment; onChanged: (item: Equipment) => void }) {
  const [open, setOpen] = useState(false);
  const [due, setDue] = useState(item.next_inspection_due ?? "");
  const [reason, setReason] = useState("");
  const { errors, setErrors, show, shown, form } = useFormErrors<HTMLDivElement>();
  const [busy, setBusy] = useState(false);
  const [done, setDone] = useState("");
  const slug = `${item.id}`;
  const inService = item.in_service !== false;

  async function change(body: Parameters<typeof desk.changeEquipment>[1], words: string) {
    setBusy(true);
    setErrors({});
    setDone("");
    try {
      const changed = await desk.changeEquipment(item.id, body);
      setReason("");
      setDone(words);
      onChanged(changed);
    } catch (e) {
      show(fieldErrors(e));
    } finally {
      setBusy(false);
    }
  }

  function takeOut(event: Event) {
    event.preventDefault();
    if (!reason.trim()) return show({ reason: ["Say why it comes out of service."] });
    void change({ in_service: false, reason: reason.trim() }, `${item.label} taken out of service.`);
  }

  function putBack(event: Event) {
    event.preventDefault();
    if (!reason.trim()) return show({ reason: ["Say why it is fit to return: what was repaired or replaced, and who inspected it."] });
    void change({ in_service: true, reason: reason.trim() }, `${item.label} returned to service: check it again before it is used.`);
  }

  const reasonLabel = inService ? "Reason for taking it out of service" : "Why it is fit to return to service";

  return (
    <li class="card desk-item" data-testid={`item-${item.label}`} data-in-service={inService ? "yes" : "no"}>
      <div class="desk-item-head">
        <strong class="card-title">{item.label}</strong>
        {inService ? <Badge kind="safe" word="In service" testid="item-state" /> : <Badge kind="held" word="Out of service" testid="item-state" />}
      </div>
      <span class="muted">
        {item.serial ? `Serial ${item.serial} · ` : ""}Next inspection {item.next_inspection_due ?? "not recorded"}
      </span>
      {!inService && (
        <p class="small" data-testid="item-out-why">
          {outOfServiceWords(item)}
        </p>
      )}
      {done && <p class="note" role="status" data-testid="item-done">{done}</p>}
      <button class="btn btn-small" type="button" aria-expanded={open} onClick={() => setOpen(!open)} data-testid="item-change">
        {open ? "Close" : `Change ${item.label}`}
      </button>
      {open && (
        <div class="desk-item-forms" ref={form}>
          <ErrorSummary errors={errors} shown={shown} formId={`err-${slug}-form`} head={`${item.label} was not changed. Put these right:`}
            fields={{ next_inspection_due: { label: "Next inspection due", id: `due-${slug}` }, reason: { label: reasonLabel, id: `reason-${slug}` } }} />
          <form class="desk-inline" onSubmit={(e) => { e.preventDefault(); void change({ next_inspection_due: due || null }, `Next inspection of ${item.label} set.`); }}>
            <div class="field">
              <label for={`due-${slug}`}>Next inspection due</label>
              <input id={`due-${slug}`} type="date" value={due} onInput={(e) => setDue(e.currentTarget.value)}
                {...invalidProps(errors.next_inspection_due && `err-${slug}-due`)} />
              <FieldErrors id={`err-${slug}-due`} messages={errors.next_inspection_due} />
            </div>
            <button class="btn" type="submit" disabled={busy} data-testid="item-save-due">Save the date</button>
          </form>
          <form class="desk-inline" onSubmit={inService ? takeOut : putBack}>
            <div class="field">
              <label for={`reason-${slug}`}>{reasonLabel}</label>
              <input id={`reason-${slug}`} type="text" value={reason} onInput={(e) => setReason(e.currentTarget.value)}
                {...invalidProps(errors.reason && `err-${slug}-reason`)} autocomplete="off" />
              <FieldErrors id={`err-${slug}-reason`} messages={errors.reason} />
              {!inService && (
                <p class="muted small">
                  Its checks made before it comes back no longer count: the crew checks it again before it is used.
                </p>
              )}
            </div>
            {inService ? (
              <button class="btn" type="submit" disabled={busy} data-testid="item-take-out">Take out of service</button>
            ) : (
              <button class="btn" type="submit" disabled={busy} data-testid="item-return">Return to service</button>
            )}
          </form>
        </div>
      )}
    </li>
  );
}

function RatingInput({ field, value, error, onInput }: { field: RatingField; value: string; error?: string[]; onInput: (v: string) => void }) {
  const id = `rating-${field.key}`;
  const errId = `err-ratings.${field.key}`;
  const hint = [field.required ? "required" : "optional", field.minimum ? MINIMUM_WORDS[field.minimum] : ""].filter(Boolean).join(", ");
  return (
    <div class="field">
      <label for={id}>{field.label.charAt(0).toUpperCase() + field.label.slice(1)} <span class="muted">({hint})</span></label>
      <span class="input-unit">
        {field.text && field.choices.length ? (
          <select id={id} value={value} onChange={(e) => onInput(e.currentTarget.value)} {...invalidProps(error && errId)}>
            <option value="">Choose…</option>
            {field.choices.map((c) => <option key={c} value={c}>{c}</option>)}
          </select>
        ) : (
          <input id={id} type="text" inputMode={field.text ? "text" : "decimal"} value={value} required={field.required}
            onInput={(e) => onInput(e.currentTarget.value)} {...invalidProps(error && errId)} autocomplete="off" />
        )}
        {field.unit && <span class="unit">{field.unit}</span>}
      </span>
      <FieldErrors id={errId} messages={error} />
    </div>
  );
}

function AddForm({ kinds, onAdded }: { kinds: EquipmentKind[]; onAdded: (item: Equipment) => void }) {
  const [kind, setKind] = useState(kinds[0]?.kind ?? "");
  const [label, setLabel] = useState("");
  const [serial, setSerial] = useState("");
  const [due, setDue] = useState("");
  const [ratings, setRatings] = useState<Record<string, string>>({});
  const { errors, setErrors, show, shown, form } = useFormErrors();
  const [busy, setBusy] = useState(false);
  const [done, setDone] = useState("");
  const spec = kinds.find((k) => k.kind === kind);

  async function submit(event: Event) {
    event.preventDefault();
    if (!spec) return;
    const values: Record<string, unknown> = {};
    for (const f of spec.ratings) {
      const text = (ratings[f.key] ?? "").trim();
      if (!text) continue;
      const n = Number(text.replace(",", "."));
      // A number that does not read as one goes as typed: the server names what is wrong.
      values[f.key] = f.text ? text : Number.isFinite(n) ? n : text;
    }
    const data: EquipmentInput = { kind: spec.kind as EquipmentInput["kind"], label: label.trim(), serial: serial.trim(), ratings: values };
    if (due) data.next_inspection_due = due;
    setBusy(true);
    setErrors({});
    setDone("");
    try {
      const item = await desk.addEquipment(data);
      setDone(`${spec.label} ${item.label} added to the register.`);
      setLabel("");
      setSerial("");
      setDue("");
      setRatings({});
      onAdded(item);
    } catch (e) {
      show(fieldErrors(e));
    } finally {
      setBusy(false);
    }
  }

  const fields: Record<string, ErrorField> = {
    kind: { label: "Kind", id: "add-kind" },
    label: { label: "Label (as marked on the item)", id: "add-label" },
    serial: { label: "Maker's serial number", id: "add-serial" },
    next_inspection_due: { label: "Next inspection due", id: "add-due" },
  };
  // A refusal of the ratings as a whole (none given) is shown atop them and leads to the first.
  if (spec?.ratings[0]) fields.ratings = { label: `Ratings of the ${spec.label.toLowerCase()}`, id: `rating-${spec.ratings[0].key}` };
  for (const f of spec?.ratings ?? []) {
    fields[`ratings.${f.key}`] = { label: f.label.charAt(0).toUpperCase() + f.label.slice(1), id: `rating-${f.key}` };
  }
  return (
    <form class="desk-form" onSubmit={submit} data-testid="add-equipment" noValidate ref={form}>
      {done && <p class="note" role="status" data-testid="equipment-added">{done}</p>}
      <ErrorSummary errors={errors} fields={fields} shown={shown} formId="err-add-form" head="Nothing was added to the register. Put these right:" />
      <div class="field">
        <label for="add-kind">Kind</label>
        <select id="add-kind" value={kind} onChange={(e) => { setKind(e.currentTarget.value); setRatings({}); setErrors({}); }}
          {...invalidProps(errors.kind && "err-add-kind")}>
          {kinds.map((k) => <option key={k.kind} value={k.kind}>{k.label}</option>)}
        </select>
        <FieldErrors id="err-add-kind" messages={errors.kind} />
      </div>
      <div class="field">
        <label for="add-label">Label (as marked on the item)</label>
        <input id="add-label" type="text" value={label} onInput={(e) => setLabel(e.currentTarget.value)} required
          {...invalidProps(errors.label && "err-add-label")} autocomplete="off" />
        <FieldErrors id="err-add-label" messages={errors.label} />
      </div>
      <div class="field">
        <label for="add-serial">Maker's serial number <span class="muted">(optional)</span></label>
        <input id="add-serial" type="text" value={serial} onInput={(e) => setSerial(e.currentTarget.value)}
          {...invalidProps(errors.serial && "err-add-serial")} autocomplete="off" />
        <FieldErrors id="err-add-serial" messages={errors.serial} />
      </div>
      <div class="field">
        <label for="add-due">Next inspection due <span class="muted">(optional)</span></label>
        <input id="add-due" type="date" value={due} onInput={(e) => setDue(e.currentTarget.value)}
          {...invalidProps(errors.next_inspection_due && "err-add-due")} />
        <FieldErrors id="err-add-due" messages={errors.next_inspection_due} />
      </div>
      {spec && (
        <fieldset class="desk-ratings" data-testid="ratings" aria-describedby={errors.ratings ? "err-add-ratings" : undefined}>
          <legend>Ratings of the {spec.label.toLowerCase()}, from the maker's data</legend>
          <FieldErrors id="err-add-ratings" messages={errors.ratings} />
          {spec.ratings.map((f) => (
            <RatingInput key={`${spec.kind}:${f.key}`} field={f} value={ratings[f.key] ?? ""} error={errors[`ratings.${f.key}`]}
              onInput={(v) => setRatings((r) => ({ ...r, [f.key]: v }))} />
          ))}
        </fieldset>
      )}
      <button class="btn btn-primary" type="submit" disabled={busy || !spec} data-testid="add-equipment-submit">
        {busy ? "Adding…" : "Add to the register"}
      </button>
    </form>
  );
}

export function DeskEquipment() {
  const [items, setItems] = useState<Equipment[] | null>(null);
  const [kinds, setKinds] = useState<EquipmentKind[] | null>(null);
  const [error, setError] = useState("");

  useEffect(() => {
    Promise.all([desk.equipment(), desk.kinds()]).then(
      ([list, k]) => {
        setItems(list);
        setKinds(k);
      },
      (e) => setError(Object.values(fieldErrors(e)).flat().join(" ")),
    );
  }, []);

  const replace = (item: Equipment) => setItems((list) => (list ?? []).map((x) => (x.id === item.id ? item : x)));
  const byLabel = (a: Equipment, b: Equipment) => a.label.localeCompare(b.label);

  return (
    <>
      <div class="desk-title">
        <h1>Equipment register</h1>
      </div>
      {error && <p class="error" role="alert">{error}</p>}
      {(!items || !kinds) && !error && <p class="muted">Loading the register…</p>}
      {items && kinds && (
        <div class="desk-columns">
          <div>
            {kinds.map((k) => {
              const mine = items.filter((i) => i.kind === k.kind).sort(byLabel);
              return (
                <section key={k.kind} aria-labelledby={`kind-${k.kind}`} data-testid={`kind-${k.kind}`}>
                  <h2 id={`kind-${k.kind}`}>{k.label} ({mine.length})</h2>
                  {mine.length ? (
                    <ul class="list desk-items">
                      {mine.map((item) => <ItemCard key={item.id} item={item} onChanged={replace} />)}
                    </ul>
                  ) : (
                    <p class="muted">None in the register.</p>
                  )}
                </section>
              );
            })}
          </div>
          <section aria-labelledby="add-equipment-head" class="desk-side">
            <h2 id="add-equipment-head">Add to the register</h2>
            <AddForm kinds={kinds} onAdded={(item) => setItems((list) => [...(list ?? []), item])} />
          </section>
        </div>
      )}
      <DeskCaution />
    </>
  );
}

/**
 * Pieces every desk screen uses: messages beside a field, a form's refusal summed up at its top,
 * plan conflicts as signs with words.
 */
import { useEffect, useRef, useState } from "preact/hooks";
import { Badge } from "../ui/signs";
import type { Conflict } from "./api";

/** Messages per field name ("" for the form as a whole), as the page's checks or the server gave them. */
export type Errors = Record<string, string[]>;

/** A field a form shows its own messages under: what the summary calls it, and its element's id. */
export interface ErrorField {
  label: string;
  id: string;
}

/** A field's messages from the server, right under it; the id lets the field point at them. */
export function FieldErrors({ id, messages }: { id: string; messages?: string[] }) {
  if (!messages?.length) return null;
  return (
    <ul class="desk-errors" id={id} data-testid={`error-${id.replace(/^err-/, "")}`}>
      {messages.map((m) => (
        <li key={m}>{m}</li>
      ))}
    </ul>
  );
}

/**
 * What the plan check says about one field: a refusal as stop (red circle with a bar and the
 * word), anything else as caution (yellow triangle and the word). The words carry the meaning.
 */
export function ConflictLines({ field, conflicts }: { field: string; conflicts: Conflict[] }) {
  const mine = conflicts.filter((c) => c.field === field);
  if (!mine.length) return null;
  return (
    <ul class="desk-conflicts" data-testid={`conflicts-${field}`}>
      {mine.map((c) => (
        <li key={`${c.code}:${c.message}`} data-code={c.code} data-refuses={c.refuses ? "yes" : "no"}>
          <Badge kind={c.refuses ? "held" : "caution"} word={c.refuses ? "Refused" : "Caution"} />
          <span>{c.message}</span>
        </li>
      ))}
    </ul>
  );
}

/**
 * A form's errors, and the one way to show them after a submit: every message at once, then
 * focus on the first field marked invalid (or on the summary when no field is). `shown` counts
 * the refusals, so the summary is drawn afresh and announced again each time.
 */
export function useFormErrors<T extends HTMLElement = HTMLFormElement>() {
  const [errors, setErrors] = useState<Errors>({});
  const [shown, setShown] = useState(0);
  const form = useRef<T>(null);
  useEffect(() => {
    if (!shown || !form.current) return;
    const first = form.current.querySelector<HTMLElement>('[aria-invalid="true"]') ?? form.current.querySelector<HTMLElement>(".desk-summary");
    first?.focus();
  }, [shown]);
  function show(found: Errors) {
    setErrors(found);
    if (Object.keys(found).length) setShown((n) => n + 1);
  }
  return { errors, setErrors, show, shown, form };
}

/** What a field in error carries: aria-invalid, and aria-describedby naming its own messages (and any other notes). */
export function invalidProps(errId: string | false | undefined, ...others: (string | false | undefined)[]) {
  return { "aria-invalid": errId ? ("true" as const) : undefined, "aria-describedby": describedBy(errId, ...others) };
}

function focusField(event: Event, id: string) {
  event.preventDefault();
  const field = document.getElementById(id);
  field?.scrollIntoView({ block: "center" });
  field?.focus();
}

/**
 * The form's refusal at its top, as an alert: what was not done, then each field in error by
 * its label (a link that takes focus to it) with its message, then messages that belong to no
 * field on the form (under `formId`, as FieldErrors would show them). Fields are listed in
 * the order given, the order of the form.
 */
export function ErrorSummary({ errors, fields, head, formId, shown }: {
  errors: Errors;
  fields: Record<string, ErrorField>;
  head: string;
  formId: string;
  shown: number;
}) {
  const named = Object.entries(fields).filter(([key]) => errors[key]?.length);
  const rest = Object.entries(errors).filter(([key, m]) => !(key in fields) && m.length).flatMap(([, m]) => m);
  if (!named.length && !rest.length) return null;
  const slug = formId.replace(/^err-/, "").replace(/-form$/, "");
  return (
    <div key={shown} class="desk-summary" role="alert" tabIndex={-1} data-testid={`summary-${slug}`}>
      <p class="desk-summary-head">{head}</p>
      {named.length > 0 && (
        <ul class="desk-summary-fields">
          {named.map(([key, f]) => (
            <li key={key} data-field={key}>
              <a class="inline-link" href={`#${f.id}`} onClick={(e) => focusField(e, f.id)}>{f.label}</a>: {errors[key]!.join(" ")}
            </li>
          ))}
        </ul>
      )}
      <FieldErrors id={formId} messages={rest} />
    </div>
  );
}

/** The ids of the messages a field should be described by, if any are showing. */
export function describedBy(...ids: (string | false | undefined)[]): string | undefined {
  const shown = ids.filter((id): id is string => Boolean(id));
  return shown.length ? shown.join(" ") : undefined;
}

export function DeskCaution() {
  return (
    <p class="caution-line" data-testid="desk-caution">
      <Badge kind="caution" word="Caution" />
      <span>
        Parapet records and computes; local regulations, the maker's manual and a competent person decide whether
        work at height goes ahead.
      </span>
    </p>
  );
}

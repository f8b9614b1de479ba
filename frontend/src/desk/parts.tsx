/** Pieces every desk screen uses: messages beside a field, plan conflicts as signs with words. */
import { Badge } from "../ui/signs";
import type { Conflict } from "./api";

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

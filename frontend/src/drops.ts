/** Logging a drop done: the note sealed into the day's record is what the operator chose or
 * typed on the phone, and a repeated tap logs nothing more. */

/** The server's limit on a drop log's note (DROP_NOTE_MAX in compliance/jobs/services.py). */
export const DROP_NOTE_MAX = 500;

/** A second tap on the same drop within this long of the first does nothing. */
export const REPEAT_TAP_MS = 4000;

export const WHOLE_DROP = "Whole drop done.";
const PART = "Part of the drop: ";

/** The most a part-drop note's typed words may be: the server's limit less the choice's words. */
export const PART_NOTE_MAX = DROP_NOTE_MAX - PART.length;

export type DropChoice = "whole" | "part";

/** The note to send: the words of the button chosen, with what was typed for part of a drop. */
export function dropNote(choice: DropChoice, typed: string): { note: string } | { problem: string } {
  if (choice === "whole") return { note: WHOLE_DROP };
  const words = typed.trim();
  if (!words) return { problem: "Say which part of the drop was done." };
  const note = `${PART}${words}`;
  if (note.length > DROP_NOTE_MAX) {
    return { problem: `Keep it to ${PART_NOTE_MAX} characters; the server takes no more.` };
  }
  return { note };
}

/** Taps on a key (a drop) are taken once: not again while the first is pending, nor within
 * REPEAT_TAP_MS of it. */
export function tapGuard(windowMs = REPEAT_TAP_MS) {
  const taken = new Map<string, number>();
  const pending = new Set<string>();
  return {
    begin(key: string, now: number): boolean {
      const last = taken.get(key);
      if (pending.has(key) || (last !== undefined && now - last < windowMs)) return false;
      pending.add(key);
      taken.set(key, now);
      return true;
    },
    end(key: string): void {
      pending.delete(key);
    },
  };
}

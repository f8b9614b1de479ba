/**
 * The signed PDF of a day's record. The server renders it in the background after signing; until
 * it is ready, GET records/{id}/pdf/ answers 202 with Retry-After. The phone says so in words,
 * asks again when the server said to, and offers the PDF once it is there.
 */
import { api, ApiError, OfflineError } from "./api";

export type PdfState =
  /** Not asked yet, or asked and told to wait `retryAfterS` seconds (0: not asked yet). */
  | { kind: "preparing"; retryAfterS: number }
  | { kind: "offline"; retryAfterS: number }
  | { kind: "ready" }
  | { kind: "refused"; message: string };

/** What the phone waits when the server sends no usable Retry-After. */
const DEFAULT_RETRY_S = 5;
const OFFLINE_RETRY_S = 15;
const MAX_RETRY_S = 300;

/**
 * Seconds to wait from a Retry-After header: a number of seconds or an HTTP date (RFC 9110,
 * section 10.2.3), kept between 1 s and 5 minutes; missing or unreadable, 5 s.
 */
export function retryAfterSeconds(header: string | null, now: number = Date.now()): number {
  const text = header?.trim() ?? "";
  let seconds = Number.NaN;
  if (/^\d+$/.test(text)) seconds = Number(text);
  else if (text) seconds = Math.ceil((Date.parse(text) - now) / 1000);
  if (!Number.isFinite(seconds)) return DEFAULT_RETRY_S;
  return Math.min(MAX_RETRY_S, Math.max(1, seconds));
}

/** The line the record's card shows while there is no PDF to offer. */
export function pdfWords(state: PdfState): string {
  switch (state.kind) {
    case "preparing":
      return state.retryAfterS > 0
        ? `The signed PDF is being prepared. The phone asks again in ${state.retryAfterS} s and offers it here when it is ready.`
        : "The signed PDF is being prepared.";
    case "offline":
      return `The signed PDF is being prepared. No connection to ask for it now; the phone asks again in ${state.retryAfterS} s.`;
    case "refused":
      return `The signed PDF cannot be fetched: ${state.message}`;
    case "ready":
      return "The signed PDF is ready.";
  }
}

/**
 * Ask for the record's PDF until it is ready, reporting each state to `show`; asks again after
 * the server's Retry-After (offline: every 15 s). Returns a stop function for when the screen
 * closes.
 */
export function watchPdf(id: number, show: (state: PdfState) => void): () => void {
  let stopped = false;
  let handle: ReturnType<typeof setTimeout> | null = null;
  const later = (seconds: number) => {
    handle = setTimeout(() => void ask(), seconds * 1000);
  };
  async function ask(): Promise<void> {
    handle = null;
    let next: PdfState;
    try {
      const answer = await api.pdfAnswer(id);
      next = answer.ready ? { kind: "ready" } : { kind: "preparing", retryAfterS: retryAfterSeconds(answer.retryAfter) };
    } catch (error) {
      if (error instanceof OfflineError) next = { kind: "offline", retryAfterS: OFFLINE_RETRY_S };
      else if (error instanceof ApiError && error.signedOut) next = { kind: "refused", message: "signed out; sign in again to fetch it." };
      else next = { kind: "refused", message: error instanceof Error ? error.message : String(error) };
    }
    if (stopped) return;
    show(next);
    if (next.kind === "preparing" || next.kind === "offline") later(next.retryAfterS);
  }
  void ask();
  return () => {
    stopped = true;
    if (handle !== null) clearTimeout(handle);
  };
}

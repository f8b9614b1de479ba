/** The only module that talks HTTP to the Parapet server (session cookie + CSRF header). */
import { setStatus } from "./status";
import type {
  Anchor,
  ChecklistVersion,
  DailyRecord,
  Equipment,
  JobDetail,
  JobSummary,
  Meaning,
  OutRecord,
  Page,
  PdfRendering,
  Profile,
  Site,
  SyncResponse,
  User,
} from "./types";

const BASE = "/api/v1/";

/** The network could not be reached (offline, aborted, timed out). */
export class OfflineError extends Error {
  constructor(message = "No connection to the server.") {
    super(message);
    this.name = "OfflineError";
  }
}

/**
 * Counts sign-ins and sign-outs on this page. A request remembers the count it was sent under:
 * an answer of "not signed in" to a request sent before the latest sign-in (a slow first sync,
 * say) speaks of the state before it and never ends the new session.
 */
let sessionEpoch = 0;
/**
 * The count a sign-out started: no one is signed in under it, so a "not signed in" heard for a
 * request sent then (a screen still open asks again while the sign-out runs) ends nothing. Were
 * it heard as a lapse, the sign-in form came back filled in with the name of who just left.
 */
let signedOutEpoch = -1;

/** The session a request is sent under, for answers read outside `request` (the desk's files). */
export function currentSession(): number {
  return sessionEpoch;
}

/** The server answered with an error status; `body` is its parsed JSON, if any. */
export class ApiError extends Error {
  readonly status: number;
  readonly body: Record<string, unknown>;
  /** Sent before the latest sign-in, or after signing out: a lapse it reports ends no session. */
  readonly fromEarlierSession: boolean;
  constructor(status: number, body: Record<string, unknown>, epoch: number = sessionEpoch) {
    super(typeof body.detail === "string" ? body.detail : `The server answered ${status}.`);
    this.name = "ApiError";
    this.status = status;
    this.body = body;
    this.fromEarlierSession = epoch !== sessionEpoch || epoch === signedOutEpoch;
  }
  /**
   * The session is gone (expired, or signed out on another tab). A 403 alone is not enough:
   * the server also answers 403 to a wrong password when signing, or to a role that may not act;
   * it marks a missing or lapsed session with a code of its own (compliance/api/errors.py).
   */
  get signedOut(): boolean {
    if (this.status === 401) return true;
    return this.status === 403 && SIGNED_OUT_CODES.has(String(this.body.code ?? ""));
  }
  /** Signed out, and about the current session: only then is a new sign-in asked for. */
  get endsSession(): boolean {
    return this.signedOut && !this.fromEarlierSession;
  }
}

const SIGNED_OUT_CODES = new Set(["not_authenticated", "authentication_failed"]);

function csrfToken(): string {
  for (const part of document.cookie.split(";")) {
    const [name, ...rest] = part.trim().split("=");
    if (name === "csrftoken") return decodeURIComponent(rest.join("="));
  }
  return "";
}

interface Options {
  method?: "GET" | "POST" | "PATCH" | "DELETE";
  json?: unknown;
  form?: FormData;
  timeoutMs?: number;
}

/** One call to the API; the desk screens (desk/api.ts) use it too. */
export async function request<T>(path: string, opts: Options = {}): Promise<T> {
  const method = opts.method ?? "GET";
  const headers: Record<string, string> = { Accept: "application/json" };
  let body: BodyInit | undefined;
  if (opts.json !== undefined) {
    headers["Content-Type"] = "application/json";
    body = JSON.stringify(opts.json);
  } else if (opts.form) {
    body = opts.form;
  }
  if (method !== "GET") headers["X-CSRFToken"] = csrfToken();
  const epoch = sessionEpoch;
  const controller = new AbortController();
  const timer = setTimeout(() => controller.abort(), opts.timeoutMs ?? 20000);
  let response: Response;
  try {
    response = await fetch(BASE + path, {
      method,
      headers,
      body,
      credentials: "same-origin",
      signal: controller.signal,
    });
  } catch {
    throw new OfflineError();
  } finally {
    clearTimeout(timer);
  }
  // The service worker's copy of an earlier answer: the phone's own copy (src/repo.ts) says
  // when the server gave it, and the screens say it is not the server's answer now.
  if (response.headers.has("X-Parapet-Kept")) throw new OfflineError();
  if (response.status === 204) return undefined as T;
  let parsed: unknown = null;
  try {
    parsed = await response.json();
  } catch {
    parsed = null;
  }
  if (!response.ok) {
    // A gateway or worker-level failure (e.g. offline fallback from the service worker)
    if (response.status >= 500 && parsed === null) throw new OfflineError();
    const error = new ApiError(response.status, (parsed as Record<string, unknown>) ?? {}, epoch);
    // Any call that finds the session gone asks for a new sign-in; what waits stays on the phone.
    if (error.endsSession && !path.startsWith("auth/")) {
      setStatus({ signedOut: true, lastError: "Signed out: sign in again to send." });
    }
    throw error;
  }
  return parsed as T;
}

/** The signed PDF's answer: ready (200), or still being rendered (202, ask again after Retry-After). */
type PdfAnswer = { ready: true } | { ready: false; retryAfter: string | null; rendering: PdfRendering | null };

/**
 * Whether a record's signed PDF is ready. A 200's bytes are left unread: the link fetches them
 * when the operator taps it.
 */
async function pdfAnswer(id: number): Promise<PdfAnswer> {
  const epoch = sessionEpoch;
  const controller = new AbortController();
  const timer = setTimeout(() => controller.abort(), 20000);
  let response: Response;
  try {
    response = await fetch(`${BASE}records/${id}/pdf/`, {
      headers: { Accept: "application/pdf, application/json" },
      credentials: "same-origin",
      signal: controller.signal,
    });
  } catch {
    throw new OfflineError();
  } finally {
    clearTimeout(timer);
  }
  if (response.status === 200) {
    await response.body?.cancel().catch(() => undefined);
    return { ready: true };
  }
  let parsed: unknown = null;
  try {
    parsed = await response.json();
  } catch {
    parsed = null;
  }
  if (response.status === 202) {
    return { ready: false, retryAfter: response.headers.get("Retry-After"), rendering: parsed as PdfRendering | null };
  }
  if (response.status >= 500 && parsed === null) throw new OfflineError();
  throw new ApiError(response.status, (parsed as Record<string, unknown>) ?? {}, epoch);
}

export const api = {
  login: async (username: string, password: string) => {
    const user = await request<User>("auth/login/", { method: "POST", json: { username, password } });
    sessionEpoch += 1;
    return user;
  },
  /**
   * Signing out starts a new session epoch before asking the server: an answer to a request
   * sent before it or while no one is signed in ("not signed in") is then about the session
   * being left, not a lapse.
   */
  logout: async () => {
    sessionEpoch += 1;
    signedOutEpoch = sessionEpoch;
    try {
      await request<void>("auth/logout/", { method: "POST", json: {} });
    } catch (error) {
      // Never reached the server: still signed in, and a lapse is heard again.
      if (error instanceof OfflineError) sessionEpoch += 1;
      throw error;
    }
  },
  me: () => request<User>("me/"),
  jobs: (date: string) =>
    request<Page<JobSummary>>(`jobs/?date=${encodeURIComponent(date)}`),
  job: (id: number) => request<JobDetail>(`jobs/${id}/`),
  start: (id: number) => request<JobDetail>(`jobs/${id}/start/`, { method: "POST", json: {} }),
  versions: () =>
    request<Page<ChecklistVersion>>("checklist-versions/?status=published&limit=100"),
  profiles: () => request<Page<Profile>>("profiles/"),
  equipment: () => request<Page<Equipment>>("equipment/?limit=500"),
  anchors: () => request<Page<Anchor>>("anchors/?limit=500"),
  sites: () => request<Page<Site>>("sites/?limit=100"),
  sync: (records: OutRecord[]) =>
    // sent_at lets the server tell a phone with a wrong clock from one that was offline.
    request<SyncResponse>("sync/", {
      method: "POST",
      json: { records, sent_at: new Date().toISOString() },
      timeoutMs: 30000,
    }),
  /** Needs signal: the signer re-enters the password at this moment, so it is never queued. */
  sign: (id: number, password: string, meaning: Meaning, remarks: string) =>
    request<DailyRecord>(`jobs/${id}/sign/`, { method: "POST", json: { password, meaning, remarks }, timeoutMs: 60000 }),
  records: (site: number) => request<Page<DailyRecord>>(`records/?site=${site}&limit=1000`),
  recordPdf: (id: number) => `${BASE}records/${id}/pdf/`,
  pdfAnswer,
  photo: (form: FormData) =>
    request<unknown>("photos/", { method: "POST", form, timeoutMs: 60000 }),
};

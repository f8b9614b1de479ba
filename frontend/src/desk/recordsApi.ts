/**
 * The calls the daily-record pages make. All of them read: the one POST (verify/) checks an
 * export just built and stores nothing, so an auditor may make it; a stored record is checked
 * where the server keeps it (GET records/{id}/verify/).
 */
import { ApiError, currentSession, OfflineError, request } from "../api";
import type { components } from "../api-schema";
import { setStatus } from "../status";
import type { ChecklistVersion, DailyRecord, Page, Site } from "../types";
import { desk } from "./api";
import type { Sheet } from "./recordMonth";

type Schemas = components["schemas"];

/** The server's most: a month's sheets or records come back in one answer each. */
const PAGE = 1000;

async function pages<T>(path: string): Promise<T[]> {
  const rows: T[] = [];
  for (let offset = 0; ; offset += PAGE) {
    const page = await request<Page<T>>(`${path}&limit=${PAGE}&offset=${offset}`);
    rows.push(...page.results);
    if (page.results.length < PAGE || (page.count !== undefined && rows.length >= page.count)) return rows;
  }
}

const period = (site: number, start: string, end: string) =>
  `site=${site}&start=${encodeURIComponent(start)}&end=${encodeURIComponent(end)}`;

/** The verifier's answer (POST verify/, GET records/{id}/verify/). */
export type VerifyAnswer = Schemas["VerifyReport"];

/** A check's outcome: the verdict, or the file still being prepared (202, ask again later). */
export type CheckAnswer = { kind: "done"; answer: VerifyAnswer } | { kind: "pending"; detail: string };

/** A file's answer: its bytes and name, or still being prepared (202, ask again later). */
export type FileAnswer =
  | { kind: "file"; blob: Blob; name: string }
  | { kind: "pending"; retryAfter: string | null; detail: string };

/** GET a file (a PDF or a ZIP); a 202 means the server is still preparing it. */
async function file(path: string, accept: string, fallbackName: string): Promise<FileAnswer> {
  const session = currentSession();
  const controller = new AbortController();
  const timer = setTimeout(() => controller.abort(), 120000);
  let response: Response;
  let blob: Blob | null = null;
  try {
    response = await fetch(`/api/v1/${path}`, {
      headers: { Accept: `${accept}, application/json` },
      credentials: "same-origin",
      signal: controller.signal,
    });
    if (response.status === 200) blob = await response.blob();
  } catch {
    throw new OfflineError();
  } finally {
    clearTimeout(timer);
  }
  if (blob) {
    const name = /filename="([^"]+)"/.exec(response.headers.get("Content-Disposition") ?? "")?.[1] ?? fallbackName;
    return { kind: "file", blob, name };
  }
  let parsed: Record<string, unknown> | null = null;
  try {
    parsed = (await response.json()) as Record<string, unknown>;
  } catch {
    parsed = null;
  }
  if (response.status === 202) {
    return { kind: "pending", retryAfter: response.headers.get("Retry-After"), detail: String(parsed?.detail ?? "") };
  }
  if (response.status >= 500 && parsed === null) throw new OfflineError();
  const error = new ApiError(response.status, parsed ?? {}, session);
  if (error.endsSession) setStatus({ signedOut: true, lastError: "Signed out: sign in again to read the records." });
  throw error;
}

/** The sites as read for one person: the desk's code stays loaded when another signs in. */
let sitesAsked: { user: number; sites: Promise<Site[]> } | null = null;

export const records = {
  /** The sites, asked once per person signed in: the month pages then need no request for a name. */
  sites: (user: number) => {
    if (sitesAsked?.user !== user) {
      const sites = desk.sites().catch((e: unknown) => {
        sitesAsked = null;
        throw e;
      });
      sitesAsked = { user, sites };
    }
    return sitesAsked.sites;
  },
  /** Every record and addendum of the site, for the months it has. */
  ofSite: (site: number) => pages<DailyRecord>(`records/?site=${site}`),
  /** A period's records and addenda (by the job's date), in the chain's order. */
  ofPeriod: (site: number, start: string, end: string) => pages<DailyRecord>(`records/?${period(site, start, end)}`),
  /** A period's sheets (by the job's date) with their entries. */
  sheets: (site: number, start: string, end: string) => pages<Sheet>(`sheets/?${period(site, start, end)}`),
  /** One record with its sealed document (an addendum's text is in it). */
  detail: (id: number) => request<DailyRecord & { document: Record<string, unknown> }>(`records/${id}/`),
  /** The published checklist versions (a sheet pins one): titles and item labels for the sheets. */
  versions: () => pages<ChecklistVersion>("checklist-versions/?status=published"),
  pdf: (id: number) => file(`records/${id}/pdf/`, "application/pdf", `daily-record-${id}.pdf`),
  export: (site: number, start: string, end: string) =>
    file(`records/export/?${period(site, start, end)}`, "application/zip", `records-${site}-${start}-${end}.zip`),
  /** The server's verdict on a file: a record PDF or an export ZIP. */
  verify: async (blob: Blob, name: string): Promise<CheckAnswer> => {
    const form = new FormData();
    form.append("file", blob, name);
    const answer = await request<VerifyAnswer>("verify/", { method: "POST", form, timeoutMs: 120000 });
    return { kind: "done", answer };
  },
  /** The server's verdict on a record it holds, checked where it is kept (no download). */
  verifyRecord: async (id: number): Promise<CheckAnswer> => {
    const answer = await request<VerifyAnswer | Schemas["PdfRendering"]>(`records/${id}/verify/`, { timeoutMs: 120000 });
    return "status" in answer ? { kind: "pending", detail: answer.detail } : { kind: "done", answer };
  },
};

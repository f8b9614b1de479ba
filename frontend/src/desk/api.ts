/**
 * The desk side's calls to /api/v1/, typed from the server's schema. They go through the
 * phone's one HTTP helper (session cookie, CSRF header, timeouts); nothing here is queued:
 * a desk change needs the server at that moment and is shown as it answered.
 */
import { ApiError, request } from "../api";
import type { components } from "../api-schema";
import type { Anchor, ChecklistVersion, DailyRecord, Equipment, JobDetail, JobSummary, Page, Profile, Site } from "../types";

type Schemas = components["schemas"];

export type EquipmentKind = Schemas["EquipmentKind"];
export type RatingField = Schemas["RatingField"];
export type Conflict = Schemas["Conflict"];
export type DropInput = Schemas["DropRequest"];
type JobInput = Schemas["JobRequest"];
export type EquipmentInput = Omit<Schemas["EquipmentRequest"], "ratings"> & { ratings: Record<string, unknown> };
type EquipmentChange = Schemas["PatchedEquipmentChangeInputRequest"];
export type PlanChoice = Schemas["PlanCheckInputRequest"];
export type Drop = JobDetail["drops"][number];
export type Certification = Schemas["Certification"];
export type CertificationInput = Schemas["CertificationRequest"];
/** An anchor with its certificate in force as the server gives it (the phone reads less of it). */
export type SiteAnchor = Omit<Anchor, "certification"> & { certification: Certification | null };
export type LogEntry = Schemas["LogEntry"];
export type LogEntryInput = Schemas["LogEntryInputRequest"];
export type Grant = Schemas["Grant"];
type GrantInput = Schemas["GrantRequest"];
/** A checklist with its versions in order (the schema says only "objects"). */
export type Checklist = Omit<Schemas["Checklist"], "versions"> & {
  versions: { id: number; number: number; status: ChecklistVersion["status"]; content_hash: string }[];
};
/** What changed between two versions (checklists.services.diff_versions). The schema has the items
 * as JSON; the desk reads them as a version's items. */
export type VersionDiff = Omit<Schemas["VersionDiff"], "added" | "removed"> & {
  added: ChecklistVersion["items"];
  removed: ChecklistVersion["items"];
};
export type DueList = Schemas["DueList"];
export type DueItem = Schemas["DueItem"];

const PAGE = 200;

/** Every page of a list (limit/offset), for the few hundred rows a desk screen shows. */
async function all<T>(path: string): Promise<T[]> {
  const rows: T[] = [];
  const join = path.includes("?") ? "&" : "?";
  for (let offset = 0; ; offset += PAGE) {
    const page = await request<Page<T>>(`${path}${join}limit=${PAGE}&offset=${offset}`);
    rows.push(...page.results);
    if (page.results.length < PAGE || (page.count !== undefined && rows.length >= page.count)) return rows;
  }
}

export const desk = {
  jobs: () => all<JobSummary>("jobs/"),
  job: (id: number) => request<JobDetail>(`jobs/${id}/`),
  createJob: (data: JobInput) => request<JobDetail>("jobs/", { method: "POST", json: data }),
  planCheck: (job: number, chosen: PlanChoice) =>
    request<Schemas["PlanCheck"]>(`jobs/${job}/plan-check/`, { method: "POST", json: chosen }),
  addDrop: (job: number, data: Partial<DropInput>) =>
    request<Drop>(`jobs/${job}/drops/`, { method: "POST", json: data }),
  /** Signed records from a day on (kind "record"; addenda amend them). */
  records: (start: string) => all<DailyRecord>(`records/?start=${encodeURIComponent(start)}`),
  sites: () => all<Site>("sites/"),
  anchors: (site: number) => all<Anchor>(`anchors/?site=${site}`),
  siteAnchors: (site: number) => all<SiteAnchor>(`anchors/?site=${site}`),
  profiles: () => all<Profile>("profiles/"),
  /** The site's anchor log book in the server's order (by sequence, oldest first). */
  log: (site: number) => all<LogEntry>(`anchor-log/?site=${site}`),
  addLogEntry: (data: LogEntryInput) => request<LogEntry>("anchor-log/", { method: "POST", json: data }),
  /** A certification, with the certificate's file (PDF, PNG or JPEG) sent alongside when given. */
  addCertification: (anchor: number, data: Omit<CertificationInput, "document">, file?: File | null) => {
    if (!file) return request<Certification>(`anchors/${anchor}/certifications/`, { method: "POST", json: data });
    const form = new FormData();
    for (const [key, value] of Object.entries(data)) if (value !== undefined) form.append(key, String(value));
    form.append("document", file);
    return request<Certification>(`anchors/${anchor}/certifications/`, { method: "POST", form });
  },
  grants: (site: number) => request<Grant[]>(`sites/${site}/grants/`),
  grant: (site: number, data: GrantInput) => request<Grant>(`sites/${site}/grants/`, { method: "POST", json: data }),
  /** End a grant now; the answer counts the contractor's jobs at work at the site it stopped. */
  endGrant: (site: number, grant: number, reason: string) =>
    request<Grant & { work_stopped: number }>(`sites/${site}/grants/${grant}/end/`, { method: "POST", json: { reason } }),
  equipment: (kind?: string) => all<Equipment>(kind ? `equipment/?kind=${encodeURIComponent(kind)}` : "equipment/"),
  /** The kinds and their ratings field by field (a plain list; the schema calls it paginated). */
  kinds: async () => {
    const answer = await request<EquipmentKind[] | Page<EquipmentKind>>("equipment/kinds/");
    return Array.isArray(answer) ? answer : answer.results;
  },
  addEquipment: (data: EquipmentInput) => request<Equipment>("equipment/", { method: "POST", json: data }),
  changeEquipment: (id: number, change: EquipmentChange) =>
    request<Equipment>(`equipment/${id}/`, { method: "PATCH", json: change }),
  checklists: () => all<Checklist>("checklists/"),
  versions: () => all<ChecklistVersion>("checklist-versions/"),
  /** The changes from version `against` to version `id`. */
  versionDiff: (id: number, against: number) => request<VersionDiff>(`checklist-versions/${id}/diff/?against=${against}`),
  publishVersion: (id: number) => request<ChecklistVersion>(`checklist-versions/${id}/publish/`, { method: "POST" }),
  /** What falls due within `within` days, and everything overdue. */
  due: (within: number) => request<DueList>(`due/?within=${within}`),
  /** Whether the person has a live calendar address, and since when (never the address). */
  calendarState: () => request<Schemas["CalendarState"]>("me/calendar/"),
  /** A new secret calendar address (the old one stops); the server shows it this once. */
  createCalendar: () => request<Schemas["CalendarAddress"]>("me/calendar/", { method: "POST" }),
  revokeCalendar: () => request<void>("me/calendar/", { method: "DELETE" }),
};

/**
 * A 400's body as messages per field, keys joined with dots ("ratings.mass_kg"); messages for
 * no field (non_field_errors, detail) under "". Anything else (offline, 5xx) is one line under "".
 */
export function fieldErrors(error: unknown): Record<string, string[]> {
  if (!(error instanceof ApiError)) {
    return { "": [error instanceof Error ? error.message : "Something went wrong; try again."] };
  }
  const out: Record<string, string[]> = {};
  const add = (key: string, message: string) => (out[key] ??= []).push(message);
  const walk = (value: unknown, key: string) => {
    if (value === null || value === undefined) return;
    if (typeof value === "string") add(key, value);
    else if (Array.isArray(value)) value.forEach((v) => walk(v, key));
    else if (typeof value === "object") {
      for (const [k, v] of Object.entries(value as Record<string, unknown>)) {
        if (k === "code") continue;
        const field = k === "non_field_errors" || k === "detail" ? key : key ? `${key}.${k}` : k;
        walk(v, field);
      }
    } else add(key, String(value));
  };
  walk(error.body, "");
  if (!Object.keys(out).length) add("", error.message);
  return out;
}

/** Today on this computer's calendar, and a day some days from it, as YYYY-MM-DD. */
export function dayFrom(offsetDays = 0): string {
  const d = new Date();
  d.setDate(d.getDate() + offsetDays);
  const pad = (n: number) => String(n).padStart(2, "0");
  return `${d.getFullYear()}-${pad(d.getMonth() + 1)}-${pad(d.getDate())}`;
}

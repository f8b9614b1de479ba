/** Server data with a fallback: fetch when possible, else the last copy kept in IndexedDB. */
import { api, OfflineError } from "./api";
import { cacheGet, cachePut } from "./storage";
import type { ChecklistVersion, DailyRecord, JobDetail, JobSummary, Reference, User } from "./types";

export interface Loaded<T> {
  value: T;
  fromCache: boolean;
  savedAt: string;
}

async function load<T>(key: string, fetcher: () => Promise<T>): Promise<Loaded<T>> {
  try {
    const value = await fetcher();
    await cachePut(key, value);
    return { value, fromCache: false, savedAt: new Date().toISOString() };
  } catch (error) {
    if (!(error instanceof OfflineError)) throw error;
    const kept = await cacheGet<T>(key);
    if (kept === null) throw error;
    return { value: kept.value, fromCache: true, savedAt: kept.saved_at };
  }
}

/** Today on the phone's own calendar (the crew's local day). */
export function today(): string {
  const now = new Date();
  const pad = (n: number) => String(n).padStart(2, "0");
  return `${now.getFullYear()}-${pad(now.getMonth() + 1)}-${pad(now.getDate())}`;
}

export const loadMe = () => load<User>("me", api.me);
export const loadJobs = (date: string) =>
  load<JobSummary[]>(`jobs:${date}`, async () => (await api.jobs(date)).results);
export const loadJob = (id: number) => load<JobDetail>(`job:${id}`, () => api.job(id));
export const loadVersions = () =>
  load<ChecklistVersion[]>("versions", async () => (await api.versions()).results);

/** Ratings, profiles and anchors the phone needs to judge readings before the server does. */
export const loadReference = () =>
  load<Reference>("reference", async () => {
    const [profiles, equipment, anchors, sites] = await Promise.all([
      api.profiles(),
      api.equipment(),
      api.anchors(),
      api.sites(),
    ]);
    return {
      profiles: profiles.results,
      equipment: equipment.results,
      anchors: anchors.results,
      sites: sites.results,
    };
  });

export async function keptJob(id: number): Promise<JobDetail | null> {
  return (await cacheGet<JobDetail>(`job:${id}`))?.value ?? null;
}

/** The signed daily record of a job, if there is one (from the site's chain of records). */
export async function loadRecordOf(job: { id: number; site: number }): Promise<Loaded<DailyRecord | null>> {
  const loaded = await load<DailyRecord[]>(`records:${job.site}`, async () => (await api.records(job.site)).results);
  return { ...loaded, value: loaded.value.find((r) => r.job === job.id && r.kind === "record") ?? null };
}

/** Keep a record just signed with the site's list, so it shows at once (and offline). */
export async function keepRecord(record: DailyRecord): Promise<void> {
  const kept = (await cacheGet<DailyRecord[]>(`records:${record.site}`))?.value ?? [];
  await cachePut(`records:${record.site}`, [...kept.filter((r) => r.id !== record.id), record]);
}

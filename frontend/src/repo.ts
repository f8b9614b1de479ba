/** Server data with a fallback: fetch when possible, else the last copy kept in IndexedDB. */
import { api, OfflineError } from "./api";
import { cacheGet, cachePut } from "./storage";
import type {
  Anchor,
  ChecklistVersion,
  Equipment,
  JobDetail,
  JobSummary,
  Profile,
  Site,
  User,
} from "./types";

export interface Loaded<T> {
  value: T;
  fromCache: boolean;
  savedAt: string;
}

export async function load<T>(key: string, fetcher: () => Promise<T>): Promise<Loaded<T>> {
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

export interface Reference {
  profiles: Profile[];
  equipment: Equipment[];
  anchors: Anchor[];
  sites: Site[];
}

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

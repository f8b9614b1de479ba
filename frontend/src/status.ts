/** What the persistent strip shows, plus a tiny change signal for screens to reload. */

export interface Status {
  online: boolean;
  syncing: boolean;
  lastSync: string | null;
  waiting: number;
  photosWaiting: number;
  rejected: number;
  lastError: string | null;
  signedOut: boolean;
  /** Whether the app's files are kept on the phone (its service worker controls the page), so a
   * reload without signal still opens it; null where the browser cannot keep them. */
  kept: boolean | null;
}

let current: Status = {
  online: typeof navigator === "undefined" ? true : navigator.onLine,
  syncing: false,
  lastSync: null,
  waiting: 0,
  photosWaiting: 0,
  rejected: 0,
  lastError: null,
  signedOut: false,
  kept: null,
};

const listeners = new Set<() => void>();
let version = 0;

export function getStatus(): Status {
  return current;
}

export function setStatus(patch: Partial<Status>): void {
  current = { ...current, ...patch };
  for (const listener of listeners) listener();
}

/** Bumped whenever stored data changed (a save, a sync answer, a refetch). */
export function dataVersion(): number {
  return version;
}

export function dataChanged(): void {
  version += 1;
  for (const listener of listeners) listener();
}

export function subscribe(listener: () => void): () => void {
  listeners.add(listener);
  return () => listeners.delete(listener);
}

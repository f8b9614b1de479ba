/**
 * The outbox sender. Records go in batches of at most 200, oldest first; every record keeps its
 * client uuid across retries, so a batch cut off after the server applied it is simply resent
 * and answered from the server's receipts. The server's answer is the record of what happened.
 */
import { api, ApiError, OfflineError } from "./api";
import { loadJob, loadJobs, loadReference, loadVersions, today } from "./repo";
import { dataChanged, getStatus, setStatus } from "./status";
import {
  metaGet,
  metaPut,
  outboxAll,
  outboxDelete,
  outboxPut,
  photoPut,
  photosAll,
  type OutboxEntry,
} from "./storage";
import type { SyncResultLine } from "./types";
import { activeRefusals } from "./refusals";

const BATCH = 200;
const KEEP_ANSWERED_MS = 3 * 24 * 3600 * 1000;
const MAX_BACKOFF_MS = 60000;

let running: Promise<void> | null = null;
let again = false;
let retryTimer: ReturnType<typeof setTimeout> | null = null;
let failures = 0;

export async function refreshCounts(): Promise<void> {
  const [records, photos, lastSync] = await Promise.all([
    outboxAll(),
    photosAll(),
    metaGet<string>("lastSync"),
  ]);
  setStatus({
    waiting: records.filter((r) => r.status === "waiting").length,
    rejected: activeRefusals(records).length,
    photosWaiting: photos.filter((p) => !p.uploaded && !p.error).length,
    lastSync,
  });
}

/** Send whatever waits; concurrent calls share one run and ask for one more pass. */
export function requestSync(): Promise<void> {
  if (running) {
    again = true;
    return running;
  }
  if (retryTimer) {
    clearTimeout(retryTimer);
    retryTimer = null;
  }
  running = (async () => {
    try {
      do {
        again = false;
        await runOnce();
      } while (again);
    } finally {
      running = null;
    }
  })();
  return running;
}

function scheduleRetry(): void {
  failures += 1;
  const delay = Math.min(MAX_BACKOFF_MS, 1000 * 2 ** Math.min(failures, 6));
  if (retryTimer) clearTimeout(retryTimer);
  retryTimer = setTimeout(() => {
    retryTimer = null;
    void requestSync();
  }, delay);
}

function applyAnswer(entry: OutboxEntry, line: SyncResultLine | undefined): OutboxEntry {
  if (!line) return { ...entry, attempts: entry.attempts + 1 };
  return {
    ...entry,
    attempts: entry.attempts + 1,
    status: line.status,
    errors: line.errors,
    reasons: line.reasons,
    server: {
      sheet: line.sheet,
      verdict: line.verdict,
      state: line.state,
      duplicate: line.duplicate,
    },
    answered_at: new Date().toISOString(),
  };
}

async function sendRecords(): Promise<{ touched: Set<number>; serverTime: string | null }> {
  const touched = new Set<number>();
  let serverTime: string | null = null;
  for (;;) {
    const waiting = (await outboxAll()).filter((e) => e.status === "waiting");
    if (waiting.length === 0) break;
    const batch = waiting.slice(0, BATCH);
    const answer = await api.sync(batch.map((e) => e.record));
    serverTime = answer.server_time;
    const byUuid = new Map(answer.results.map((line) => [line.client_uuid, line]));
    for (const entry of batch) {
      await outboxPut(applyAnswer(entry, byUuid.get(entry.client_uuid)));
      touched.add(entry.job);
    }
    for (const job of answer.jobs) touched.add(job.id);
    dataChanged();
    if (batch.every((e) => !byUuid.has(e.client_uuid))) break; // nothing answered: do not spin
  }
  return { touched, serverTime };
}

async function sendPhotos(touched: Set<number>): Promise<void> {
  // The server takes a photo only for a sheet it holds: one whose sheet is still waiting (saved
  // while this run sent the outbox) goes on the next pass. Photos are read first, so every
  // sheet of theirs is already in the outbox read after them.
  const photos = await photosAll();
  const unsent = new Set(
    (await outboxAll()).filter((e) => e.status === "waiting").map((e) => e.client_uuid),
  );
  for (const photo of photos) {
    if (photo.uploaded || photo.error || unsent.has(photo.sheet_uuid)) continue;
    const form = new FormData();
    form.append("client_uuid", photo.client_uuid);
    form.append("job", String(photo.job));
    form.append("sheet_uuid", photo.sheet_uuid);
    form.append("item_key", photo.item_key);
    form.append("image", photo.blob, photo.name);
    try {
      await api.photo(form);
      await photoPut({ ...photo, uploaded: true });
    } catch (error) {
      if (error instanceof ApiError && !error.signedOut && error.status < 500) {
        await photoPut({ ...photo, error: error.message || `Refused (${error.status}).` });
      } else {
        throw error;
      }
    }
    touched.add(photo.job);
  }
}

async function prune(): Promise<void> {
  const cutoff = Date.now() - KEEP_ANSWERED_MS;
  for (const entry of await outboxAll()) {
    const done = entry.status === "applied" ? entry.answered_at : entry.status === "rejected" ? entry.dismissed_at : undefined;
    if (done && Date.parse(done) < cutoff) {
      await outboxDelete(entry.client_uuid);
    }
  }
}

let keptAt = 0;

/** Keep the checklists and ratings on the phone so a sheet can be filled without signal. */
async function keepForOffline(force = false): Promise<void> {
  if (!force && Date.now() - keptAt < 10 * 60 * 1000) return;
  await Promise.all([loadVersions(), loadReference()]);
  keptAt = Date.now();
}

/** After sign-in: fetch what the day needs while there is signal. */
export async function prepareDay(): Promise<void> {
  keptAt = 0;
  await requestSync();
}

async function runOnce(): Promise<void> {
  await refreshCounts();
  if (!navigator.onLine) {
    setStatus({ online: false, syncing: false });
    return;
  }
  setStatus({ syncing: true, online: true });
  try {
    const { touched, serverTime } = await sendRecords();
    await sendPhotos(touched);
    failures = 0;
    setStatus({ lastError: null, signedOut: false });
    // The server is the authority: show its state for every job the records touched.
    const listed = await loadJobs(today()).catch(() => null);
    const jobs = listed?.value ?? [];
    for (const id of new Set([...touched, ...jobs.map((j) => j.id)])) {
      await loadJob(id).catch(() => undefined);
    }
    await keepForOffline().catch(() => undefined);
    // "Last sync" is the last time the server answered: a batch it took, or today's jobs read
    // from it (not from this phone's copy). Nothing sent and nothing read (signed out, say) is
    // no sync.
    const answered = serverTime ?? (listed && !listed.fromCache ? new Date().toISOString() : null);
    if (answered) await metaPut("lastSync", answered);
    await prune();
  } catch (error) {
    if (error instanceof ApiError && error.endsSession) {
      setStatus({ signedOut: true, lastError: "Signed out: sign in again to send." });
    } else if (
      error instanceof OfflineError ||
      (error instanceof ApiError && (error.status >= 500 || error.signedOut))
    ) {
      // A "not signed in" sent before the latest sign-in is retried under the new session.
      setStatus({ lastError: "Sending failed; trying again shortly." });
      scheduleRetry();
    } else {
      setStatus({ lastError: error instanceof Error ? error.message : String(error) });
      scheduleRetry();
    }
  } finally {
    setStatus({ syncing: false, online: navigator.onLine });
    await refreshCounts();
    dataChanged();
  }
}

/** Wire the triggers: the online event, app start, and a slow heartbeat while records wait. */
export function startSyncLoop(): void {
  window.addEventListener("online", () => {
    setStatus({ online: true });
    failures = 0;
    void requestSync();
  });
  window.addEventListener("offline", () => setStatus({ online: false }));
  setInterval(() => {
    const s = getStatus();
    if (navigator.onLine && !s.signedOut && (s.waiting > 0 || s.photosWaiting > 0) && !retryTimer) {
      void requestSync();
    }
  }, 30000);
  void requestSync();
}

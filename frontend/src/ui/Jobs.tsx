import { useEffect, useState } from "preact/hooks";
import { ApiError } from "../api";
import { keptJob, loadJob, loadJobs, today } from "../repo";
import { cacheGet, outboxAll, type OutboxEntry } from "../storage";
import type { JobDetail, JobSummary, User } from "../types";
import { BottomBar, Header } from "./common";
import { href, timeOf, useDataVersion } from "./hooks";
import { Badge, StateBadge } from "./signs";

/** What a job still needs, in one line. */
function needsLine(job: JobDetail, outbox: OutboxEntry[]): string {
  const open = job.holds.filter((h) => !h.cleared_at).length;
  const waiting = outbox.filter((e) => e.job === job.id && e.status === "waiting").length;
  const missing = job.requirements.filter((r) => !r.satisfied).length;
  const parts: string[] = [];
  if (open) parts.push(`${open} stop-work ${open === 1 ? "hold" : "holds"} to clear`);
  if (job.state === "closed") parts.push("Closed for the day");
  else if (missing) parts.push(`${missing} of ${job.requirements.length} pre-start checks still to do`);
  else if (job.state === "cleared" || job.state === "planned") parts.push("All pre-start checks done: ready to start");
  else if (job.state === "working") parts.push("Work under way");
  if (waiting) parts.push(`${waiting} waiting to send`);
  return parts.join(" · ");
}

export function Jobs({ user, onSignOut }: { user: User; onSignOut: () => void }) {
  const date = today();
  const version = useDataVersion();
  const [jobs, setJobs] = useState<JobSummary[] | null>(null);
  const [details, setDetails] = useState<Record<number, JobDetail>>({});
  const [outbox, setOutbox] = useState<OutboxEntry[]>([]);
  const [note, setNote] = useState("");
  const [error, setError] = useState("");

  useEffect(() => {
    let live = true;
    (async () => {
      try {
        const loaded = await loadJobs(date);
        if (!live) return;
        setJobs(loaded.value);
        setNote(loaded.fromCache ? `Offline: showing the list kept at ${timeOf(loaded.savedAt)}.` : "");
        const found: Record<number, JobDetail> = {};
        for (const job of loaded.value) {
          try {
            found[job.id] = (await loadJob(job.id)).value;
          } catch {
            /* keep the summary only */
          }
        }
        if (live) setDetails(found);
      } catch (e) {
        // A lapsed session is answered by the sign-in prompt (api.ts flags it); nothing else to do.
        if (!(e instanceof ApiError && e.signedOut)) setError("No list of today's jobs on this phone yet. Connect once to fetch it.");
      }
    })();
    return () => {
      live = false;
    };
  }, []);

  // After a sync, show the state the server gave (kept copies are refreshed by the sync).
  useEffect(() => {
    (async () => {
      setOutbox(await outboxAll());
      const list = (await cacheGet<JobSummary[]>(`jobs:${date}`))?.value;
      if (list) setJobs(list);
      const found: Record<number, JobDetail> = {};
      for (const job of list ?? jobs ?? []) {
        const kept = await keptJob(job.id);
        if (kept) found[job.id] = kept;
      }
      if (Object.keys(found).length) setDetails((d) => ({ ...d, ...found }));
    })();
  }, [version]);

  return (
    <main class="screen">
      <Header title="Today's jobs" sub={<span>{date} · {user.name || user.username}</span>} />
      {note && <p class="note" data-testid="kept-note">{note}</p>}
      {error && <p class="error">{error}</p>}
      {jobs && jobs.length === 0 && <p class="card">No job is planned for you today.</p>}
      <ul class="list" data-testid="jobs">
        {(jobs ?? []).map((job) => {
          const detail = details[job.id];
          return (
            <li key={job.id}>
              <a class="card card-link" href={href({ name: "job", id: job.id })} data-testid={`job-${job.id}`}>
                <strong class="card-title">{job.site_name}</strong>
                <StateBadge state={detail?.state ?? job.state} testid="job-state" />
                <span class="muted">Supervisor: {job.supervisor_name}</span>
                {detail ? (
                  <span data-testid="job-needs">{needsLine(detail, outbox)}</span>
                ) : (
                  <Badge kind="mustdo" word="Open to see what it needs" />
                )}
              </a>
            </li>
          );
        })}
      </ul>
      <BottomBar>
        <button class="btn" type="button" onClick={() => location.reload()}>
          Refresh
        </button>
        <button class="btn" type="button" onClick={onSignOut} data-testid="sign-out">
          Sign out
        </button>
      </BottomBar>
    </main>
  );
}

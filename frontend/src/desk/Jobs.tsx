/**
 * Jobs of any day, grouped into today, upcoming and past. A day that has come, was closed or
 * held and has no signed record links to the sign-off screen, where the supervisor signs it.
 */
import { useEffect, useState } from "preact/hooks";
import type { JobSummary, Reason } from "../types";
import { registerBlockers } from "../job_rules";
import { href } from "../ui/hooks";
import { Badge, StateBadge } from "../ui/signs";
import { dayFrom, desk, fieldErrors } from "./api";

interface Loaded {
  jobs: JobSummary[];
  signed: Set<number>;
  /** Of the days still to work: what the server holds against the start, by job. */
  blockers: Map<number, Reason[]>;
}

interface TableProps {
  jobs: JobSummary[];
  signed: Set<number>;
  blockers: Map<number, Reason[]>;
  today: string;
  testid: string;
  plans: boolean;
}

function JobTable({ jobs, signed, blockers, today, testid, plans }: TableProps) {
  if (!jobs.length) return <p class="muted" data-testid={`${testid}-none`}>No jobs.</p>;
  return (
    <table class="desk-table desk-jobs" data-testid={testid}>
      <thead>
        <tr>
          <th scope="col">Date</th>
          <th scope="col">Site</th>
          <th scope="col">State</th>
          <th scope="col">Supervisor</th>
          <th scope="col">Daily record and next step</th>
        </tr>
      </thead>
      <tbody>
        {jobs.map((job) => {
          const finished = job.state === "closed" || job.state === "held";
          const isSigned = signed.has(job.id);
          return (
            <tr key={job.id} data-testid={`desk-job-${job.id}`} data-date={job.date} data-state={job.state}>
              <td>{job.date}</td>
              <th scope="row">{job.site_name}</th>
              <td>
                <StateBadge state={job.state} />
                {(blockers.get(job.id) ?? []).length > 0 && (
                  <ul class="small" data-testid="job-blockers" aria-label="The server will refuse to start it">
                    {blockers.get(job.id)!.map((r, n) => <li key={n}>{r.message}</li>)}
                  </ul>
                )}
              </td>
              <td>{job.supervisor_name}</td>
              <td>
                <div class="desk-actions">
                {isSigned && <Badge kind="safe" word="Record signed" testid="record-signed" />}
                {!isSigned && finished && job.date <= today && (
                  <a class="btn" href={href({ name: "sign", id: job.id })} data-testid="sign-link">
                    Sign the day's record
                  </a>
                )}
                {plans && (job.state === "planned" || job.state === "cleared") && (
                  <a class="btn" href={href({ name: "desk", page: "plan", id: job.id })} data-testid="plan-link">
                    Plan drops
                  </a>
                )}
                <a class="btn" href={href({ name: "job", id: job.id })}>Open on the phone screens</a>
                </div>
              </td>
            </tr>
          );
        })}
      </tbody>
    </table>
  );
}

/** `plans`: whether this person may plan a day (a supervisor or an admin). */
export function DeskJobs({ plans }: { plans: boolean }) {
  const today = dayFrom(0);
  const [loaded, setLoaded] = useState<Loaded | null>(null);
  const [error, setError] = useState("");

  useEffect(() => {
    (async () => {
      try {
        const jobs = await desk.jobs();
        const past = jobs.filter((j) => j.date <= today).map((j) => j.date).sort();
        const records = past.length ? await desk.records(past[0]!) : [];
        const signed = new Set(records.filter((r) => r.kind === "record").map((r) => r.job));
        // Days still to work: their blockers come with each job's detail (a few jobs at most).
        const ahead = jobs.filter((j) => j.date >= today && j.state !== "closed");
        const details = await Promise.allSettled(ahead.map((j) => desk.job(j.id)));
        const blockers = new Map<number, Reason[]>();
        for (const d of details) {
          if (d.status === "fulfilled") blockers.set(d.value.id, registerBlockers(d.value.blockers));
        }
        setLoaded({ jobs, signed, blockers });
      } catch (e) {
        setError(Object.values(fieldErrors(e)).flat().join(" "));
      }
    })();
  }, []);

  const jobs = loaded?.jobs ?? [];
  const byDate = (a: JobSummary, b: JobSummary) => a.date.localeCompare(b.date) || a.site_name.localeCompare(b.site_name);
  const todays = jobs.filter((j) => j.date === today).sort(byDate);
  const upcoming = jobs.filter((j) => j.date > today).sort(byDate);
  const past = jobs.filter((j) => j.date < today).sort((a, b) => byDate(b, a));
  const signed = loaded?.signed ?? new Set<number>();
  const blockers = loaded?.blockers ?? new Map<number, Reason[]>();

  return (
    <>
      <div class="desk-title">
        <h1>Days and jobs</h1>
        {plans && <a class="btn btn-primary" href={href({ name: "desk", page: "plan" })}>Plan a day</a>}
      </div>
      {error && <p class="error" role="alert">{error}</p>}
      {!loaded && !error && <p class="muted">Loading the jobs…</p>}
      {loaded && (
        <>
          <section aria-labelledby="jobs-today">
            <h2 id="jobs-today">Today, {today}</h2>
            <JobTable jobs={todays} signed={signed} blockers={blockers} today={today} testid="jobs-today" plans={plans} />
          </section>
          <section aria-labelledby="jobs-upcoming">
            <h2 id="jobs-upcoming">Upcoming</h2>
            <JobTable jobs={upcoming} signed={signed} blockers={blockers} today={today} testid="jobs-upcoming" plans={plans} />
          </section>
          <section aria-labelledby="jobs-past">
            <h2 id="jobs-past">Past</h2>
            <JobTable jobs={past} signed={signed} blockers={blockers} today={today} testid="jobs-past" plans={plans} />
          </section>
        </>
      )}
    </>
  );
}

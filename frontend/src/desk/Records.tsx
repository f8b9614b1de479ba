/**
 * Daily records for reading, the auditor's pages (supervisors and admins read them too): a
 * site, then a month (each day with its record's state in words, its sheets and its record, in
 * two requests), then a day (records/RecordDay.tsx). Nothing here writes.
 */
import { useEffect, useState } from "preact/hooks";
import type { DailyRecord, Site } from "../types";
import { dateTimeOf } from "../ui/hooks";
import { Badge } from "../ui/signs";
import { dayFrom as todayFrom } from "./api";
import { DeskCaution } from "./parts";
import { ExportPanel } from "./recordChecks";
import { RecordDay } from "./RecordDay";
import {
  asDay,
  asMonth,
  dayState,
  dayWords,
  monthBounds,
  monthDays,
  monthFrom,
  monthsOf,
  monthWords,
  plural,
  sheetsWords,
  type MonthCount,
  type Sheet,
} from "./recordMonth";
import { errorWords, recordsHref, Trail, useRecordSite, Waiting } from "./recordPage";
import { records } from "./recordsApi";

function RecordSites({ user }: { user: number }) {
  const [sites, setSites] = useState<Site[] | null>(null);
  const [error, setError] = useState("");
  useEffect(() => {
    records.sites(user).then(setSites, (e) => setError(errorWords(e)));
  }, [user]);
  if (!sites) return <Waiting title="Daily records" error={error} what="the sites" />;
  return (
    <>
      <h1>Daily records</h1>
      <p>Choose a site, then a month, then a day. These pages only read: nothing here changes a record or a sheet.</p>
      {sites.length ? (
        <ul class="desk-record-list" data-testid="record-sites">
          {sites.map((s) => (
            <li key={s.id}>
              <a class="card card-link" href={recordsHref(s.id)} data-testid={`record-site-${s.id}`}>
                <span class="card-title">{s.name}</span>
                {s.address && <span>{s.address}</span>}
              </a>
            </li>
          ))}
        </ul>
      ) : (
        <p data-testid="no-sites">No site is on record for your organisation.</p>
      )}
      <p>
        A record PDF or an export you were given can be checked on its own on the{" "}
        <a class="inline-link" href="/verify/">page for checking a file</a>.
      </p>
    </>
  );
}

function RecordMonths({ siteId, user }: { siteId: number; user: number }) {
  const { site, missing, error } = useRecordSite(siteId, user);
  const [months, setMonths] = useState<MonthCount[] | null>(null);
  const [loadError, setLoadError] = useState("");
  useEffect(() => {
    records.ofSite(siteId).then((rows) => setMonths(monthsOf(rows, todayFrom(0))), (e) => setLoadError(errorWords(e)));
  }, [siteId]);
  if (!site || !months) return <Waiting title="Daily records" error={error || loadError} missing={missing} what="the months" />;
  return (
    <>
      <Trail />
      <h1>Daily records: {site.name}</h1>
      <p>Choose a month. The count is of the signed daily records your organisation holds for this site.</p>
      <ul class="desk-record-list desk-months" data-testid="record-months">
        {months.map((m) => (
          <li key={m.month}>
            <a class="card card-link" href={recordsHref(site.id, m.month)} data-testid={`record-month-${m.month}`}>
              <span class="card-title">{monthWords(m.month)}</span>
              <span>
                {m.records ? plural(m.records, "signed record", "signed records") : "No signed record"}
                {m.addenda ? `, ${plural(m.addenda, "addendum", "addenda")}` : ""}
              </span>
            </a>
          </li>
        ))}
      </ul>
    </>
  );
}

interface MonthData {
  records: DailyRecord[];
  sheets: Sheet[];
}

function RecordMonth({ siteId, month, user }: { siteId: number; month: string; user: number }) {
  const { site, missing, error } = useRecordSite(siteId, user);
  const [data, setData] = useState<MonthData | null>(null);
  const [loadError, setLoadError] = useState("");
  useEffect(() => {
    const { start, end } = monthBounds(month);
    // The month in two requests: its sheets and its records, each in one answer.
    Promise.all([records.sheets(siteId, start, end), records.ofPeriod(siteId, start, end)]).then(
      ([sheets, rows]) => setData({ sheets, records: rows }),
      (e) => setLoadError(errorWords(e)),
    );
  }, [siteId, month]);
  const title = `Daily records: ${monthWords(month)}`;
  if (!site || !data) return <Waiting title={title} error={error || loadError} missing={missing} what="the month" />;

  const today = todayFrom(0);
  const days = monthDays(month, data.records, data.sheets);
  const states = days.map((d) => dayState(d, today));
  const count = (key: string) => states.filter((s) => s.key === key).length;
  const addenda = data.records.filter((r) => r.kind === "addendum").length;
  const { start, end } = monthBounds(month);

  return (
    <>
      <Trail site={site} />
      <div class="desk-title">
        <h1>{site.name}: {monthWords(month)}</h1>
        <nav aria-label="Other months" class="desk-actions">
          <a class="btn" href={recordsHref(site.id, monthFrom(month, -1))} data-testid="month-previous">
            Previous month ({monthWords(monthFrom(month, -1))})
          </a>
          <a class="btn" href={recordsHref(site.id, monthFrom(month, 1))} data-testid="month-next">
            Next month ({monthWords(monthFrom(month, 1))})
          </a>
        </nav>
      </div>
      <p data-testid="month-summary">
        {plural(count("signed"), "day signed", "days signed")}, {plural(count("unsigned"), "past day", "past days")} with
        sheets and no signed record, {plural(count("open"), "day", "days")} with sheets not signed yet;{" "}
        {plural(addenda, "addendum", "addenda")}.
      </p>
      <table class="desk-table desk-month" data-testid="record-month">
        <caption class="muted">Each day of {monthWords(month)}: its daily record and the sheets filled for it.</caption>
        <thead>
          <tr>
            <th scope="col">Day</th>
            <th scope="col">Daily record</th>
            <th scope="col">Sheets</th>
          </tr>
        </thead>
        <tbody>
          {days.map((day, i) => {
            const state = states[i]!;
            const seen = state.key !== "none";
            return (
              <tr key={day.date} data-testid={`day-${day.date}`} data-state={state.key} class={seen ? undefined : "desk-day-empty"}>
                <th scope="row">
                  {seen ? (
                    <a class="inline-link" href={recordsHref(site.id, day.date)} data-testid="day-link">{dayWords(day.date, "month")}</a>
                  ) : (
                    dayWords(day.date, "month")
                  )}
                </th>
                <td>
                  <div class="desk-day-record">
                    {state.sign ? <Badge kind={state.sign} word={state.word} testid="day-state" /> : <span data-testid="day-state">{state.word}</span>}
                    {day.records.map((r) => (
                      <span key={r.id} data-testid="day-record">
                        by {r.signer_name} on {dateTimeOf(r.signed_at)}, record {r.sequence}
                      </span>
                    ))}
                    {day.addenda.length > 0 && (
                      <span data-testid="day-addenda">{plural(day.addenda.length, "addendum", "addenda")}</span>
                    )}
                  </div>
                </td>
                <td data-testid="day-sheets">{sheetsWords(day.sheets)}</td>
              </tr>
            );
          })}
        </tbody>
      </table>
      <ExportPanel siteId={site.id} start={start} end={end} />
      <DeskCaution />
    </>
  );
}

/**
 * `siteId` and `at` from the route: no site, the site's months, a month (YYYY-MM) or a day;
 * `user`: the id of the person signed in.
 */
export function DeskRecords({ user, siteId, at }: { user: number; siteId?: number; at?: string }) {
  if (siteId === undefined) return <RecordSites user={user} />;
  const day = asDay(at);
  if (day) return <RecordDay key={day} siteId={siteId} day={day} user={user} />;
  const month = asMonth(at);
  if (month) return <RecordMonth key={month} siteId={siteId} month={month} user={user} />;
  return <RecordMonths siteId={siteId} user={user} />;
}

/** What the daily-record pages share: their addresses, the chosen site, waiting words, the trail. */
import { useEffect, useState } from "preact/hooks";
import type { Site } from "../types";
import { href } from "../ui/hooks";
import { fieldErrors } from "./api";
import { monthWords } from "./recordMonth";
import { records } from "./recordsApi";

/** The address of a records page: the sites, a site's months, a month or a day. */
export const recordsHref = (id?: number, at?: string) => href({ name: "desk", page: "records", id, at });

export function errorWords(e: unknown): string {
  return Object.values(fieldErrors(e)).flat().join(" ");
}

/** The site of the route, once the sites are known; `missing` when it is none of them. */
export function useRecordSite(siteId: number, user: number) {
  const [site, setSite] = useState<Site | null>(null);
  const [missing, setMissing] = useState(false);
  const [error, setError] = useState("");
  useEffect(() => {
    records.sites(user).then(
      (sites) => {
        const found = sites.find((s) => s.id === siteId);
        if (found) setSite(found);
        else setMissing(true);
      },
      (e) => setError(errorWords(e)),
    );
  }, [siteId, user]);
  return { site, missing, error };
}

export function Waiting({ title, error, missing, what }: { title: string; error: string; missing?: boolean; what: string }) {
  return (
    <>
      <h1>{title}</h1>
      {error && <p class="error" role="alert">{error}</p>}
      {missing && (
        <p data-testid="record-site-missing">
          No site of yours has this number. <a class="inline-link" href={recordsHref()}>Choose a site</a>
        </p>
      )}
      {!error && !missing && <p class="muted">Loading {what}…</p>}
    </>
  );
}

/** The trail back up: the sites, the site's months, the month. */
export function Trail({ site, month }: { site?: Site; month?: string }) {
  return (
    <nav aria-label="Where you are" class="desk-trail">
      <ol>
        <li><a class="inline-link" href={recordsHref()}>All sites</a></li>
        {site && <li><a class="inline-link" href={recordsHref(site.id)}>{site.name}: months</a></li>}
        {site && month && <li><a class="inline-link" href={recordsHref(site.id, month)}>{monthWords(month)}</a></li>}
      </ol>
    </nav>
  );
}


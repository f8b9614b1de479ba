/**
 * What the owner's screens share: the sites the user may see, the one chosen (from the route's
 * id, else the first), its anchors, log book and inspection interval, and a way to another site.
 */
import { useEffect, useState } from "preact/hooks";
import type { Site } from "../types";
import { href, type DeskPage } from "../ui/hooks";
import { desk, fieldErrors, type LogEntry, type SiteAnchor } from "./api";
import { intervalOf } from "./anchorState";

export interface SiteData {
  sites: Site[];
  site: Site;
  anchors: SiteAnchor[];
  log: LogEntry[];
  intervalDays: number | null;
}

/** The chosen site's data; `reload` fetches the anchors and the log book again after a change. */
export function useSite(siteId: number | undefined) {
  const [data, setData] = useState<SiteData | null>(null);
  const [empty, setEmpty] = useState(false);
  const [error, setError] = useState("");

  // A plain function, not useCallback: that hook would be one more export of the phone's first load.
  async function load() {
    try {
      const [sites, profiles] = await Promise.all([desk.sites(), desk.profiles()]);
      const site = sites.find((s) => s.id === siteId) ?? sites[0];
      if (!site) return setEmpty(true);
      const [anchors, log] = await Promise.all([desk.siteAnchors(site.id), desk.log(site.id)]);
      const profile = profiles.find((p) => p.key === site.profile);
      setData({ sites, site, anchors, log, intervalDays: intervalOf(profile?.thresholds) });
    } catch (e) {
      setError(Object.values(fieldErrors(e)).flat().join(" "));
    }
  }

  useEffect(() => void load(), [siteId]);
  return { data, empty, error, reload: load };
}

/** The screen's heading with the site's name, and links to the same screen for other sites. */
export function SiteTitle({ title, page, data }: { title: string; page: DeskPage; data: SiteData }) {
  const others = data.sites.filter((s) => s.id !== data.site.id);
  return (
    <>
      <div class="desk-title">
        <h1>{title}: {data.site.name}</h1>
      </div>
      {data.site.address && <p class="muted">{data.site.address}</p>}
      {others.length > 0 && (
        <nav aria-label="Other sites" class="desk-sites">
          <span>Other sites:</span>
          <ul>
            {others.map((s) => (
              <li key={s.id}><a class="inline-link" href={href({ name: "desk", page, id: s.id })}>{s.name}</a></li>
            ))}
          </ul>
        </nav>
      )}
    </>
  );
}

/** Loading, a failure or no site at all, in words; null once the data is there. */
export function SiteWaiting({ title, empty, error }: { title: string; empty: boolean; error: string }) {
  if (error) return <><h1>{title}</h1><p class="error" role="alert">{error}</p></>;
  if (empty) return <><h1>{title}</h1><p data-testid="no-sites">No building is on record for your organisation.</p></>;
  return <><h1>{title}</h1><p class="muted">Loading the building…</p></>;
}

export const KIND_WORDS: Record<LogEntry["kind"], string> = {
  periodic_inspection: "Periodic inspection",
  load_test: "Load test",
  repair: "Repair",
  modification: "Modification",
  installation: "Installation",
  removed_from_service: "Removed from service",
  returned_to_service: "Returned to service",
  pre_use_check: "Pre-use check (contractor's sheet)",
};

export const RESULT_WORDS: Record<string, string> = { pass: "Pass", fail: "Fail", none: "No result" };

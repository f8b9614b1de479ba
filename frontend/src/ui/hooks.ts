import { useEffect, useState } from "preact/hooks";
import { dataVersion, getStatus, subscribe, type Status } from "../status";

/** The strip's status, kept current. The effect that subscribes runs after the first paint,
 * which on a busy phone comes after the stored counts were read: it reads the status again once
 * listening, or the strip kept "Waiting 0" while records waited. */
export function useStatus(): Status {
  const [status, setLocal] = useState(getStatus());
  useEffect(() => {
    const stop = subscribe(() => setLocal(getStatus()));
    setLocal(getStatus());
    return stop;
  }, []);
  return status;
}

/** Re-render when stored data changed (after a save or a sync answer). */
export function useDataVersion(): number {
  const [v, setV] = useState(dataVersion());
  useEffect(() => {
    const stop = subscribe(() => setV(dataVersion()));
    setV(dataVersion()); // a change between the first paint and listening (see useStatus)
    return stop;
  }, []);
  return v;
}

export type Route =
  | { name: "jobs" }
  | { name: "job"; id: number }
  | { name: "sheet"; id: number; requirement: string }
  | { name: "cautions"; id: number }
  | { name: "sign"; id: number }
  | { name: "outbox" }
  | { name: "desk"; page: DeskPage; id?: number; at?: string };

/** The desk side's screens (laptop or tablet), loaded apart from the phone's. */
export type DeskPage = "jobs" | "plan" | "equipment" | "building" | "log" | "anchors" | "grants" | "checklists" | "due" | "records";

function parseRoute(hash: string): Route {
  const parts = hash.replace(/^#\/?/, "").split("/").filter(Boolean);
  const id = Number(parts[1]);
  if (parts[0] === "job" && Number.isInteger(id)) {
    if (parts[2] === "sheet" && parts[3]) return { name: "sheet", id, requirement: decodeURIComponent(parts[3]) };
    if (parts[2] === "cautions") return { name: "cautions", id };
    if (parts[2] === "sign") return { name: "sign", id };
    return { name: "job", id };
  }
  if (parts[0] === "outbox") return { name: "outbox" };
  if (parts[0] === "desk") {
    // Unchecked here to keep the phone's first load small: the desk chunk shows its first page
    // for a name it does not know (desk/Desk.tsx).
    const page = (parts[1] ?? "jobs") as DeskPage;
    const deskId = Number(parts[2]);
    // A month or a day after the id (the daily records' pages check it: desk/Records.tsx).
    if (parts[2] && Number.isInteger(deskId) && parts[3]) return { name: "desk", page, id: deskId, at: parts[3] };
    return parts[2] && Number.isInteger(deskId) ? { name: "desk", page, id: deskId } : { name: "desk", page };
  }
  return { name: "jobs" };
}

export function href(route: Route): string {
  switch (route.name) {
    case "jobs":
      return "#/";
    case "job":
      return `#/job/${route.id}`;
    case "sheet":
      return `#/job/${route.id}/sheet/${encodeURIComponent(route.requirement)}`;
    case "cautions":
      return `#/job/${route.id}/cautions`;
    case "sign":
      return `#/job/${route.id}/sign`;
    case "outbox":
      return "#/outbox";
    case "desk":
      return `#/desk/${route.page}${route.id === undefined ? "" : `/${route.id}${route.at ? `/${route.at}` : ""}`}`;
  }
}

export function go(route: Route): void {
  location.hash = href(route);
}

export function useRoute(): Route {
  const [route, setRoute] = useState(parseRoute(location.hash));
  useEffect(() => {
    const onChange = () => {
      setRoute(parseRoute(location.hash));
      window.scrollTo(0, 0);
    };
    window.addEventListener("hashchange", onChange);
    return () => window.removeEventListener("hashchange", onChange);
  }, []);
  return route;
}

export function timeOf(iso: string | null): string {
  if (!iso) return "never";
  const d = new Date(iso);
  if (Number.isNaN(d.getTime())) return "never";
  // 24-hour, as the server's words and the records give times.
  return d.toLocaleTimeString([], { hour: "2-digit", minute: "2-digit", hourCycle: "h23" });
}

/** Date and time in the phone's own words, e.g. "3 Dec 2026, 17:42". */
export function dateTimeOf(iso: string | null): string {
  if (!iso) return "never";
  const d = new Date(iso);
  if (Number.isNaN(d.getTime())) return "never";
  return d.toLocaleString([], { day: "numeric", month: "short", year: "numeric", hour: "2-digit", minute: "2-digit", hourCycle: "h23" });
}

/**
 * The desk side (laptop or tablet): its own header, navigation and one main region per page.
 * Loaded as a chunk of its own (main.tsx imports it on demand), so the phone's first load stays small.
 */
import type { User } from "../types";
import { href, type DeskPage, type Route } from "../ui/hooks";
import { DeskBuilding } from "./Building";
import { DeskCertificates } from "./Certificates";
import { DeskChecklists } from "./Checklists";
import { DeskDue } from "./Due";
import { DeskEquipment } from "./Equipment";
import { DeskGrants } from "./Grants";
import { DeskJobs } from "./Jobs";
import { DeskLogBook } from "./LogBook";
import { DeskPlan } from "./Plan";
import { DeskRecords } from "./Records";
// The desk's styles travel inside its chunk and are added once it loads: a separate CSS file
// would make the phone's first load carry Vite's preload helper for this one import.
import deskCss from "./desk.css?inline";

if (!document.getElementById("desk-css")) {
  const style = document.createElement("style");
  style.id = "desk-css";
  style.textContent = deskCss;
  document.head.append(style);
}

/** `contractor`: a contractor's pages, not the building owner's; `owner`: the owner's alone;
 * `reads`: a page that only reads, so an auditor's too (an auditor gets those alone). */
const PAGES: { page: DeskPage; name: string; plans?: true; contractor?: true; owner?: true; reads?: true }[] = [
  { page: "jobs", name: "Days and jobs", contractor: true },
  { page: "plan", name: "Plan a day", plans: true, contractor: true },
  { page: "equipment", name: "Equipment register", contractor: true },
  { page: "checklists", name: "Checklist versions", contractor: true },
  { page: "building", name: "Building" },
  { page: "log", name: "Anchor log book" },
  { page: "anchors", name: "Anchors and certificates" },
  { page: "grants", name: "Access grants", owner: true },
  { page: "due", name: "Due dates" },
  { page: "records", name: "Daily records", contractor: true, reads: true },
];

/** Who may be a job's supervisor, and so plan a day (the server's rule for a job's supervisor). */
const PLANNERS = new Set(["supervisor", "admin"]);

const ROLE_WORDS: Record<string, string> = {
  supervisor: "Supervisor",
  admin: "Organisation admin",
  property_manager: "Property manager",
  auditor: "Auditor (read only)",
};

export function Desk({ user, route }: { user: User; route: Extract<Route, { name: "desk" }> }) {
  const role = ROLE_WORDS[user.role ?? ""];
  const allowed = role !== undefined;
  const plans = PLANNERS.has(user.role ?? "");
  // A property manager keeps the building: the contractor's pages are not theirs.
  const manages = user.role === "property_manager";
  const audits = user.role === "auditor";
  const forRole = PAGES.filter((p) => (audits ? p.reads : manages ? !p.contractor : !p.owner));
  // A page not for this role opens the role's first, except planning, which says who plans a day.
  const page = route.page === "plan" || forRole.some((p) => p.page === route.page) ? route.page : forRole[0]!.page;
  const shown = forRole.filter((p) => plans || !p.plans);
  // The owner's pages carry the chosen site's id from one to the next; a job's id stays behind.
  const siteId = forRole.find((p) => p.page === page)?.contractor ? undefined : route.id;
  let screen;
  if (!allowed) {
    screen = (
      <>
        <h1>Desk</h1>
        <p>The desk screens are for supervisors, organisation admins, property managers and auditors.</p>
        <p><a class="btn" href={href({ name: "jobs" })}>Back to today's jobs</a></p>
      </>
    );
  } else if (page === "building") screen = <DeskBuilding key={route.id} siteId={route.id} />;
  else if (page === "log") screen = <DeskLogBook key={route.id} siteId={route.id} />;
  else if (page === "anchors") screen = <DeskCertificates key={route.id} siteId={route.id} />;
  else if (page === "grants") screen = <DeskGrants key={route.id} siteId={route.id} />;
  else if (page === "plan" && !plans) {
    screen = (
      <>
        <h1>Plan a day</h1>
        <p>A day is planned by the contractor's supervisor or admin, who is the job's supervisor.</p>
      </>
    );
  } else if (page === "plan") screen = <DeskPlan key={route.id ?? "new"} user={user} jobId={route.id} />;
  else if (page === "equipment") screen = <DeskEquipment />;
  else if (page === "checklists") screen = <DeskChecklists />;
  else if (page === "records") screen = <DeskRecords key={`${route.id}/${route.at}`} user={user.id} siteId={route.id} at={route.at} />;
  else if (page === "due") screen = <DeskDue contractor={!manages} />;
  else screen = <DeskJobs plans={plans} />;

  return (
    <div class="desk">
      <header class="desk-head">
        <span class="desk-brand">Parapet · desk</span>
        <span class="desk-who" data-testid="desk-user">
          {user.name || user.username}
          {role ? `, ${role}` : ""}
          {user.organisation ? ` · ${user.organisation}` : ""}
        </span>
        <a class="btn desk-phone-link" href={href({ name: "jobs" })}>Phone screens</a>
      </header>
      {allowed && (
        <nav class="desk-nav" aria-label="Desk">
          <ul>
            {shown.map((p) => (
              <li key={p.page}>
                <a href={href({ name: "desk", page: p.page, id: p.contractor ? undefined : siteId })} aria-current={page === p.page ? "page" : undefined}>
                  {p.name}
                </a>
              </li>
            ))}
          </ul>
        </nav>
      )}
      <main class="desk-main" data-testid={`desk-${allowed ? page : "refused"}`}>
        {screen}
      </main>
    </div>
  );
}

import { render } from "preact";
import { useEffect, useRef, useState } from "preact/hooks";
import { api, ApiError } from "./api";
import { loadMe } from "./repo";
import { cacheGet, clearCache, outboxWaiting } from "./storage";
import { setStatus } from "./status";
import { prepareDay, refreshCounts, startSyncLoop } from "./sync";
import type { User } from "./types";
import { Cautions } from "./ui/Cautions";
import { Strip } from "./ui/common";
import { go, useRoute, useStatus, type Route } from "./ui/hooks";
import { JobScreen } from "./ui/Job";
import { Jobs } from "./ui/Jobs";
import { Outbox } from "./ui/Outbox";
import { SheetScreen } from "./ui/Sheet";
import { SignIn } from "./ui/SignIn";
import "./styles.css";

type DeskModule = typeof import("./desk/Desk");

/** The desk side lives in its own chunk, fetched the first time a desk route opens. */
function DeskLoader({ user, route }: { user: User; route: Extract<Route, { name: "desk" }> }) {
  const [desk, setDesk] = useState<DeskModule | null>(null);
  const [failed, setFailed] = useState(false);
  useEffect(() => {
    import("./desk/Desk").then(setDesk, () => setFailed(true));
  }, []);
  if (!desk) return <main class="screen"><p class="muted">{failed ? "No connection: the desk did not open." : "Opening…"}</p></main>;
  return <desk.Desk user={user} route={route} />;
}

type SignOffModule = typeof import("./ui/SignOff");

/** The sign page is the supervisor's alone, and needs the server (a password is re-entered):
 * it lives in its own chunk, kept offline by the service worker like the rest. */
function SignOffLoader({ id, user }: { id: number; user: User }) {
  const [module, setModule] = useState<SignOffModule | null>(null);
  const [failed, setFailed] = useState(false);
  useEffect(() => {
    import("./ui/SignOff").then(setModule, () => setFailed(true));
  }, []);
  if (!module) return <main class="screen"><p class="muted">{failed ? "No connection: the sign page did not open." : "Opening…"}</p></main>;
  return <module.SignOff id={id} user={user} />;
}

function App() {
  const route = useRoute();
  const status = useStatus();
  const [user, setUser] = useState<User | null | undefined>(undefined);
  // The user whose session ended without signing out: the records waiting are theirs.
  const [lapsed, setLapsed] = useState<User | null>(null);
  // Set from signing out to the next sign-in: a "not signed in" heard then is the sign-out
  // itself, not a lapse. An effect queued before the sign-out runs only at the next render, by
  // which time the sign-out has ended; it must still find this set.
  const leaving = useRef(false);

  useEffect(() => {
    loadMe()
      .then((loaded) => setUser(loaded.value))
      .catch(async () => {
        const kept = (await cacheGet<User>("me").catch(() => null))?.value ?? null;
        if (kept) setLapsed(kept);
        setUser(null);
      });
  }, []);

  // The session ended (it timed out, or was ended elsewhere): ask for a sign-in again and stay
  // on the same screen; everything on the phone (records, photos, drafts) is kept.
  useEffect(() => {
    if (status.signedOut && user && !leaving.current) {
      setLapsed(user);
      setUser(null);
    }
  }, [status.signedOut]);

  async function signOut() {
    const waiting = (await outboxWaiting()).length;
    if (waiting && !confirm(`${waiting === 1 ? "1 record is" : `${waiting} records are`} not sent yet. They stay on this phone and go after the next sign-in. Sign out?`)) return;
    leaving.current = true;
    try {
      await api.logout();
    } catch (e) {
      if (!(e instanceof ApiError)) {
        leaving.current = false;
        return alert("Signing out needs a connection.");
      }
    }
    await clearCache();
    if ("caches" in window) await caches.delete("parapet-api");
    // The next person starts from an empty form, with no notice meant for a lapsed session.
    setLapsed(null);
    setUser(null);
    setStatus({ signedOut: false, lastError: null });
    go({ name: "jobs" });
  }

  let screen;
  if (user === undefined) screen = <main class="screen"><p class="muted">Opening…</p></main>;
  else if (user === null)
    screen = (
      <SignIn lapsed={lapsed} waiting={status.waiting + status.photosWaiting} onSignedIn={(u) => {
        const resumed = lapsed !== null;
        leaving.current = false;
        setLapsed(null);
        setUser(u);
        setStatus({ signedOut: false, lastError: null });
        void prepareDay();
        if (!resumed) go({ name: "jobs" });
      }} />
    );
  else if (route.name === "desk") return <DeskLoader user={user} route={route} />;
  else if (route.name === "job") screen = <JobScreen id={route.id} user={user} />;
  else if (route.name === "sign") screen = <SignOffLoader id={route.id} user={user} />;
  else if (route.name === "sheet") screen = <SheetScreen key={`${route.id}:${route.requirement}`} id={route.id} requirement={route.requirement} user={user} />;
  else if (route.name === "cautions") screen = <Cautions id={route.id} />;
  else if (route.name === "outbox") screen = <Outbox />;
  else screen = <Jobs user={user} onSignOut={signOut} />;

  return (
    <>
      <Strip />
      {screen}
    </>
  );
}

render(<App />, document.getElementById("app")!);
void refreshCounts();
startSyncLoop();

if ("serviceWorker" in navigator) {
  // The strip says so until the worker has kept the app's files and controls the page: an
  // operator who signs in and walks up to the roof at once must not find it gone on a reload.
  const workers = navigator.serviceWorker;
  const mark = () => setStatus({ kept: !!workers.controller });
  mark();
  workers.addEventListener("controllerchange", mark);
  workers.register("/sw.js", { scope: "/" }).catch(() => {
    /* the app still works online without it */
  });
}

import type { ComponentChildren } from "preact";
import { useEffect, useState } from "preact/hooks";
import { ApiError, OfflineError } from "../api";
import { cacheGet } from "../storage";
import type { User } from "../types";
import { href, timeOf, useStatus } from "./hooks";
import { Sign } from "./signs";

export const SHORT_CAUTION =
  "Parapet supports, and does not replace, local regulations, the maker's manual and licensed inspection.";

/** Online/offline, last sync, and what is still waiting on this phone; tap for the outbox. */
export function Strip() {
  const s = useStatus();
  const waiting = s.waiting + s.photosWaiting;
  return (
    <a class={`strip ${s.online ? "strip-on" : "strip-off"}`} href={href({ name: "outbox" })} data-testid="strip"
      data-syncing={s.syncing ? "yes" : "no"} data-synced={s.lastSync ? "yes" : "no"}>
      <span class="strip-net" data-testid="strip-online">
        <svg width="18" height="18" viewBox="0 0 18 18" aria-hidden="true">
          <rect x="1" y="11" width="3" height="6" fill="currentColor" />
          <rect x="6" y="7" width="3" height="10" fill={s.online ? "currentColor" : "none"} stroke="currentColor" />
          <rect x="11" y="3" width="3" height="14" fill={s.online ? "currentColor" : "none"} stroke="currentColor" />
          {!s.online && <line x1="1" y1="1" x2="17" y2="17" stroke="currentColor" stroke-width="2" />}
        </svg>
        {s.online ? (s.syncing ? "Online, sending" : "Online") : "Offline"}
      </span>
      <span data-testid="strip-last-sync">Last sync {timeOf(s.lastSync)}</span>
      <span data-testid="strip-waiting" data-count={waiting}>
        Waiting {waiting}
      </span>
      {s.signedOut && waiting > 0 && (
        <span class="strip-rejected" data-testid="strip-signed-out">
          Signed out: not sending
        </span>
      )}
      {s.kept === false && (
        <span class="strip-rejected" data-testid="strip-not-kept">
          Not yet ready without signal
        </span>
      )}
      {s.rejected > 0 && (
        <span class="strip-rejected" data-testid="strip-rejected">
          Not accepted {s.rejected}
        </span>
      )}
    </a>
  );
}

export function CautionLine({ job }: { job?: number }) {
  return (
    <p class="caution-line" data-testid="caution-line">
      <Sign kind="caution" size={22} />
      <span>
        {SHORT_CAUTION}{" "}
        {job !== undefined && (
          <a href={href({ name: "cautions", id: job })} class="inline-link">
            Read the cautions
          </a>
        )}
      </span>
    </p>
  );
}

/** A plain link to the desk screens, for the people who plan and keep the registers. */
function DeskLink() {
  const [show, setShow] = useState(false);
  useEffect(() => {
    cacheGet<User>("me").then((me) => setShow(["supervisor", "admin", "property_manager", "auditor"].includes(me?.value.role ?? "")), () => undefined);
  }, []);
  return show ? <a class="btn btn-back" href={href({ name: "desk", page: "jobs" })} data-testid="desk-link">Desk</a> : null;
}

export function Header({ title, back, sub }: { title: string; back?: string; sub?: ComponentChildren }) {
  return (
    <header class="head">
      {back && (
        <a class="btn btn-back" href={back} aria-label="Back">
          ‹ Back
        </a>
      )}
      <div class="head-text">
        <h1>{title}</h1>
        {sub && <div class="head-sub">{sub}</div>}
      </div>
      {!back && <DeskLink />}
    </header>
  );
}

export function BottomBar({ children }: { children: ComponentChildren }) {
  return <nav class="bottom-bar">{children}</nav>;
}

/** "X: Marked failed: X." reads better as "X: marked failed on the check." */
export function plainReason(reason: string): string {
  const m = /^(.*): Marked failed: (.*?)\.?$/.exec(reason);
  if (m && m[1] === m[2]) return `${m[1]}: marked failed on the check.`;
  return reason;
}

/** Why a job could not be shown, in words: never an error's class name or the server's
 * generic lookup text. */
export function loadWords(e: unknown): string {
  if (e instanceof OfflineError) return "This job is not kept on this phone yet; connect once to fetch it.";
  if (e instanceof ApiError && e.status === 404) return "There is no such job for you: it may belong to another organisation, or the link is wrong.";
  if (e instanceof ApiError) return e.message;
  return e instanceof Error ? e.message : String(e);
}

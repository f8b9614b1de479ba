/**
 * Due dates: anchor certificates, equipment inspections and unsigned days of the organisation,
 * overdue first then by date, each state in words and shape; and the person's calendar feed,
 * a secret address shown once, which they can copy and stop.
 */
import { useEffect, useState } from "preact/hooks";
import { href } from "../ui/hooks";
import { Badge, type SignKind } from "../ui/signs";
import { desk, fieldErrors, type DueItem, type DueList } from "./api";

const WINDOWS = [7, 30, 90, 366];
/** Within this many days a date is near: the caution triangle; further out, the blue circle. */
const NEAR_DAYS = 30;

const WHAT: Record<DueItem["kind"], string> = {
  anchor_certificate: "Anchor certificate runs out",
  equipment_inspection: "Periodic inspection of equipment",
  unsigned_day: "Daily record of the day not signed",
};

/** What falls due, in the tense of its date: a certificate that ran out 55 days ago does not
 * "run out". */
export function whatIsDue(item: Pick<DueItem, "kind" | "days_left">): string {
  if (item.kind === "anchor_certificate" && item.days_left < 0) return "Anchor certificate ran out";
  return WHAT[item.kind];
}

function errorText(e: unknown): string {
  return Object.values(fieldErrors(e)).flat().join(" ");
}

function days(n: number): string {
  return `${n} day${n === 1 ? "" : "s"}`;
}

/** Overdue: the stop sign; due today or within 30 days: the caution triangle; later: must do. */
function dueSign(item: DueItem): { kind: SignKind; word: string } {
  const left = item.days_left;
  if (left < 0) return { kind: "held", word: `Overdue by ${days(-left)}` };
  if (left === 0) return { kind: "caution", word: "Due today" };
  return { kind: left <= NEAR_DAYS ? "caution" : "mustdo", word: `Due in ${days(left)}` };
}

function byUrgency(a: DueItem, b: DueItem): number {
  return (
    Number(b.days_left < 0) - Number(a.days_left < 0) ||
    a.due_on.localeCompare(b.due_on) ||
    a.kind.localeCompare(b.kind) ||
    a.subject.localeCompare(b.subject)
  );
}

function NextStep({ item, contractor }: { item: DueItem; contractor: boolean }) {
  if (item.kind === "anchor_certificate" && item.site !== null) {
    return <a class="btn" href={href({ name: "desk", page: "anchors", id: item.site })}>Anchors and certificates</a>;
  }
  if (item.kind === "equipment_inspection" && contractor) {
    return <a class="btn" href={href({ name: "desk", page: "equipment" })}>Equipment register</a>;
  }
  if (item.kind === "unsigned_day" && item.job !== null) {
    return <a class="btn" href={href({ name: "sign", id: item.job })} data-testid="sign-link">Sign the day's record</a>;
  }
  return null;
}

function CalendarFeed() {
  const [url, setUrl] = useState("");
  // Whether a live address exists and since when (the server never gives the address again).
  const [live, setLive] = useState<{ live: boolean; created_at: string | null } | null>(null);
  useEffect(() => {
    desk.calendarState().then(setLive, () => setLive(null));
  }, []);
  const [copied, setCopied] = useState("");
  const [message, setMessage] = useState("");
  const [error, setError] = useState("");
  const [busy, setBusy] = useState(false);

  async function act(call: () => Promise<void>) {
    setBusy(true);
    setError("");
    setMessage("");
    setCopied("");
    try {
      await call();
    } catch (e) {
      setError(errorText(e));
    } finally {
      setBusy(false);
    }
  }

  const create = () =>
    act(async () => {
      setUrl((await desk.createCalendar()).url);
      setLive(await desk.calendarState());
      setMessage("A new calendar address is made; any address you had before no longer works.");
    });
  const revoke = () =>
    act(async () => {
      await desk.revokeCalendar();
      setUrl("");
      setLive({ live: false, created_at: null });
      setMessage("Your calendar address is stopped: a calendar that uses it gets no more dates.");
    });

  async function copy() {
    try {
      await navigator.clipboard.writeText(url);
      setCopied("Copied to the clipboard.");
    } catch {
      (document.getElementById("feed-url") as HTMLInputElement | null)?.select();
      setCopied("This browser did not allow copying: the address is selected, copy it with the keyboard.");
    }
  }

  return (
    <section aria-labelledby="feed-head" class="desk-feed" data-testid="calendar-feed">
      <h2 id="feed-head">Calendar feed</h2>
      <p>
        Your calendar program can show these dates and keep them up to date: create your calendar address here and
        subscribe to it in the calendar by its address. It lists what falls due in the coming year, and everything overdue.
      </p>
      <p class="desk-feed-warning">
        <Badge kind="caution" word="Keep it private" />
        <span>
          Anyone who has the address sees your organisation's due dates, without signing in. Creating a new address
          stops the one before; stop it here if it reaches anyone else.
        </span>
      </p>
      {live && (
        <p data-testid="feed-state">
          {live.live && live.created_at
            ? `You have a calendar address, made on ${live.created_at.slice(0, 10)}.`
            : "You have no calendar address."}
        </p>
      )}
      {message && <p class="note" role="status" data-testid="feed-message">{message}</p>}
      {error && <p class="error" role="alert" data-testid="feed-error">{error}</p>}
      {url && (
        <div class="desk-feed-url">
          <div class="field">
            <label for="feed-url">Your calendar address (shown this once: Parapet keeps only a fingerprint of it)</label>
            <input id="feed-url" type="text" readOnly value={url} data-testid="feed-url" onFocus={(e) => e.currentTarget.select()} />
          </div>
          <div class="desk-actions">
            <button class="btn btn-primary" type="button" onClick={() => void copy()} data-testid="feed-copy">Copy the address</button>
            {copied && <span role="status" data-testid="feed-copied">{copied}</span>}
          </div>
        </div>
      )}
      <div class="desk-actions">
        <button class={url ? "btn" : "btn btn-primary"} type="button" disabled={busy} onClick={() => void create()} data-testid="feed-create">
          {url || live?.live ? "Create a new address" : "Create my calendar address"}
        </button>
        {live?.live !== false && (
          <button class="btn" type="button" disabled={busy} onClick={() => void revoke()} data-testid="feed-revoke">
            Stop my calendar address
          </button>
        )}
      </div>
    </section>
  );
}

/** `contractor`: the person has the contractor's pages (the equipment register among them). */
export function DeskDue({ contractor }: { contractor: boolean }) {
  const [within, setWithin] = useState(30);
  const [list, setList] = useState<DueList | null>(null);
  const [error, setError] = useState("");

  useEffect(() => {
    setError("");
    desk.due(within).then(setList, (e) => setError(errorText(e)));
  }, [within]);

  const items = list ? [...list.items].sort(byUrgency) : [];
  const overdue = items.filter((i) => i.days_left < 0).length;

  return (
    <>
      <div class="desk-title">
        <h1>Due dates</h1>
      </div>
      <div class="desk-due-window">
        <div class="field">
          <label for="due-within">Show what falls due within</label>
          <select id="due-within" value={String(within)} onChange={(e) => setWithin(Number(e.currentTarget.value))}>
            {WINDOWS.map((n) => <option key={n} value={String(n)}>{n === 366 ? "a year" : days(n)}</option>)}
          </select>
        </div>
        {list && (
          <p data-testid="due-summary">
            Today is {list.today}. {items.length ? `${items.length} due, ${overdue} of them overdue.` : ""}
          </p>
        )}
      </div>
      {error && <p class="error" role="alert">{error}</p>}
      {!list && !error && <p class="muted">Loading the due dates…</p>}
      {list && items.length === 0 && (
        <p data-testid="due-none">Nothing is overdue, and nothing falls due within {days(list.within_days)}.</p>
      )}
      {list && items.length > 0 && (
        <table class="desk-table desk-due" data-testid="due-list">
          <thead>
            <tr>
              <th scope="col">State</th>
              <th scope="col">Date</th>
              <th scope="col">What is due</th>
              <th scope="col">Of what</th>
              <th scope="col">Next step</th>
            </tr>
          </thead>
          <tbody>
            {items.map((item) => {
              const sign = dueSign(item);
              return (
                <tr key={item.uid} data-testid={`due-${item.uid}`} data-kind={item.kind} data-sign={sign.kind} data-date={item.due_on}>
                  <td><Badge kind={sign.kind} word={sign.word} testid="due-state" /></td>
                  <td>{item.due_on}</td>
                  <td>{whatIsDue(item)}</td>
                  <th scope="row">{item.subject}</th>
                  <td><NextStep item={item} contractor={contractor} /></td>
                </tr>
              );
            })}
          </tbody>
        </table>
      )}
      {list && (
        <p class="caution-line" data-testid="due-caution">
          <Badge kind="caution" word="Caution" />
          <span>{list.caution}</span>
        </p>
      )}
      <CalendarFeed />
    </>
  );
}

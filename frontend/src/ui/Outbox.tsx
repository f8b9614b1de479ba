import { useEffect, useState } from "preact/hooks";
import { outboxAll, outboxDismiss, photosAll, type OutboxEntry, type PhotoEntry } from "../storage";
import { dataChanged } from "../status";
import { refreshCounts, requestSync } from "../sync";
import { errorLines } from "../refusals";
import { BottomBar, Header } from "./common";
import { href, timeOf, useDataVersion, useStatus } from "./hooks";
import { Badge } from "./signs";

const WORDS = {
  waiting: { kind: "mustdo", word: "Waiting to send" },
  applied: { kind: "safe", word: "Accepted by the server" },
  rejected: { kind: "caution", word: "Not accepted" },
} as const;

export function Outbox() {
  const version = useDataVersion();
  const status = useStatus();
  const [records, setRecords] = useState<OutboxEntry[]>([]);
  const [photos, setPhotos] = useState<PhotoEntry[]>([]);
  useEffect(() => {
    outboxAll().then((r) => setRecords(r.reverse()));
    photosAll().then(setPhotos);
  }, [version]);
  return (
    <main class="screen with-bar">
      <Header title="On this phone" back={href({ name: "jobs" })}
        sub={<span>Last sync {timeOf(status.lastSync)}{status.lastError ? ` · ${status.lastError}` : ""}</span>} />
      {records.length === 0 && <p class="card">Nothing recorded on this phone yet.</p>}
      <ul class="list" data-testid="outbox">
        {records.map((e) => (
          <li key={e.client_uuid} class="card" data-status={e.status} data-uuid={e.client_uuid}>
            <strong>{e.label}</strong>
            <Badge kind={WORDS[e.status].kind} word={WORDS[e.status].word} />
            <span class="muted small">Made {timeOf(e.created_at)}{e.answered_at ? ` · answered ${timeOf(e.answered_at)}` : ""}</span>
            {e.server?.verdict && <span class="small">Server verdict: {e.server.verdict}</span>}
            {errorLines(e.errors).map((line) => <span class="small">{line}</span>)}
            {e.status === "rejected" && (e.dismissed_at ? (
              <span class="muted small" data-testid="refusal-dismissed">Dismissed {timeOf(e.dismissed_at)}</span>
            ) : (
              <button class="btn btn-small" type="button" data-testid="dismiss-refusal"
                onClick={async () => { await outboxDismiss(e.client_uuid); await refreshCounts(); dataChanged(); }}>
                Dismiss
              </button>
            ))}
          </li>
        ))}
      </ul>
      {photos.length > 0 && (
        <>
          <h2>Photos</h2>
          <ul class="list">
            {photos.map((p) => (
              <li key={p.client_uuid} class="card small">
                {p.item_key}: {p.uploaded ? "sent" : p.error ? `not accepted: ${p.error}` : "waiting to send"}
              </li>
            ))}
          </ul>
        </>
      )}
      <BottomBar>
        <button class="btn btn-primary" type="button" disabled={!status.online || status.syncing}
          onClick={() => void requestSync()}>Send now</button>
      </BottomBar>
    </main>
  );
}

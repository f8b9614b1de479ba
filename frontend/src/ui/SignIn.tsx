import { useState } from "preact/hooks";
import { api, ApiError, OfflineError } from "../api";
import { cachePut } from "../storage";
import type { User } from "../types";
import { SHORT_CAUTION } from "./common";
import { Badge } from "./signs";

export function SignIn({ onSignedIn, lapsed = null, waiting = 0 }: {
  onSignedIn: (user: User) => void;
  /** The user whose session ended without signing out, if any. */
  lapsed?: User | null;
  /** Records and photos kept on this phone, not sent yet. */
  waiting?: number;
}) {
  const [username, setUsername] = useState(lapsed?.username ?? "");
  const [password, setPassword] = useState("");
  const [error, setError] = useState("");
  const [busy, setBusy] = useState(false);

  async function submit(event: Event) {
    event.preventDefault();
    setBusy(true);
    setError("");
    try {
      const user = await api.login(username.trim(), password);
      await cachePut("me", user);
      onSignedIn(user);
    } catch (e) {
      if (e instanceof OfflineError) setError("No connection. Signing in needs the server once; after that the app works offline.");
      else if (e instanceof ApiError) setError(e.message);
      else setError(String(e));
    } finally {
      setBusy(false);
    }
  }

  return (
    <main class="screen signin">
      <div class="brand">
        <svg width="56" height="56" viewBox="0 0 32 32" aria-hidden="true">
          <rect x="3" y="4" width="26" height="4" fill="currentColor" />
          <rect x="6" y="8" width="3" height="20" fill="currentColor" />
          <rect x="23" y="8" width="3" height="20" fill="currentColor" />
          <line x1="16" y1="8" x2="16" y2="22" stroke="currentColor" stroke-width="1.5" />
          <rect x="12.5" y="22" width="7" height="5" rx="1" fill="currentColor" />
        </svg>
        <div>
          <h1>Parapet</h1>
          <p class="muted">Pre-start checks on the roof</p>
        </div>
      </div>
      {lapsed && (
        <section class="card alert-soft" role="alert" data-testid="session-ended">
          <h2><Badge kind="mustdo" word="Sign in again" /></h2>
          <p>Your sign-in has ended: it times out after a while, or it was ended on another device.</p>
          {waiting > 0 ? (
            <p data-testid="session-waiting">
              <strong>{waiting} {waiting === 1 ? "record is" : "records are"} kept on this phone</strong> and
              will be sent as soon as you sign in again. Nothing is lost.
            </p>
          ) : (
            <p>Everything you recorded is kept on this phone.</p>
          )}
          {waiting > 0 && username.trim() && username.trim() !== lapsed.username && (
            <p class="small"><strong>They were made by {lapsed.name || lapsed.username}.</strong> Signed in as someone else, they are sent under that name.</p>
          )}
        </section>
      )}
      {!lapsed && waiting > 0 && (
        <p class="note" data-testid="session-waiting">{waiting} kept on this phone, sent after the next sign-in.</p>
      )}
      <form onSubmit={submit} class="card">
        <label class="field">
          <span>Username</span>
          <input name="username" autocomplete="username" autocapitalize="none" value={username}
            onInput={(e) => setUsername((e.target as HTMLInputElement).value)} required />
        </label>
        <label class="field">
          <span>Password</span>
          <input name="password" type="password" autocomplete="current-password" value={password}
            onInput={(e) => setPassword((e.target as HTMLInputElement).value)} required />
        </label>
        {error && <p class="error" role="alert" data-testid="signin-error">{error}</p>}
        <button class="btn btn-primary btn-wide" type="submit" disabled={busy}>
          {busy ? "Signing in…" : lapsed && waiting > 0 ? "Sign in and send" : "Sign in"}
        </button>
      </form>
      <p class="muted small">{SHORT_CAUTION}</p>
    </main>
  );
}

import { useState } from "preact/hooks";
import { api, ApiError, OfflineError } from "../api";
import { cachePut } from "../storage";
import type { User } from "../types";
import { SHORT_CAUTION } from "./common";

export function SignIn({ onSignedIn }: { onSignedIn: (user: User) => void }) {
  const [username, setUsername] = useState("");
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
          {busy ? "Signing in…" : "Sign in"}
        </button>
      </form>
      <p class="muted small">{SHORT_CAUTION}</p>
    </main>
  );
}

"use client";

import { useActionState, useState } from "react";
import { signInWithBadge, signInWithPassword, type SignInState } from "./actions";

const IDLE: SignInState = { ok: false, error: "" };

export function SignInForms({ next, initialMode }: { next: string; initialMode: "password" | "badge" }) {
  const [mode, setMode] = useState(initialMode);
  const [pwState, pwAction, pwPending] = useActionState(signInWithPassword, IDLE);
  const [badgeState, badgeAction, badgePending] = useActionState(signInWithBadge, IDLE);

  return (
    <div className="signin-box card">
      <div role="tablist" aria-label="How to sign in" className="signin-tabs">
        <button
          type="button"
          role="tab"
          id="tab-password"
          aria-selected={mode === "password"}
          aria-controls="panel-password"
          className={mode === "password" ? "" : "secondary"}
          onClick={() => setMode("password")}
        >
          Name and password
        </button>
        <button
          type="button"
          role="tab"
          id="tab-badge"
          aria-selected={mode === "badge"}
          aria-controls="panel-badge"
          className={mode === "badge" ? "" : "secondary"}
          onClick={() => setMode("badge")}
        >
          Badge and PIN
        </button>
      </div>

      <form id="panel-password" role="tabpanel" aria-labelledby="tab-password" action={pwAction} hidden={mode !== "password"}>
        <input type="hidden" name="next" value={next} />
        <div className="field">
          <label htmlFor="username">User name</label>
          <input id="username" name="username" autoComplete="username" required defaultValue={!pwState.ok ? pwState.username : ""} autoFocus={mode === "password"} />
        </div>
        <div className="field">
          <label htmlFor="password">Password</label>
          <input id="password" name="password" type="password" autoComplete="current-password" required />
        </div>
        {!pwState.ok && pwState.error && (
          <p className="error-text" role="alert">
            {pwState.error}
          </p>
        )}
        <button type="submit" disabled={pwPending}>
          {pwPending ? "Signing in…" : "Sign in"}
        </button>
      </form>

      <form id="panel-badge" role="tabpanel" aria-labelledby="tab-badge" action={badgeAction} hidden={mode !== "badge"}>
        <input type="hidden" name="next" value={next} />
        <p className="muted">For floor entry on a shared PC. The session ends after a short idle time.</p>
        <div className="field">
          <label htmlFor="badge">Badge number</label>
          <input id="badge" name="badge" inputMode="numeric" autoComplete="off" required defaultValue={!badgeState.ok ? badgeState.badge : ""} autoFocus={mode === "badge"} />
        </div>
        <div className="field">
          <label htmlFor="pin">PIN</label>
          <input id="pin" name="pin" type="password" inputMode="numeric" autoComplete="off" required maxLength={8} />
        </div>
        {!badgeState.ok && badgeState.error && (
          <p className="error-text" role="alert">
            {badgeState.error}
          </p>
        )}
        <button type="submit" disabled={badgePending}>
          {badgePending ? "Signing in…" : "Sign in with badge"}
        </button>
      </form>
    </div>
  );
}

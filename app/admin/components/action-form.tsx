"use client";

import { useActionState, type ReactNode } from "react";
import type { ActionResult } from "@/lib/http/action-result";

type Action = (prev: ActionResult<{ secret?: string }>, form: FormData) => Promise<ActionResult<{ secret?: string }>>;

const IDLE: ActionResult<{ secret?: string }> = { ok: false, error: "" };

/**
 * A form posting to a server action, showing its typed result. Fields come from the
 * server component as children; a secret in the result (a new API token) is shown once.
 */
export function ActionForm({
  action,
  submitLabel,
  children,
  className,
  secondary,
  confirm,
}: {
  action: Action;
  submitLabel: string;
  children?: ReactNode;
  className?: string;
  secondary?: boolean;
  confirm?: string;
}) {
  const [state, formAction, pending] = useActionState(action, IDLE);
  return (
    <form
      action={formAction}
      className={className}
      onSubmit={(event) => {
        if (confirm && !window.confirm(confirm)) event.preventDefault();
      }}
    >
      {children}
      <button type="submit" disabled={pending} className={secondary ? "secondary" : undefined}>
        {pending ? "Saving…" : submitLabel}
      </button>
      <div aria-live="polite" className="action-result">
        {state.ok && <p className="ok-text">{state.message}</p>}
        {!state.ok && state.error && (
          <p className="error-text" role="alert">
            {state.error}
          </p>
        )}
        {state.ok && state.data?.secret && (
          <div className="caution secret-once">
            <p>
              <strong>Copy this token now; it is not shown again.</strong>
            </p>
            <code className="mono secret-value" data-testid="new-token">
              {state.data.secret}
            </code>
          </div>
        )}
      </div>
    </form>
  );
}

"use client";

import { useActionState, type ReactNode } from "react";
// Type only: lib/http/action-result.ts itself imports server code.
import type { ActionResult } from "@/lib/http/action-result";

type Action<D> = (prev: ActionResult<D>, form: FormData) => Promise<ActionResult<D>>;

function secretOf(state: ActionResult<unknown>): string | null {
  if (!state.ok || !state.data || typeof state.data !== "object") return null;
  const secret = (state.data as { secret?: unknown }).secret;
  return typeof secret === "string" && secret ? secret : null;
}

/**
 * A form posting to a server action and showing its typed result beside the button:
 * the message, the error (a refused guard, a full or read-only database, a validation
 * problem), and a secret in the result (a new API token) once. The fields come from the
 * server component as children. Used by setup, admin and corrections.
 *
 * `block` puts the result under the button (admin pages); otherwise it sits beside it
 * (table rows). `confirm` asks before posting.
 */
export function ResultForm<D>({
  action,
  submitLabel,
  children,
  className,
  secondary,
  confirm,
  label,
  block,
}: {
  action: Action<D>;
  submitLabel: string;
  children?: ReactNode;
  className?: string;
  secondary?: boolean;
  confirm?: string;
  label?: string;
  block?: boolean;
}) {
  const [state, formAction, pending] = useActionState(action, { ok: false, error: "" } as ActionResult<D>);
  const Text = block ? "p" : "span";
  const secret = secretOf(state);
  const result = (
    <>
      {state.ok && <Text className="ok-text">{state.message}</Text>}
      {!state.ok && state.error && (
        <Text className="error-text" role="alert">
          {state.error}
        </Text>
      )}
      {secret && (
        <div className="caution secret-once">
          <p>
            <strong>Copy this token now; it is not shown again.</strong>
          </p>
          <code className="mono secret-value" data-testid="new-token">
            {secret}
          </code>
        </div>
      )}
    </>
  );
  return (
    <form
      action={formAction}
      className={className}
      aria-label={label}
      onSubmit={(event) => {
        if (confirm && !window.confirm(confirm)) event.preventDefault();
      }}
    >
      {children}
      <button type="submit" disabled={pending} className={secondary ? "secondary" : undefined}>
        {pending ? "Saving…" : submitLabel}
      </button>
      {block ? (
        <div aria-live="polite" className="action-result">
          {result}
        </div>
      ) : (
        <span aria-live="polite" className="action-result">
          {result}
        </span>
      )}
    </form>
  );
}

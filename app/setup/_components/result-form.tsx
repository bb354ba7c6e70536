"use client";

import { useActionState, type ReactNode } from "react";
import type { ActionResult } from "@/lib/http/action-result";

type Action = (prev: ActionResult, form: FormData) => Promise<ActionResult>;

const IDLE: ActionResult = { ok: false, error: "" };

/**
 * A form posting to a server action and showing its typed result beside the button.
 * The fields come from the server component as children.
 */
export function ResultForm({
  action,
  submitLabel,
  children,
  className,
  secondary,
  confirm,
  label,
}: {
  action: Action;
  submitLabel: string;
  children?: ReactNode;
  className?: string;
  secondary?: boolean;
  confirm?: string;
  label?: string;
}) {
  const [state, formAction, pending] = useActionState(action, IDLE);
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
      <span aria-live="polite" className="action-result">
        {state.ok && <span className="ok-text">{state.message}</span>}
        {!state.ok && state.error && (
          <span className="error-text" role="alert">
            {state.error}
          </span>
        )}
      </span>
    </form>
  );
}

import type { ZodError } from "zod";
import { AuthError } from "@/lib/auth/access";

/**
 * The typed result a server action returns to its form (useActionState). Actions never
 * throw for expected failures; a guard refusal becomes { ok: false, status, error }.
 */
export type ActionResult<T = undefined> =
  | { ok: true; message: string; data?: T }
  | { ok: false; error: string; status?: 400 | 401 | 403 | 409 | 500; fieldErrors?: Record<string, string> };

export const IDLE: ActionResult<never> = { ok: false, error: "" };

/** The result for a refused guard, or null when the error is something else (rethrow it). */
export function authFailure(error: unknown): (ActionResult<never> & { ok: false }) | null {
  if (error instanceof AuthError) return { ok: false, status: error.status, error: error.message };
  return null;
}

/** First message per field from a zod error, plus a summary. */
export function validationFailure(error: ZodError): ActionResult<never> & { ok: false } {
  const fieldErrors: Record<string, string> = {};
  for (const issue of error.issues) {
    const key = issue.path.join(".") || "form";
    fieldErrors[key] ??= issue.message;
  }
  return { ok: false, status: 400, error: Object.values(fieldErrors)[0] ?? "Check the form.", fieldErrors };
}

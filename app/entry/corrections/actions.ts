"use server";

import { revalidatePath } from "next/cache";
import { redirect } from "next/navigation";
import { requireActionUser } from "@/lib/auth/guard";
import { authFailure, databaseFailure, type ActionResult } from "@/lib/http/action-result";
import { actorFromPrincipal } from "@/lib/intake/actor";
import { correctEntry } from "@/lib/intake/corrections";
import { formatFieldProblem } from "@/lib/intake/schemas";

/** Corrects one entry: a new entry supersedes it with the reason (never an edit in place). */
export async function correctEntryAction(_prev: ActionResult, form: FormData): Promise<ActionResult> {
  let actor;
  try {
    actor = actorFromPrincipal(await requireActionUser("operator", { floor: true }));
  } catch (error) {
    const refused = authFailure(error);
    if (refused) return refused;
    throw error;
  }
  let outcome: Awaited<ReturnType<typeof correctEntry>>;
  try {
    outcome = await correctEntry(actor, {
      idempotencyKey: form.get("idempotencyKey"),
      kind: form.get("kind"),
      entryId: form.get("entryId"),
      value: form.get("value"),
      reason: form.get("reason") ?? "",
    });
  } catch (error) {
    // Full, read-only or busy: one transaction, so nothing of the correction was stored.
    const trouble = databaseFailure(error, "correction");
    if (trouble) return trouble;
    throw error;
  }
  switch (outcome.status) {
    case "created": {
      revalidatePath("/entry", "layout");
      // Back to the same sheet, naming the new entry (the row's form is replaced by the new entry's).
      const back = String(form.get("back") ?? "");
      const marker = outcome.result.tallyEntryIds.length ? `t${outcome.result.tallyEntryIds[0]}` : `u${outcome.result.inspectionIds[0]}`;
      redirect(`${back.startsWith("/entry/corrections?") ? back : "/entry/corrections?"}&corrected=${marker}`);
    }
    case "replay":
      return { ok: true, message: "Already saved." };
    case "invalid":
      return { ok: false, status: 400, error: outcome.problems.map(formatFieldProblem).join("; ") };
    case "forbidden":
      return { ok: false, status: 403, error: outcome.message };
    case "stale":
    case "conflict":
      revalidatePath("/entry/corrections");
      return { ok: false, status: 409, error: outcome.message };
  }
}

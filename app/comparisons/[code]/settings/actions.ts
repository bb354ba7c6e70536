"use server";

import { revalidatePath } from "next/cache";
import { AuthError, requireActionUser } from "@/lib/auth/guard";
import { checkSettingsAgainstPlant, getComparison, settingsSchema, updateComparisonSettings, type ComparisonSettings } from "@/lib/db/comparisons";
import { loadMasterData } from "@/lib/db/plant";
import { parseSettingsForm, type SettingsFormResult } from "@/lib/review/settings-form";
import { actionOutcome } from "@/lib/http/action-result";

/**
 * Saves a comparison's settings from its form: same-origin engineer session, zod
 * validation, plant-aware checks, then one transaction with its AuditEvent. A full,
 * read-only or busy database comes back as the form's plain message (actionOutcome).
 */
export async function saveComparisonSettings(_previous: SettingsFormResult, form: FormData): Promise<SettingsFormResult> {
  const outcome = await actionOutcome("comparison settings: save", async () => ({ ok: true as const, result: await save(form) }));
  return outcome.ok ? outcome.result : { status: "error", message: outcome.error, fieldErrors: outcome.fieldErrors ?? {} };
}

async function save(form: FormData): Promise<SettingsFormResult> {
  let actor: { id: number; name: string };
  try {
    const me = await requireActionUser("engineer");
    actor = { id: me.userId, name: me.displayName };
  } catch (error) {
    if (error instanceof AuthError) return { status: "error", message: error.message, fieldErrors: {} };
    throw error;
  }
  const code = String(form.get("code") ?? "");
  const comparison = await getComparison(code);
  if (!comparison) return { status: "error", message: "This comparison no longer exists.", fieldErrors: {} };

  const parsed = settingsSchema.safeParse(parseSettingsForm(form));
  if (!parsed.success) {
    const fieldErrors: Record<string, string> = {};
    for (const issue of parsed.error.issues) {
      const key = String(issue.path[0] ?? "form");
      fieldErrors[key] ??= issue.code === "invalid_type" ? "Enter a number." : issue.message;
    }
    return { status: "error", message: "Some settings need another look.", fieldErrors };
  }
  const settings: ComparisonSettings = parsed.data;
  const plant = await loadMasterData();
  const fieldErrors = checkSettingsAgainstPlant(comparison.compare, settings, {
    lines: plant.lines.map((l) => l.code),
    shifts: plant.shifts.map((s) => s.code),
    categories: plant.categories.map((c) => c.code),
  });
  if (Object.keys(fieldErrors).length) return { status: "error", message: "Some settings need another look.", fieldErrors };

  const saved = await updateComparisonSettings(code, settings, actor);
  if (!saved) return { status: "error", message: "This comparison no longer exists.", fieldErrors: {} };
  revalidatePath(`/comparisons/${encodeURIComponent(code)}`);
  revalidatePath("/");
  return { status: "saved", message: `Saved. The comparison is rescanned with the new settings.`, fieldErrors: {} };
}

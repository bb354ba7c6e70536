"use server";

import { revalidatePath } from "next/cache";
import { z } from "zod";
import { requireActionUser } from "@/lib/auth/guard";
import { actionOutcome, authFailure, validationFailure, type ActionResult } from "@/lib/http/action-result";
import { MasterDataError, createMaster, updateMaster, type MasterKind } from "@/lib/db/master-data";
import { actorFromPrincipal, type Actor } from "@/lib/intake/actor";

const kindSchema = z.enum(["line", "shift", "category", "product"]);

async function admin(): Promise<Actor | ActionResult> {
  try {
    return actorFromPrincipal(await requireActionUser("admin"));
  } catch (error) {
    const refused = authFailure(error);
    if (refused) return refused;
    throw error;
  }
}

function fields(form: FormData): Record<string, unknown> {
  const out: Record<string, unknown> = {};
  for (const name of ["code", "name", "family", "displayOrder", "startTime", "endTime"]) {
    const v = form.get(name);
    if (typeof v === "string") out[name] = v;
  }
  return out;
}

// The short note beside a field; the form's message above it has the whole story.
function fieldNote(field: string): string {
  return field === "startTime" ? "Check the clock times." : field === "code" ? "Already taken." : "Check this field.";
}

async function run(kind: MasterKind, work: () => Promise<unknown>, message: string): Promise<ActionResult> {
  try {
    await work();
  } catch (error) {
    if (error instanceof z.ZodError) return validationFailure(error);
    if (error instanceof MasterDataError) return { ok: false, status: 400, error: error.message, ...(error.field ? { fieldErrors: { [error.field]: fieldNote(error.field) } } : {}) };
    throw error;
  }
  revalidatePath(`/setup/${kind}`);
  revalidatePath("/setup");
  return { ok: true, message };
}

export async function createMasterAction(_prev: ActionResult, form: FormData): Promise<ActionResult> {
  return actionOutcome("setup: add", async () => {
    const actor = await admin();
    if ("ok" in actor) return actor;
    const kind = kindSchema.safeParse(form.get("kind"));
    if (!kind.success) return { ok: false, status: 400, error: "Unknown kind." };
    const data = fields(form);
    return run(kind.data, () => createMaster(kind.data, data, actor), `Added ${String(data.code)}.`);
  });
}

export async function updateMasterAction(_prev: ActionResult, form: FormData): Promise<ActionResult> {
  return actionOutcome("setup: save", async () => {
    const actor = await admin();
    if ("ok" in actor) return actor;
    const kind = kindSchema.safeParse(form.get("kind"));
    const id = z.coerce.number().int().positive().safeParse(form.get("id"));
    if (!kind.success || !id.success) return { ok: false, status: 400, error: "Unknown row." };
    const data = fields(form);
    delete data.code;
    return run(kind.data, () => updateMaster(kind.data, id.data, { fields: data }, actor), "Saved.");
  });
}

export async function setActiveAction(_prev: ActionResult, form: FormData): Promise<ActionResult> {
  return actionOutcome("setup: retire or restore", async () => {
    const actor = await admin();
    if ("ok" in actor) return actor;
    const kind = kindSchema.safeParse(form.get("kind"));
    const id = z.coerce.number().int().positive().safeParse(form.get("id"));
    const active = form.get("active") === "true";
    if (!kind.success || !id.success) return { ok: false, status: 400, error: "Unknown row." };
    return run(kind.data, () => updateMaster(kind.data, id.data, { active }, actor), active ? "Back in use." : "Retired; its history is kept.");
  });
}

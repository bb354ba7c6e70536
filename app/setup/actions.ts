"use server";

import { revalidatePath } from "next/cache";
import { z } from "zod";
import { requireActionUser } from "@/lib/auth/guard";
import { db } from "@/lib/db/client";
import { actionOutcome, authFailure, validationFailure, type ActionResult } from "@/lib/http/action-result";
import { MasterDataError, createMaster, updateMaster, type MasterKind } from "@/lib/db/master-data";
import { actorFromPrincipal, type Actor } from "@/lib/intake/actor";
import { isClockTime } from "@/lib/intake/shift-clock";
import { describeShiftOverlap, findShiftOverlap } from "@/lib/intake/shift-overlap";

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

async function run(kind: MasterKind, work: () => Promise<unknown>, message: string): Promise<ActionResult> {
  try {
    await work();
  } catch (error) {
    if (error instanceof z.ZodError) return validationFailure(error);
    if (error instanceof MasterDataError) return { ok: false, status: 400, error: error.message };
    throw error;
  }
  revalidatePath(`/setup/${kind}`);
  revalidatePath("/setup");
  return { ok: true, message };
}

/**
 * Would this shift, active with these clock times, overlap another active shift? The
 * message, or null. Checked before the write; times that are not HH:MM are left to the
 * form's validation, which names the field.
 */
async function shiftOverlapProblem(shift: { id?: number; code: string; startTime: unknown; endTime: unknown }): Promise<ActionResult | null> {
  const { startTime, endTime } = shift;
  if (typeof startTime !== "string" || typeof endTime !== "string" || !isClockTime(startTime) || !isClockTime(endTime)) return null;
  const others = await db().shift.findMany({
    where: { active: true, ...(shift.id ? { id: { not: shift.id } } : {}) },
    orderBy: [{ displayOrder: "asc" }, { code: "asc" }],
    select: { code: true, startTime: true, endTime: true },
  });
  const candidate = { code: shift.code, startTime, endTime };
  const overlap = findShiftOverlap(candidate, others);
  return overlap ? { ok: false, status: 400, error: describeShiftOverlap(candidate, overlap), fieldErrors: { startTime: "Overlaps another shift." } } : null;
}

export async function createMasterAction(_prev: ActionResult, form: FormData): Promise<ActionResult> {
  return actionOutcome("setup: add", async () => {
    const actor = await admin();
    if ("ok" in actor) return actor;
    const kind = kindSchema.safeParse(form.get("kind"));
    if (!kind.success) return { ok: false, status: 400, error: "Unknown kind." };
    const data = fields(form);
    if (kind.data === "shift") {
      const overlap = await shiftOverlapProblem({ code: String(data.code ?? "").trim(), startTime: data.startTime, endTime: data.endTime });
      if (overlap) return overlap;
    }
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
    if (kind.data === "shift") {
      const row = await db().shift.findUnique({ where: { id: id.data } });
      // A retired shift may keep any times; they are checked when it comes back into use.
      if (row?.active) {
        const overlap = await shiftOverlapProblem({ id: row.id, code: row.code, startTime: data.startTime ?? row.startTime, endTime: data.endTime ?? row.endTime });
        if (overlap) return overlap;
      }
    }
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
    if (kind.data === "shift" && active) {
      const row = await db().shift.findUnique({ where: { id: id.data } });
      if (row && !row.active) {
        const overlap = await shiftOverlapProblem({ id: row.id, code: row.code, startTime: row.startTime, endTime: row.endTime });
        if (overlap) return overlap;
      }
    }
    return run(kind.data, () => updateMaster(kind.data, id.data, { active }, actor), active ? "Back in use." : "Retired; its history is kept.");
  });
}

import { z } from "zod";
import { db, writeTransaction, type TransactionClient } from "./client";
import { codeSchema } from "../intake/codes";
import type { Actor } from "../intake/actor";
import { isClockTime } from "../intake/shift-clock";
import { describeShiftOverlap, findShiftOverlap } from "../intake/shift-overlap";

/**
 * Master data set-up (lines, shifts, defect categories, products) for the Setup pages.
 * Codes are fixed once created (imports, API clients and exports refer to them);
 * names, order, family and clock times can change; retiring keeps every entry and
 * only stops new floor/API data. Each change writes an AuditEvent in the same transaction.
 */

export type MasterKind = "line" | "shift" | "category" | "product";

export const MASTER_LABELS: Record<MasterKind, { one: string; many: string }> = {
  line: { one: "line", many: "Lines" },
  shift: { one: "shift", many: "Shifts" },
  category: { one: "defect category", many: "Defect categories" },
  product: { one: "product", many: "Products" },
};

const name = z.string().trim().min(1, { message: "a name is required" }).max(80, { message: "a name is at most 80 characters" });
const order = z.coerce.number({ message: "the order is a number" }).int({ message: "the order is a whole number" }).min(0).max(9999);
const clock = z.string().trim().refine(isClockTime, { message: "a clock time is HH:MM (00:00–23:59)" });
const family = z
  .string()
  .trim()
  .max(40, { message: "a family is at most 40 characters" })
  .transform((v) => (v === "" ? null : v));

export const MasterCreateSchemas = {
  line: z.object({ code: codeSchema, name, displayOrder: order.default(0) }),
  shift: z
    .object({ code: codeSchema, name, startTime: clock, endTime: clock, displayOrder: order.default(0) })
    .refine((s) => s.startTime !== s.endTime, { message: "start and end must differ", path: ["endTime"] }),
  category: z.object({ code: codeSchema, name, family: family.optional(), displayOrder: order.default(0) }),
  product: z.object({ code: codeSchema, name }),
} as const;

export const MasterUpdateSchemas = {
  line: z.object({ name, displayOrder: order }),
  shift: z
    .object({ name, startTime: clock, endTime: clock, displayOrder: order })
    .refine((s) => s.startTime !== s.endTime, { message: "start and end must differ", path: ["endTime"] }),
  category: z.object({ name, family: family, displayOrder: order }),
  product: z.object({ name }),
} as const;

export type MasterRow = {
  id: number;
  code: string;
  name: string;
  active: boolean;
  displayOrder: number | null;
  family: string | null;
  startTime: string | null;
  endTime: string | null;
  entries: number;
};

export class MasterDataError extends Error {
  constructor(
    message: string,
    readonly field?: string,
  ) {
    super(message);
  }
}

/** Every row of a kind with how many tally entries refer to it, in display order. */
export async function listMaster(kind: MasterKind): Promise<MasterRow[]> {
  const client = db();
  if (kind === "line" || kind === "category" || kind === "shift") {
    const table = kind === "line" ? "Line" : kind === "shift" ? "Shift" : "DefectCategory";
    const column = kind === "line" ? "lineId" : kind === "shift" ? "shiftId" : "categoryId";
    const rows = await client.$queryRawUnsafe<
      { id: number; code: string; name: string; active: number | boolean; displayOrder: number; family?: string | null; startTime?: string; endTime?: string; entries: bigint | number }[]
    >(
      `SELECT t.*, (SELECT COUNT(*) FROM TallyEntry e WHERE e.${column} = t.id) AS entries FROM ${table} t ORDER BY t.displayOrder, t.code`,
    );
    return rows.map((r) => ({
      id: r.id,
      code: r.code,
      name: r.name,
      active: Boolean(r.active),
      displayOrder: r.displayOrder,
      family: r.family ?? null,
      startTime: r.startTime ?? null,
      endTime: r.endTime ?? null,
      entries: Number(r.entries),
    }));
  }
  const rows = await client.$queryRawUnsafe<{ id: number; code: string; name: string; active: number | boolean; entries: bigint | number }[]>(
    `SELECT t.*, (SELECT COUNT(*) FROM TallyEntry e WHERE e.productId = t.id) AS entries FROM Product t ORDER BY t.code`,
  );
  return rows.map((r) => ({ id: r.id, code: r.code, name: r.name, active: Boolean(r.active), displayOrder: null, family: null, startTime: null, endTime: null, entries: Number(r.entries) }));
}

type Snapshot = Record<string, unknown>;

function snapshot(row: Record<string, unknown>): Snapshot {
  const { createdAt: _c, ...rest } = row;
  return rest;
}

function isUniqueViolation(error: unknown): boolean {
  const e = error as { code?: string; message?: string };
  return e?.code === "P2002" || /UNIQUE constraint failed/i.test(e?.message ?? "");
}

/** Creates a row; returns its id. Throws MasterDataError for a taken code. */
export async function createMaster(kind: MasterKind, input: Record<string, unknown>, actor: Actor): Promise<number> {
  const data = MasterCreateSchemas[kind].parse(input) as Record<string, unknown> & { code: string };
  try {
    return await writeTransaction(async (tx) => {
      let row: Record<string, unknown> & { id: number };
      if (kind === "line") row = await tx.line.create({ data: data as { code: string; name: string; displayOrder: number } });
      else if (kind === "shift") {
        row = await tx.shift.create({ data: data as { code: string; name: string; startTime: string; endTime: string; displayOrder: number } });
        await refuseShiftOverlap(tx, row as ShiftClock);
      }
      else if (kind === "category")
        row = await tx.defectCategory.create({ data: data as { code: string; name: string; family?: string | null; displayOrder: number } });
      else row = await tx.product.create({ data: data as { code: string; name: string } });
      await tx.auditEvent.create({
        data: { actorId: actor.userId, actorName: actor.name, action: `${kind}.create`, entity: entityName(kind), entityId: String(row.id), after: JSON.stringify(snapshot(row)) },
      });
      return row.id;
    });
  } catch (error) {
    if (isUniqueViolation(error)) throw new MasterDataError(`The code "${data.code}" is already taken.`, "code");
    throw error;
  }
}

function entityName(kind: MasterKind): string {
  return kind === "line" ? "Line" : kind === "shift" ? "Shift" : kind === "category" ? "DefectCategory" : "Product";
}

type ShiftClock = { id: number; code: string; startTime: string; endTime: string; active: boolean };

/**
 * Throws a MasterDataError naming the overlap when an active shift, as just written inside
 * the transaction, shares minutes of the day with another active shift; the caller's
 * transaction then rolls the write back. Checked inside the write, not before it, so two
 * admins saving overlapping shifts at the same moment cannot both pass.
 */
async function refuseShiftOverlap(tx: TransactionClient, shift: ShiftClock): Promise<void> {
  if (!shift.active) return;
  const others = await tx.shift.findMany({
    where: { active: true, id: { not: shift.id } },
    orderBy: [{ displayOrder: "asc" }, { code: "asc" }],
    select: { code: true, startTime: true, endTime: true },
  });
  const overlap = findShiftOverlap(shift, others);
  if (overlap) throw new MasterDataError(describeShiftOverlap(shift, overlap), "startTime");
}

async function findRow(tx: TransactionClient, kind: MasterKind, id: number) {
  if (kind === "line") return tx.line.findUnique({ where: { id } });
  if (kind === "shift") return tx.shift.findUnique({ where: { id } });
  if (kind === "category") return tx.defectCategory.findUnique({ where: { id } });
  return tx.product.findUnique({ where: { id } });
}

/** Changes name/order/family/clock times, or the active flag; audited with before and after. */
export async function updateMaster(
  kind: MasterKind,
  id: number,
  change: { fields?: Record<string, unknown>; active?: boolean },
  actor: Actor,
): Promise<void> {
  const fields = change.fields ? (MasterUpdateSchemas[kind].parse(change.fields) as Record<string, unknown>) : {};
  const data: Record<string, unknown> = { ...fields };
  if (change.active !== undefined) data.active = change.active;
  await writeTransaction(async (tx) => {
    const before = (await findRow(tx, kind, id)) as (Record<string, unknown> & { active: boolean; startTime?: string; endTime?: string }) | null;
    if (!before) throw new MasterDataError(`No ${MASTER_LABELS[kind].one} #${id}.`);
    if (kind === "shift" && change.active === true && before.startTime === before.endTime && !("startTime" in data)) {
      throw new MasterDataError("Set the shift's clock times before activating it.", "startTime");
    }
    let after: Record<string, unknown>;
    if (kind === "line") after = await tx.line.update({ where: { id }, data });
    else if (kind === "shift") {
      after = await tx.shift.update({ where: { id }, data });
      // A retired shift may keep any times; they are checked when it comes back into use.
      await refuseShiftOverlap(tx, after as ShiftClock);
    }
    else if (kind === "category") after = await tx.defectCategory.update({ where: { id }, data });
    else after = await tx.product.update({ where: { id }, data });
    const action = change.active === undefined ? "update" : change.active ? "activate" : "retire";
    await tx.auditEvent.create({
      data: {
        actorId: actor.userId,
        actorName: actor.name,
        action: `${kind}.${action}`,
        entity: entityName(kind),
        entityId: String(id),
        before: JSON.stringify(snapshot(before)),
        after: JSON.stringify(snapshot(after)),
      },
    });
  });
}

export type AuditView = { id: number; at: string; actorName: string; action: string; entity: string; entityId: string | null; before: string | null; after: string | null; reason: string | null };

/** Latest audit events of master data (setup page). */
export async function recentMasterAudit(limit = 30): Promise<AuditView[]> {
  const rows = await db().auditEvent.findMany({
    where: { entity: { in: ["Line", "Shift", "DefectCategory", "Product"] } },
    orderBy: { id: "desc" },
    take: limit,
  });
  return rows.map((r) => ({ id: r.id, at: r.at.toISOString(), actorName: r.actorName, action: r.action, entity: r.entity, entityId: r.entityId, before: r.before, after: r.after, reason: r.reason }));
}

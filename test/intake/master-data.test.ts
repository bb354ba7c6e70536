import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { rawDb } from "@/lib/db/client";
import { MasterDataError, createMaster, listMaster, updateMaster } from "@/lib/db/master-data";
import { importCsv } from "@/lib/intake/import";
import { POST } from "@/app/api/v1/tallies/route";
import { useTempDatabase } from "../helpers/temp-db";
import { cellTotal, seedPlant, system, type Plant } from "./fixture";

let ctx: Awaited<ReturnType<typeof useTempDatabase>>;
let plant: Plant;
beforeAll(async () => {
  ctx = await useTempDatabase();
  plant = await seedPlant();
});
afterAll(async () => ctx.cleanup());

const audits = (action: string) => rawDb().prepare("SELECT actorName, entityId, before, after FROM AuditEvent WHERE action = ? ORDER BY id").all(action) as Record<string, string>[];

describe("master data setup", () => {
  it("creates a line, a shift with clock times, a category and a product, each audited", async () => {
    const admin = plant.users.admin;
    const line = await createMaster("line", { code: "L3", name: "Line three", displayOrder: "3" }, admin);
    // The fixture's shifts A, B and N cover the whole day: retire N and add its successor.
    await updateMaster("shift", plant.shifts.N, { active: false }, admin);
    await createMaster("shift", { code: "W", name: "Night (new)", startTime: "22:00", endTime: "06:00" }, admin);
    await createMaster("category", { code: "bubble", name: "Bubble", family: "surface", displayOrder: 5 }, admin);
    await createMaster("product", { code: "PY", name: "Product Y" }, admin);
    expect(audits("line.create")).toEqual([expect.objectContaining({ actorName: "adm (test)", entityId: String(line) })]);
    expect(JSON.parse(audits("line.create")[0].after)).toMatchObject({ code: "L3", name: "Line three", displayOrder: 3 });
    for (const a of ["shift.create", "category.create", "product.create"]) expect(audits(a)).toHaveLength(1);
  });

  it("refuses a taken code, a code outside the pattern and impossible clock times", async () => {
    await expect(createMaster("line", { code: "L1", name: "dup" }, plant.users.admin)).rejects.toBeInstanceOf(MasterDataError);
    await expect(createMaster("line", { code: "bad code", name: "x" }, plant.users.admin)).rejects.toThrow();
    await expect(createMaster("shift", { code: "Q", name: "x", startTime: "24:00", endTime: "08:00" }, plant.users.admin)).rejects.toThrow();
    await expect(createMaster("shift", { code: "Q", name: "x", startTime: "08:00", endTime: "08:00" }, plant.users.admin)).rejects.toThrow();
  });

  it("updates with before and after in the audit", async () => {
    await updateMaster("shift", plant.shifts.B, { fields: { name: "Late", startTime: "14:00", endTime: "21:30", displayOrder: 1 } }, plant.users.admin);
    const [event] = audits("shift.update");
    expect(JSON.parse(event.before)).toMatchObject({ endTime: "22:00" });
    expect(JSON.parse(event.after)).toMatchObject({ endTime: "21:30", name: "Late" });
  });

  it("retiring a category keeps its history, stops new API counts, and still allows importing history", async () => {
    const imported = await importCsv(Buffer.from("date,shift,line,category,count\n2026-03-02,A,L1,crack,5\n"), { actor: system });
    expect(imported.status).toBe("imported");
    await updateMaster("category", plant.categories.crack, { active: false }, plant.users.admin);
    expect(audits("category.retire")).toHaveLength(1);
    expect(cellTotal("2026-03-02", "A", "L1", "crack")).toBe(5);
    const rows = await listMaster("category");
    expect(rows.find((r) => r.code === "crack")).toMatchObject({ active: false, entries: 1 });

    const response = await POST(
      new Request("http://plant.example/api/v1/tallies", {
        method: "POST",
        headers: { "content-type": "application/json", authorization: `Bearer ${plant.tokens.write}`, "idempotency-key": "retired-0001" },
        body: JSON.stringify({ rows: [{ date: "2026-03-03", shift: "A", line: "L1", category: "crack", count: 1 }] }),
      }),
    );
    expect(response.status).toBe(400);
    const history = await importCsv(Buffer.from("date,shift,line,category,count\n2026-03-01,A,L1,crack,2\n"), { actor: system });
    expect(history.status).toBe("imported");

    await updateMaster("category", plant.categories.crack, { active: true }, plant.users.admin);
    expect(audits("category.activate")).toHaveLength(1);
  });

  it("will not activate a shift created by an import until its clock times are set", async () => {
    await importCsv(Buffer.from("date,shift,line,category,count\n2026-03-02,S9,L1,dent,1\n"), { actor: system, addMissing: true });
    const id = (rawDb().prepare("SELECT id FROM Shift WHERE code = 'S9'").get() as { id: number }).id;
    await expect(updateMaster("shift", id, { active: true }, plant.users.admin)).rejects.toThrow(/clock times/);
    // Times that overlap an active shift are refused inside the write, and nothing changes.
    await expect(
      updateMaster("shift", id, { fields: { name: "Swing", startTime: "10:00", endTime: "18:00", displayOrder: 9 }, active: true }, plant.users.admin),
    ).rejects.toThrow(/^Shift S9 \(10:00–18:00\) would overlap shift A \(06:00–14:00\) from 10:00 to 14:00\./);
    expect(rawDb().prepare("SELECT active, startTime FROM Shift WHERE id = ?").get(id)).toEqual({ active: 0, startTime: "00:00" });
    await updateMaster("shift", id, { fields: { name: "Changeover", startTime: "21:30", endTime: "22:00", displayOrder: 9 }, active: true }, plant.users.admin);
    expect(rawDb().prepare("SELECT active, startTime FROM Shift WHERE id = ?").get(id)).toEqual({ active: 1, startTime: "21:30" });
  });
});

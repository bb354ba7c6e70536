// The benchmark plant shared by bench:pages and bench:load: 2 years × 12 lines × 25
// categories × 3 shifts of tallies and inspected units, written with bare better-sqlite3
// inserts in one transaction (Prisma's per-row mapping would take minutes), with one
// planted mix change for the scan to find.
import { addDays, localToday } from "../../lib/dates";
import { openSqlite } from "../../lib/db/client";

export const PLANT = { days: 730, lines: 12, shifts: 3, categories: 25 } as const;

/** A plant's size; bench:pages may ask for fewer days or lines (BENCH_DAYS, BENCH_LINES) while trying things out. */
export type PlantSize = { days: number; lines: number; shifts: number; categories: number };

/** Small deterministic generator (mulberry32) in [0, 1). */
export function rng(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** A Poisson draw good enough for counts (normal approximation above a mean of 30). */
export function poisson(u: () => number, mean: number): number {
  if (mean > 30) return Math.max(0, Math.round(mean + Math.sqrt(mean) * Math.sqrt(-2 * Math.log(u() || 1e-12)) * Math.cos(2 * Math.PI * u())));
  const limit = Math.exp(-mean);
  let k = 0;
  let p = u();
  while (p > limit) {
    k++;
    p *= u();
  }
  return k;
}

/**
 * Writes the plant into the (migrated, empty) database at `url`: lines L01…L12, shifts
 * A/B/C, categories K01…K25, and PLANT.days days up to yesterday. Returns the last day
 * and the number of tallies written.
 */
export function buildPlant(url: string, size: PlantSize = PLANT): { firstDay: string; lastDay: string; tallies: number } {
  const { days: DAYS, lines: LINES, shifts: SHIFTS, categories: CATEGORIES } = size;
  const sqlite = openSqlite(url);
  const lastDay = addDays(localToday(), -1);
  const firstDay = addDays(lastDay, -(DAYS - 1));
  const u = rng(20261201);
  let tallies = 0;
  sqlite.transaction(() => {
    const line = sqlite.prepare("INSERT INTO Line (code, name, displayOrder) VALUES (?, ?, ?)");
    const shift = sqlite.prepare("INSERT INTO Shift (code, name, startTime, endTime, displayOrder) VALUES (?, ?, ?, ?, ?)");
    const category = sqlite.prepare("INSERT INTO DefectCategory (code, name, family, displayOrder) VALUES (?, ?, ?, ?)");
    for (let i = 1; i <= LINES; i++) line.run(`L${String(i).padStart(2, "0")}`, `Line ${i}`, i);
    ["A", "B", "C"].forEach((s, i) => shift.run(s, `Shift ${s}`, ["06:00", "14:00", "22:00"][i], ["14:00", "22:00", "06:00"][i], i));
    for (let j = 1; j <= CATEGORIES; j++) category.run(`K${String(j).padStart(2, "0")}`, `Category ${j}`, `family-${j % 5}`, j);
    const ids = (table: string) => (sqlite.prepare(`SELECT id FROM ${table} ORDER BY displayOrder`).all() as { id: number }[]).map((r) => r.id);
    const lineIds = ids("Line");
    const shiftIds = ids("Shift");
    const categoryIds = ids("DefectCategory");
    const weights = categoryIds.map((_, j) => 1 / (j + 2));
    const total = weights.reduce((s, w) => s + w, 0);
    const tally = sqlite.prepare(
      `INSERT INTO TallyEntry (productionDate, shiftId, lineId, categoryId, count, source, enteredByName, idempotencyKey)
       VALUES (?, ?, ?, ?, ?, 'import', 'bench', ?)`,
    );
    const units = sqlite.prepare(
      `INSERT INTO InspectionCount (productionDate, shiftId, lineId, units, source, enteredByName, idempotencyKey)
       VALUES (?, ?, ?, ?, 'import', 'bench', ?)`,
    );
    for (let d = 0; d < DAYS; d++) {
      const date = addDays(firstDay, d);
      const back = DAYS - 1 - d;
      for (let l = 0; l < LINES; l++) {
        for (let s = 0; s < SHIFTS; s++) {
          units.run(date, shiftIds[s], lineIds[l], 8000 + Math.floor(u() * 2000), `b:u:${date}:${l}:${s}`);
          for (let k = 0; k < CATEGORIES; k++) {
            // A planted mix change: line 7, category 5, six times its share for 14 days about a month back.
            const factor = l === 6 && k === 4 && back <= 40 && back > 26 ? 6 : 1;
            const count = poisson(u, (30 * weights[k] * factor) / total);
            tally.run(date, shiftIds[s], lineIds[l], categoryIds[k], count, `b:t:${date}:${l}:${s}:${k}`);
            tallies++;
          }
        }
      }
    }
  })();
  sqlite.close();
  return { firstDay, lastDay, tallies };
}

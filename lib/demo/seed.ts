import { xoroshiro128plus } from "pure-rand/generator/xoroshiro128plus";
import { uniformFloat64 } from "pure-rand/distribution/uniformFloat64";
import type Database from "better-sqlite3";
import { addDays } from "../dates";
import {
  DEMO_CATEGORIES,
  DEMO_DAYS,
  DEMO_LINES,
  DEMO_LINE_PROFILE,
  DEMO_PRODUCTS,
  DEMO_SHIFTS,
  DEMO_STORIES,
} from "./plant";

type Rng = ReturnType<typeof xoroshiro128plus>;

/** Poisson draw: Knuth's product method for small means, normal approximation above 60. */
function poisson(rng: Rng, mean: number): number {
  if (mean <= 0) return 0;
  if (mean > 60) {
    const u1 = Math.max(uniformFloat64(rng), 1e-12);
    const u2 = uniformFloat64(rng);
    const z = Math.sqrt(-2 * Math.log(u1)) * Math.cos(2 * Math.PI * u2);
    return Math.max(0, Math.round(mean + Math.sqrt(mean) * z));
  }
  const limit = Math.exp(-mean);
  let k = 0;
  let p = uniformFloat64(rng);
  while (p > limit) {
    k += 1;
    p *= uniformFloat64(rng);
  }
  return k;
}

function inStory(daysBack: number, story: { startDaysBack: number; lengthDays: number }): boolean {
  return daysBack <= story.startDaysBack && daysBack > story.startDaysBack - story.lengthDays;
}

/** True when the database holds no plant yet (the demo seeds only an empty database). */
export function isEmptyPlant(sqlite: Database.Database): boolean {
  const row = sqlite.prepare("SELECT COUNT(*) AS n FROM Line").get() as { n: number };
  return row.n === 0;
}

/**
 * Seeds the invented demo plant with DEMO_DAYS of daily tallies and inspected units
 * ending on `lastDay`, deterministically from `seed`. Writes through one transaction.
 */
export function seedDemoPlant(sqlite: Database.Database, lastDay: string, seed = 20261201): { tallies: number; days: number } {
  const rng = xoroshiro128plus(seed);
  const totalWeight = DEMO_CATEGORIES.reduce((s, c) => s + c.weight, 0);
  const firstDay = addDays(lastDay, -(DEMO_DAYS - 1));
  let tallies = 0;

  const run = sqlite.transaction(() => {
    const ids = insertMasterData(sqlite);
    const insertTally = sqlite.prepare(
      `INSERT INTO TallyEntry (productionDate, shiftId, lineId, categoryId, productId, count, source, enteredByName, createdAt, idempotencyKey)
       VALUES (?, ?, ?, ?, ?, ?, 'import', 'demo seed', ?, ?)`,
    );
    const insertUnits = sqlite.prepare(
      `INSERT INTO InspectionCount (productionDate, shiftId, lineId, productId, units, source, enteredByName, createdAt, idempotencyKey)
       VALUES (?, ?, ?, ?, ?, 'import', 'demo seed', ?, ?)`,
    );
    for (let d = 0; d < DEMO_DAYS; d += 1) {
      const date = addDays(firstDay, d);
      const daysBack = DEMO_DAYS - 1 - d;
      const stamp = `${date}T23:00:00.000Z`;
      for (const line of DEMO_LINES) {
        const profile = DEMO_LINE_PROFILE[line.code];
        const product = ids.products[(d + line.code.charCodeAt(1)) % ids.products.length];
        for (const shift of DEMO_SHIFTS) {
          const units = Math.round(profile.unitsPerShift * (0.9 + 0.2 * uniformFloat64(rng)));
          insertUnits.run(date, ids.shifts[shift.code], ids.lines[line.code], product, units, stamp, `demo:u:${date}:${line.code}:${shift.code}`);
          const rateFactor =
            line.code === DEMO_STORIES.rate.line && inStory(daysBack, DEMO_STORIES.rate) ? DEMO_STORIES.rate.factor : 1;
          const perUnit = (profile.defectsPerShift / profile.unitsPerShift) * rateFactor;
          for (const category of DEMO_CATEGORIES) {
            const mixFactor =
              line.code === DEMO_STORIES.mix.line &&
              category.code === DEMO_STORIES.mix.category &&
              inStory(daysBack, DEMO_STORIES.mix)
                ? DEMO_STORIES.mix.factor
                : 1;
            const mean = units * perUnit * (category.weight / totalWeight) * mixFactor;
            const count = poisson(rng, mean);
            insertTally.run(
              date, ids.shifts[shift.code], ids.lines[line.code], ids.categories[category.code], product, count, stamp,
              `demo:t:${date}:${line.code}:${shift.code}:${category.code}`,
            );
            tallies += 1;
          }
        }
      }
    }
  });
  run();
  return { tallies, days: DEMO_DAYS };
}

function insertMasterData(sqlite: Database.Database) {
  const lines: Record<string, number> = {};
  const shifts: Record<string, number> = {};
  const categories: Record<string, number> = {};
  const products: number[] = [];
  DEMO_LINES.forEach((l, i) => {
    lines[l.code] = Number(sqlite.prepare("INSERT INTO Line (code, name, displayOrder) VALUES (?, ?, ?)").run(l.code, l.name, i).lastInsertRowid);
  });
  DEMO_SHIFTS.forEach((s, i) => {
    shifts[s.code] = Number(
      sqlite.prepare("INSERT INTO Shift (code, name, startTime, endTime, displayOrder) VALUES (?, ?, ?, ?, ?)").run(s.code, s.name, s.startTime, s.endTime, i).lastInsertRowid,
    );
  });
  DEMO_CATEGORIES.forEach((c, i) => {
    categories[c.code] = Number(
      sqlite.prepare("INSERT INTO DefectCategory (code, name, family, displayOrder) VALUES (?, ?, ?, ?)").run(c.code, c.name, c.family, i).lastInsertRowid,
    );
  });
  for (const p of DEMO_PRODUCTS) {
    products.push(Number(sqlite.prepare("INSERT INTO Product (code, name) VALUES (?, ?)").run(p.code, p.name).lastInsertRowid));
  }
  sqlite
    .prepare("INSERT INTO AuditEvent (actorName, action, entity, after) VALUES ('demo seed', 'plant.seed', 'Plant', ?)")
    .run(JSON.stringify({ lines: DEMO_LINES.length, shifts: DEMO_SHIFTS.length, categories: DEMO_CATEGORIES.length }));
  return { lines, shifts, categories, products };
}

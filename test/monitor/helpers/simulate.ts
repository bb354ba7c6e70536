/**
 * A seeded plant simulator for the scenario tests and the benchmark (pure-rand, so a
 * seed always gives the same history). Each (day, line, shift, category) count is
 * Poisson with mean units · defectsPerUnit · share(category), so with no planted change
 * the lines share one mix exactly and the homogeneity null holds.
 */
import { xoroshiro128plus } from "pure-rand/generator/xoroshiro128plus";
import type { RandomGenerator } from "pure-rand/types/RandomGenerator";
import { addDays } from "@/lib/monitor/dates";
import type { TallyRow, UnitsRow } from "@/lib/monitor";

export interface Change {
  /** Which rows: a line, a shift, or both. */
  line?: string;
  shift?: string;
  /** Only this category (a mix change); omitted = every category (a rate change). */
  category?: string;
  from: string;
  /** Inclusive. */
  to: string;
  factor: number;
}

export interface PlantSpec {
  start: string;
  days: number;
  lines: string[];
  shifts: string[];
  categories: string[];
  /** Relative share of each category (same length as categories). */
  weights: number[];
  unitsPerShift: number;
  defectsPerUnit: number;
  changes?: Change[];
  /** Emit rows with a zero count too (default: only positive counts, like a sparse import). */
  zeros?: boolean;
}

function uniform(rng: RandomGenerator): number {
  return (rng.next() >>> 0) / 4294967296 + (rng.next() >>> 0) / 18446744073709551616;
}

/** Poisson variate: Knuth's product method, split into pieces of mean ≤ 20 so exp(−λ) never underflows. */
export function poisson(rng: RandomGenerator, mean: number): number {
  let total = 0;
  let left = mean;
  while (left > 0) {
    const piece = Math.min(left, 20);
    left -= piece;
    const limit = Math.exp(-piece);
    let k = 0;
    let p = uniform(rng);
    while (p > limit) {
      k++;
      p *= uniform(rng);
    }
    total += k;
  }
  return total;
}

function factorFor(changes: Change[], date: string, line: string, shift: string, category: string): number {
  let f = 1;
  for (const c of changes) {
    if (date < c.from || date > c.to) continue;
    if (c.line !== undefined && c.line !== line) continue;
    if (c.shift !== undefined && c.shift !== shift) continue;
    if (c.category !== undefined && c.category !== category) continue;
    f *= c.factor;
  }
  return f;
}

/** Simulates tallies and inspected units for a plant. */
export function simulatePlant(spec: PlantSpec, seed: number): { tallies: TallyRow[]; units: UnitsRow[] } {
  const rng = xoroshiro128plus(seed);
  const total = spec.weights.reduce((a, b) => a + b, 0);
  const shares = spec.weights.map((w) => w / total);
  const changes = spec.changes ?? [];
  const tallies: TallyRow[] = [];
  const units: UnitsRow[] = [];
  for (let d = 0; d < spec.days; d++) {
    const date = addDays(spec.start, d);
    for (const line of spec.lines) {
      for (const shift of spec.shifts) {
        const u = spec.unitsPerShift;
        units.push({ date, line, shift, units: u });
        spec.categories.forEach((category, j) => {
          const mean = u * spec.defectsPerUnit * shares[j] * factorFor(changes, date, line, shift, category);
          const count = poisson(rng, mean);
          if (count > 0 || spec.zeros) tallies.push({ date, line, shift, category, count });
        });
      }
    }
  }
  return { tallies, units };
}

/** n codes with a prefix: codes("L", 3) → ["L01", "L02", "L03"]. */
export function codes(prefix: string, n: number): string[] {
  return Array.from({ length: n }, (_, i) => `${prefix}${String(i + 1).padStart(2, "0")}`);
}

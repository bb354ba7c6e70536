import { checkExpectedCounts, type ExpectedCountCheck } from "./expected-count-check";
import { validateTable } from "./validate-table";

/** Which expected-count rule pooling must reach (see checkExpectedCounts). */
export type ExpectedCountRule = "cochran" | "all5";

/** Options of {@link poolSparseCategories}. */
export interface PoolOptions {
  /** One label per column, unique. */
  columnLabels: readonly string[];
  /** Optional label → family name; members of a family are merged with each other first. */
  families?: Readonly<Record<string, string>>;
  /** "cochran": none below 1, at most 20% below 5; "all5": every expected count ≥ 5. */
  rule: ExpectedCountRule;
  /** Label of the column the smallest categories are pooled into (default "Other (pooled)"). */
  pooledLabel?: string;
}

/** One column of the pooled table. */
export interface PooledColumn {
  label: string;
  /** Original labels combined into it, in their original order. */
  sources: string[];
  /** "original": untouched; "family": members of one family; "pooled": the catch-all column. */
  kind: "original" | "family" | "pooled";
}

/** One merge, in the order applied. */
export interface PoolStep {
  /** Labels of the two columns merged (as they were at that point). */
  merged: [string, string];
  /** Label of the resulting column. */
  into: string;
  reason: "family" | "smallest";
}

/** Result of {@link poolSparseCategories}. */
export interface PoolResult {
  /** The pooled table, rows as given, columns as in `labels`. */
  observed: number[][];
  labels: string[];
  columns: PooledColumn[];
  /** Original label → label of the column it ended up in. */
  mapping: Record<string, string>;
  steps: PoolStep[];
  rule: ExpectedCountRule;
  /** Whether the rule holds for the pooled table (false when 2 columns were reached first). */
  ruleSatisfied: boolean;
  expectedCountCheck: ExpectedCountCheck;
}

interface Group {
  label: string;
  sources: number[]; // original column indices
  counts: number[]; // per row
  total: number;
  family: string | null;
  kind: PooledColumn["kind"];
}

function checkLabels(options: PoolOptions, columns: number): string {
  const { columnLabels, families } = options;
  if (!Array.isArray(columnLabels) || columnLabels.length !== columns) {
    throw new RangeError(`columnLabels must give one label per column (${columns}), got ${columnLabels?.length}`);
  }
  const seen = new Set<string>();
  for (const label of columnLabels) {
    if (typeof label !== "string" || label === "") throw new RangeError("column labels must be non-empty strings");
    if (seen.has(label)) throw new RangeError(`column label "${label}" appears twice`);
    seen.add(label);
  }
  if (options.rule !== "cochran" && options.rule !== "all5") {
    throw new RangeError(`rule must be "cochran" or "all5" (got "${String(options.rule)}")`);
  }
  for (const [label, family] of Object.entries(families ?? {})) {
    if (!seen.has(label)) throw new RangeError(`families names "${label}", which is not a column label`);
    // A family column is labelled by the family; it must not clash with a category outside it.
    if (seen.has(family) && families?.[family] !== family) {
      throw new RangeError(`family "${family}" has the same name as a category outside it`);
    }
  }
  const pooledLabel = options.pooledLabel ?? "Other (pooled)";
  const familyNames = new Set(Object.values(families ?? {}));
  if (seen.has(pooledLabel) || familyNames.has(pooledLabel)) {
    throw new RangeError(`the pooled column's label "${pooledLabel}" is already used; pass another pooledLabel`);
  }
  return pooledLabel;
}

// Index of the group with the smallest total among those passing `accept` (first on ties).
function smallest(groups: Group[], accept: (g: Group) => boolean): number {
  let best = -1;
  groups.forEach((g, k) => {
    if (accept(g) && (best < 0 || g.total < groups[best].total)) best = k;
  });
  return best;
}

function merge(a: Group, b: Group, label: string, kind: Group["kind"], family: string | null): Group {
  return {
    label,
    sources: [...a.sources, ...b.sources].sort((x, y) => x - y),
    counts: a.counts.map((c, i) => c + b.counts[i]),
    total: a.total + b.total,
    family,
    kind,
  };
}

// Merge two members of one family; the result sits where the earlier one was.
function familyMerge(groups: Group[]): PoolStep | null {
  const hasPartner = (g: Group) => g.family !== null && groups.some((h) => h !== g && h.family === g.family);
  const s = smallest(groups, hasPartner);
  if (s < 0) return null;
  const first = groups[s];
  const t = smallest(groups, (g) => g !== first && g.family === first.family);
  const second = groups[t];
  const family = first.family as string;
  const merged = merge(first, second, family, "family", family);
  const at = Math.min(s, t);
  groups.splice(Math.max(s, t), 1);
  groups[at] = merged;
  return { merged: [first.label, second.label], into: family, reason: "family" };
}

// Fold the smallest column into the pooled column (creating it from the two smallest); it sits last.
function smallestMerge(groups: Group[], pooledLabel: string): PoolStep {
  const pooled = groups.findIndex((g) => g.kind === "pooled");
  const s = smallest(groups, (g) => g.kind !== "pooled");
  let partner = pooled;
  if (pooled < 0) partner = smallest(groups, (g) => g !== groups[s]);
  const a = groups[s];
  const b = groups[partner];
  const merged = merge(a, b, pooledLabel, "pooled", null);
  for (const k of [s, partner].sort((x, y) => y - x)) groups.splice(k, 1);
  groups.push(merged);
  return { merged: [a.label, b.label], into: pooledLabel, reason: "smallest" };
}

/**
 * Pool sparse categories until the chosen expected-count rule holds.
 *
 * Method: while the rule fails (Cochran's — no expected count below 1, at most
 * 20% below 5, Cochran 1954 — or every expected count ≥ 5, the common rule of
 * thumb) and more than two columns remain: first, if a family mapping is
 * given, the smallest category that has a family partner is merged with the
 * smallest member of its family, the result named after the family; once no
 * family has two columns left, the smallest column is folded into a single
 * pooled column (created from the two smallest). Pooling adjacent-in-meaning
 * categories first keeps the test about defect types people recognise
 * (Agresti 2007, §2.4.6 on combining categories). Rows are untouched.
 * The result says exactly what was combined: `columns[k].sources`, the
 * label-to-label `mapping`, and the ordered `steps`.
 *
 * Throws a RangeError for an invalid table (see validateTable — all-zero
 * columns must be dropped first), labels that are missing, empty or
 * repeated, an unknown rule, and names that would clash.
 *
 * Cost: O(c) merges, each O(r·c) to re-check the rule.
 *
 * @example
 * poolSparseCategories([[20, 30, 12, 9, 1, 2], [25, 28, 15, 11, 0, 3]], { columnLabels: ["A", "B", "C", "D", "E", "F"], rule: "cochran" }).labels; // ["A","B","C","D","Other (pooled)"]
 */
export function poolSparseCategories(observed: readonly (readonly number[])[], options: PoolOptions): PoolResult {
  const { rows, columns, rowTotals, columnTotals } = validateTable(observed);
  const pooledLabel = checkLabels(options, columns);
  const labels = options.columnLabels;
  const groups: Group[] = labels.map((label, j) => ({
    label,
    sources: [j],
    counts: observed.map((row) => row[j]),
    total: columnTotals[j],
    family: options.families?.[label] ?? null,
    kind: "original",
  }));
  const holds = (check: ExpectedCountCheck) => (options.rule === "cochran" ? check.cochran : check.allAtLeast5);
  const steps: PoolStep[] = [];
  let check = checkExpectedCounts(rowTotals, groups.map((g) => g.total));
  while (!holds(check) && groups.length > 2) {
    steps.push(familyMerge(groups) ?? smallestMerge(groups, pooledLabel));
    check = checkExpectedCounts(rowTotals, groups.map((g) => g.total));
  }
  const mapping: Record<string, string> = {};
  for (const g of groups) for (const j of g.sources) mapping[labels[j]] = g.label;
  return {
    observed: Array.from({ length: rows }, (_, i) => groups.map((g) => g.counts[i])),
    labels: groups.map((g) => g.label),
    columns: groups.map((g) => ({ label: g.label, sources: g.sources.map((j) => labels[j]), kind: g.kind })),
    mapping,
    steps,
    rule: options.rule,
    ruleSatisfied: holds(check),
    expectedCountCheck: check,
  };
}

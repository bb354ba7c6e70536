import { describe, expect, it } from "vitest";
import { checkExpectedCounts, poolSparseCategories } from "@/lib/stats";

const LINES = [
  [40, 31, 22, 3, 1, 2, 0],
  [38, 35, 25, 1, 2, 0, 1],
  [45, 28, 20, 2, 0, 1, 2],
];
const LABELS = ["Scratch", "Dent", "Paint run", "Burr", "Crack", "Porosity", "Inclusion"];
const columnTotal = (label: string) => LINES.reduce((s, row) => s + row[LABELS.indexOf(label)], 0);

describe("poolSparseCategories", () => {
  it("pools the smallest categories into one column until Cochran's rule holds", () => {
    const result = poolSparseCategories(LINES, { columnLabels: LABELS, rule: "cochran" });
    expect(result.ruleSatisfied).toBe(true);
    expect(result.expectedCountCheck.cochran).toBe(true);
    expect(result.labels).toEqual(["Scratch", "Dent", "Paint run", "Other (pooled)"]);
    expect(result.columns[3]).toEqual({
      label: "Other (pooled)",
      sources: ["Burr", "Crack", "Porosity", "Inclusion"],
      kind: "pooled",
    });
    expect(result.mapping).toEqual({
      Scratch: "Scratch",
      Dent: "Dent",
      "Paint run": "Paint run",
      Burr: "Other (pooled)",
      Crack: "Other (pooled)",
      Porosity: "Other (pooled)",
      Inclusion: "Other (pooled)",
    });
    // Rows are untouched; pooled counts are sums.
    expect(result.observed).toEqual([
      [40, 31, 22, 6],
      [38, 35, 25, 4],
      [45, 28, 20, 5],
    ]);
    expect(result.steps.every((s) => s.reason === "smallest")).toBe(true);
    expect(result.steps).toHaveLength(3);
  });

  it("stops as soon as the rule holds: one merge fewer still fails it", () => {
    const result = poolSparseCategories(LINES, { columnLabels: LABELS, rule: "cochran" });
    const rowTotals = LINES.map((r) => r.reduce((a, b) => a + b, 0));
    // Undo the last merge: the pooled column without its last member, and that member alone.
    const last = result.steps[result.steps.length - 1];
    const beforeLast = result.columns.flatMap((c) =>
      c.kind === "pooled" ? [] : [c.sources.reduce((s, label) => s + columnTotal(label), 0)],
    );
    const pooledSources = result.columns.find((c) => c.kind === "pooled")!.sources;
    const lastMerged = last.merged.find((label) => label !== "Other (pooled)")!;
    beforeLast.push(pooledSources.filter((l) => l !== lastMerged).reduce((s, l) => s + columnTotal(l), 0));
    beforeLast.push(columnTotal(lastMerged));
    expect(checkExpectedCounts(rowTotals, beforeLast).cochran).toBe(false);
    expect(result.expectedCountCheck.cochran).toBe(true);
  });

  it("merges within a family first, then the smallest", () => {
    const result = poolSparseCategories(LINES, {
      columnLabels: LABELS,
      rule: "all5",
      families: { Burr: "Machining", Crack: "Casting", Porosity: "Casting", Inclusion: "Casting" },
    });
    // Crack (3) and Porosity (3) are the smallest with a family partner, then Inclusion joins.
    expect(result.steps[0]).toEqual({ merged: ["Crack", "Porosity"], into: "Casting", reason: "family" });
    expect(result.steps[1]).toEqual({ merged: ["Inclusion", "Casting"], into: "Casting", reason: "family" });
    // Machining has one member only, so pooling by size takes over.
    expect(result.steps.slice(2).every((step) => step.reason === "smallest")).toBe(true);
    expect(result.steps[2].merged).toEqual(["Burr", "Casting"]);
    expect(result.mapping.Crack).toBe(result.mapping.Inclusion);
    expect(result.mapping.Crack).toBe(result.mapping.Porosity);
    expect(result.ruleSatisfied).toBe(result.expectedCountCheck.allAtLeast5);
    expect(result.ruleSatisfied).toBe(true);
  });

  it("stops at 2 columns and says the rule is not met", () => {
    const result = poolSparseCategories(
      [
        [1, 1, 1],
        [1, 0, 1],
      ],
      { columnLabels: ["a", "b", "c"], rule: "all5" },
    );
    expect(result.labels).toHaveLength(2);
    expect(result.ruleSatisfied).toBe(false);
  });

  it("leaves a table that already meets the rule alone", () => {
    const result = poolSparseCategories(
      [
        [20, 30],
        [25, 28],
      ],
      { columnLabels: ["a", "b"], rule: "all5" },
    );
    expect(result.steps).toEqual([]);
    expect(result.labels).toEqual(["a", "b"]);
  });

  it("rejects bad labels, rules and clashes", () => {
    const table = [
      [5, 6],
      [7, 8],
    ];
    expect(() => poolSparseCategories(table, { columnLabels: ["a"], rule: "cochran" })).toThrow(/one label per column/);
    expect(() => poolSparseCategories(table, { columnLabels: ["a", "a"], rule: "cochran" })).toThrow(/appears twice/);
    expect(() => poolSparseCategories(table, { columnLabels: ["a", "b"], rule: "other" as "all5" })).toThrow(/rule must be/);
    expect(() =>
      poolSparseCategories(table, { columnLabels: ["a", "Other (pooled)"], rule: "cochran" }),
    ).toThrow(/already used/);
    expect(() =>
      poolSparseCategories(table, { columnLabels: ["a", "b"], rule: "cochran", families: { a: "b" } }),
    ).toThrow(/same name as a category/);
    expect(() => poolSparseCategories([[1, 0], [2, 0]], { columnLabels: ["a", "b"], rule: "cochran" })).toThrow(
      /column 2 is all zeros/,
    );
  });
});

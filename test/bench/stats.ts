/**
 * Benchmark of the statistics engine: `npm run bench:stats`.
 *
 * Prints the median of each measurement beside its target. Not a test: the
 * numbers depend on the machine and on whatever else it is running, so the
 * spread (p10–p90 of the batches) and the CPU time of the process are shown
 * too. Each Monte Carlo line names the sampler monteCarloPValue chose for the
 * table, and the next line times the other sampler on it, forced, for
 * comparison; when the permutation sampler was chosen, one more line times
 * it with its JavaScript loops instead of the WebAssembly kernel. If R is
 * installed, R's chisq.test(simulate.p.value = TRUE, B = 10000) is timed on
 * the same table as well.
 */
import { spawnSync } from "node:child_process";
import { analyzeTable, exactPValue, monteCarloPValue } from "@/lib/stats";
import { chooseTableSampler, monteCarloPValueBy, type TableSamplerMethod } from "@/lib/stats/monte-carlo";
import { useShuffleKernel } from "@/lib/stats/permutation-sampler";

interface Summary {
  median: number;
  p10: number;
  p90: number;
}

function summarize(samples: number[]): Summary {
  const sorted = samples.slice().sort((a, b) => a - b);
  const at = (q: number) => sorted[Math.min(sorted.length - 1, Math.floor(q * sorted.length))];
  return { median: at(0.5), p10: at(0.1), p90: at(0.9) };
}

// Deterministic 32-bit LCG for building the benchmark tables (not for statistics).
function lcg(seed: number): () => number {
  let s = seed >>> 0;
  return () => {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    return s / 2 ** 32;
  };
}

/**
 * A 20-line × 40-category table with n ≈ 5,000: line volumes vary ×3 and the
 * category totals follow a Pareto-like 1/rank law, as defect mixes do; each
 * line's counts are drawn from the common mix (no real difference).
 */
function defectTable(rows: number, columns: number, n: number, seed: number, flat: boolean): number[][] {
  const random = lcg(seed);
  const lineWeights = Array.from({ length: rows }, (_, i) => 1 + (2 * i) / (rows - 1));
  const categoryWeights = Array.from({ length: columns }, (_, j) => (flat ? 1 : 1 / (j + 1)));
  const lineTotal = lineWeights.reduce((a, b) => a + b, 0);
  const categoryTotal = categoryWeights.reduce((a, b) => a + b, 0);
  const table = Array.from({ length: rows }, () => new Array<number>(columns).fill(0));
  for (let k = 0; k < n; k++) {
    let u = random() * lineTotal;
    let i = 0;
    while (i < rows - 1 && u > lineWeights[i]) u -= lineWeights[i++];
    let v = random() * categoryTotal;
    let j = 0;
    while (j < columns - 1 && v > categoryWeights[j]) v -= categoryWeights[j++];
    table[i][j]++;
  }
  // Every line and category must have a defect (the engine rejects empty ones).
  for (let i = 0; i < rows; i++) table[i][i % columns] += table[i].some((x) => x > 0) ? 0 : 1;
  for (let j = 0; j < columns; j++) if (table.every((row) => row[j] === 0)) table[j % rows][j]++;
  return table;
}

function total(table: number[][]): number {
  return table.reduce((s, row) => s + row.reduce((a, b) => a + b, 0), 0);
}

/** Per-call microseconds: median over batches of `perBatch` calls, and the process's CPU time per call over all of them. */
function benchAnalyze(table: number[][]): Summary & { cpuPerCall: number } {
  const perBatch = 200;
  const batches = 400;
  for (let k = 0; k < 20_000; k++) analyzeTable(table); // warm-up: JIT and tables
  const samples: number[] = [];
  const c0 = process.cpuUsage();
  for (let b = 0; b < batches; b++) {
    const t0 = performance.now();
    for (let k = 0; k < perBatch; k++) analyzeTable(table);
    samples.push(((performance.now() - t0) * 1000) / perBatch);
  }
  const c = process.cpuUsage(c0);
  return { ...summarize(samples), cpuPerCall: (c.user + c.system) / (batches * perBatch) };
}

/** monteCarloPValue as callers get it, or with one sampler forced (for comparison). */
function benchMonteCarlo(table: number[][], runs: number, method?: TableSamplerMethod): { wall: Summary; cpu: Summary; pValue: number } {
  const run = (options: { replicates: number; seed: number }) =>
    method === undefined ? monteCarloPValue(table, options) : monteCarloPValueBy(table, options, method);
  run({ replicates: 2000, seed: 99 }); // warm-up
  const wall: number[] = [];
  const cpu: number[] = [];
  let pValue = Number.NaN;
  for (let r = 0; r < runs; r++) {
    const c0 = process.cpuUsage();
    const t0 = performance.now();
    pValue = run({ replicates: 10_000, seed: r + 1 }).pValue;
    wall.push(performance.now() - t0);
    const c = process.cpuUsage(c0);
    cpu.push((c.user + c.system) / 1000);
  }
  return { wall: summarize(wall), cpu: summarize(cpu), pValue };
}

function benchExact(table: number[][]): Summary {
  for (let k = 0; k < 50; k++) exactPValue(table); // warm-up
  const samples: number[] = [];
  for (let k = 0; k < 200; k++) {
    const t0 = performance.now();
    exactPValue(table);
    samples.push(performance.now() - t0);
  }
  return summarize(samples);
}

function timeR(table: number[][]): string {
  const values = table.flat().join(",");
  const script = `x <- matrix(c(${values}), nrow = ${table.length}, byrow = TRUE); set.seed(1); invisible(chisq.test(x, simulate.p.value = TRUE, B = 10)); t <- system.time(chisq.test(x, simulate.p.value = TRUE, B = 10000)); cat(sprintf("%.0f", 1000 * t[["elapsed"]]))`;
  const run = spawnSync("Rscript", ["-e", script], { encoding: "utf8", timeout: 60_000 });
  if (run.error !== undefined || run.status !== 0) return "R not available";
  return `${run.stdout.trim()} ms (R ${spawnSync("Rscript", ["-e", "cat(R.version$major, R.version$minor, sep='.')"], { encoding: "utf8" }).stdout.trim()}, one run)`;
}

const fmt = (x: number, digits = 1) => x.toFixed(digits);
function line(name: string, unit: string, s: Summary, target: number, note = ""): string {
  const verdict = s.median <= target ? "within target" : "OVER target";
  return `${name.padEnd(58)} median ${fmt(s.median).padStart(7)} ${unit}  (p10 ${fmt(s.p10)}, p90 ${fmt(s.p90)})  target ≤ ${target} ${unit}: ${verdict}${note}`;
}

const pareto = defectTable(20, 40, 5000, 7, false);
const flat = defectTable(20, 40, 5000, 11, true);
const small = [
  [3, 5, 2, 4],
  [6, 2, 4, 1],
  [2, 4, 3, 4],
];

console.log(`Node ${process.version}; each line: median and p10–p90 over batches or runs.`);
const analyze = benchAnalyze(pareto);
console.log(line(`analyzeTable, 20×40 (n = ${total(pareto)}), per call`, "µs", analyze, 15, `; CPU ${fmt(analyze.cpuPerCall)} µs per call`));
for (const [label, table] of [
  ["Pareto categories", pareto],
  ["flat categories", flat],
] as const) {
  const mc = benchMonteCarlo(table, 7);
  const rows = table.map((row) => row.reduce((a, b) => a + b, 0));
  const columns = table[0].map((_, j) => table.reduce((a, row) => a + row[j], 0));
  const chosen = chooseTableSampler(rows, columns);
  console.log(line(`monteCarloPValue 10,000 replicates, 20×40 ${label} (n = ${total(table)})`, "ms", mc.wall, 150, `; CPU median ${fmt(mc.cpu.median)} ms; ${chosen} sampler`));
  const other = benchMonteCarlo(table, 3, chosen === "permutation" ? "patefield" : "permutation");
  console.log(`${"".padEnd(58)} the same with the ${chosen === "permutation" ? "Patefield" : "permutation"} sampler forced: median ${fmt(other.wall.median)} ms, CPU median ${fmt(other.cpu.median)} ms (3 runs)`);
  if (chosen === "permutation" && useShuffleKernel(false) === false) {
    const plain = benchMonteCarlo(table, 3);
    useShuffleKernel(true);
    console.log(`${"".padEnd(58)} the same with the JavaScript loops instead of the WebAssembly kernel: median ${fmt(plain.wall.median)} ms, CPU median ${fmt(plain.cpu.median)} ms (3 runs)`);
  }
  console.log(`${"".padEnd(58)} R chisq.test(simulate.p.value = TRUE, B = 10000) on the same table: ${timeR(table)}`);
}
console.log(line(`exactPValue, 3×4 (n = ${total(small)})`, "ms", benchExact(small), 5, "", ));

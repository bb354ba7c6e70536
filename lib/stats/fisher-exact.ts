import { logFactorialTable } from "./log-factorial";
import { validateTable } from "./validate-table";

/**
 * Default bound on enumeration steps for {@link exactPValue}: 2×c and 3×c tables
 * with n ≈ 100 need up to ~12 million; a run that hits the bound has spent
 * roughly 1–5 s (2.6 GHz core).
 */
export const EXACT_DEFAULT_MAX_STEPS = 20_000_000;

/** Options of {@link exactPValue} and {@link exactIsFeasible}. */
export interface ExactOptions {
  /** Bound on enumeration steps before giving up with a RangeError (default 20,000,000). */
  maxSteps?: number;
}

/** Verdict of {@link exactIsFeasible}. */
export interface ExactFeasibility {
  /** True when the work bound is within the step budget. */
  feasible: boolean;
  /** Plain-language reason, for logs and the UI. */
  reason: string;
  /** Estimated enumeration steps (an empirical overestimate, see exactIsFeasible). */
  estimatedSteps: number;
  /** Step budget compared against. */
  maxSteps: number;
}

// Relative tolerance on "probability at most the observed one", as R's fisher.test.
const RELATIVE_TOLERANCE = 1e-7;

interface Problem {
  /** Row totals of the (possibly transposed) table, rows being the shorter side. */
  rowTotals: number[];
  /** Column totals in processing order. */
  columnTotals: number[];
  /** ln W of the observed table, W = Π_j C_j! / Π_ij x_ij!. */
  logObservedWeight: number;
  n: number;
}

function toProblem(observed: readonly (readonly number[])[]): Problem {
  const { rows, columns, n, rowTotals, columnTotals } = validateTable(observed);
  const transpose = rows > columns;
  const lf = logFactorialTable(n);
  let logObservedWeight = 0;
  for (const c of columnTotals) logObservedWeight += lf[c];
  for (const row of observed) for (const x of row) logObservedWeight -= lf[x];
  // The probability is symmetric in rows and columns; keeping the shorter side as
  // "rows" keeps the state (remaining row totals) short. Small columns first:
  // the large ones, with the most ways to fill, come last, where completions
  // are listed and partial tables settled by binary search (measured ~1.5–5×
  // faster than largest first on 2×c and 3×c tables).
  const keys = transpose ? columnTotals : rowTotals;
  const steps = (transpose ? rowTotals : columnTotals).slice().sort((a, b) => a - b);
  logObservedWeight += transpose ? sumLogFactorials(rowTotals, lf) - sumLogFactorials(columnTotals, lf) : 0;
  return { rowTotals: keys.slice(), columnTotals: steps, logObservedWeight, n };
}

function sumLogFactorials(values: readonly number[], lf: Float64Array): number {
  let s = 0;
  for (const v of values) s += lf[v];
  return s;
}

class StepBudget {
  used = 0;
  constructor(readonly limit: number) {}
  spend(k: number): void {
    this.used += k;
    if (this.used > this.limit) {
      throw new RangeError(
        `exact test stopped: the table needs more than ${this.limit.toLocaleString("en-US")} enumeration steps; use monteCarloPValue instead`,
      );
    }
  }
}

/**
 * Calls visit(x) for every way x (x_i ≤ caps_i, Σ x_i = total) to fill one
 * column. `x` is reused between calls.
 */
function forEachAllocation(caps: Int32Array, total: number, visit: (x: Int32Array) => void): void {
  const r = caps.length;
  const x = new Int32Array(r);
  const suffix = new Int32Array(r + 1); // suffix[i] = Σ_{k≥i} caps_k
  for (let i = r - 1; i >= 0; i--) suffix[i] = suffix[i + 1] + caps[i];
  if (total > suffix[0]) return;
  const place = (i: number, left: number): void => {
    if (i === r - 1) {
      x[i] = left;
      visit(x);
      return;
    }
    const lo = Math.max(0, left - suffix[i + 1]);
    const hi = Math.min(caps[i], left);
    for (let v = lo; v <= hi; v++) {
      x[i] = v;
      place(i + 1, left - v);
    }
  };
  place(0, total);
}

/**
 * States are sorted vectors of remaining row totals; sorting merges states that
 * differ only by a permutation of rows, whose futures are identical. A state is
 * named by a number (base maxTotal + 1 digits) when that fits in 2⁵³.
 */
class StateCodec {
  private readonly base: number;
  private readonly numeric: boolean;
  private readonly scratch: Int32Array;
  constructor(rows: number, maxTotal: number) {
    this.base = maxTotal + 1;
    this.numeric = Math.pow(this.base, rows) < Number.MAX_SAFE_INTEGER;
    this.scratch = new Int32Array(rows);
  }

  /** Sorts remaining − x into the scratch buffer and returns its code. */
  child(remaining: Int32Array, x: Int32Array): number | string {
    const s = this.scratch;
    for (let i = 0; i < s.length; i++) {
      const v = remaining[i] - x[i];
      let j = i;
      while (j > 0 && s[j - 1] > v) {
        s[j] = s[j - 1];
        j--;
      }
      s[j] = v;
    }
    return this.code(s);
  }

  /** The state last sorted by child(), as a new array. */
  lastState(): Int32Array {
    return this.scratch.slice();
  }

  code(state: Int32Array): number | string {
    if (!this.numeric) return state.join(",");
    let c = 0;
    for (let i = state.length - 1; i >= 0; i--) c = c * this.base + state[i];
    return c;
  }
}

// A state's completions are listed (distinct ln W ascending, with cumulative
// weights) when there are at most max(LIST_FLOOR, LIST_RATIO × the partial
// tables waiting at it): building costs at most the number of completions, so
// the work stays proportional to what it settles.
const LIST_FLOOR = 4096;
const LIST_RATIO = 8;

/** What lies ahead of a state: path bounds and, when short enough, every distinct path weight. */
interface Future {
  /** Largest and smallest ln W over the completions. */
  max: number;
  min: number;
  /** Children and their step weights (null at the last column). */
  parts: { step: number; future: Future }[] | null;
  /** Number of completions (tables with these remaining margins), as a double. */
  count: number;
  /** Distinct completion ln W ascending, once built. */
  list: Float64Array | null;
  /** cumulative[i] = Σ_{j≤i} (completions with ln W = list[j]) · exp(list[j] − max). */
  cumulative: Float64Array | null;
  /** Completions per listed weight. */
  multiplicity: Float64Array | null;
}

/** Futures of states, memoised per stage. */
class Futures {
  private readonly memo: Map<number | string, Future>[];
  constructor(
    private readonly columnTotals: number[],
    private readonly lf: Float64Array,
    private readonly codec: StateCodec,
    private readonly budget: StepBudget,
  ) {
    this.memo = columnTotals.map(() => new Map());
  }

  get(stage: number, state: Int32Array, code: number | string): Future {
    const cached = this.memo[stage].get(code);
    if (cached !== undefined) return cached;
    const future = this.compute(stage, state);
    this.memo[stage].set(code, future);
    return future;
  }

  /** The future with its list of completions built (cost: at most `count` steps). */
  listed(future: Future): Future {
    if (future.list !== null) return future;
    const parts = future.parts as { step: number; future: Future }[];
    const tally = new WeightTally();
    for (const { step, future: child } of parts) {
      this.listed(child);
      const list = child.list as Float64Array;
      const multiplicity = child.multiplicity as Float64Array;
      this.budget.spend(list.length);
      for (let i = 0; i < list.length; i++) tally.add(step + list[i], multiplicity[i]);
    }
    const sorted = tally.sorted();
    future.list = sorted.logWeights;
    future.multiplicity = sorted.counts;
    const cumulative = new Float64Array(sorted.logWeights.length);
    let sum = 0;
    for (let i = 0; i < cumulative.length; i++) {
      sum += sorted.counts[i] * Math.exp(sorted.logWeights[i] - future.max);
      cumulative[i] = sum;
    }
    future.cumulative = cumulative;
    return future;
  }

  private compute(stage: number, state: Int32Array): Future {
    const lf = this.lf;
    const total = this.columnTotals[stage];
    if (stage === this.columnTotals.length - 1) {
      let w = lf[total];
      for (const v of state) w -= lf[v];
      return {
        max: w,
        min: w,
        parts: null,
        list: Float64Array.of(w),
        count: 1,
        cumulative: Float64Array.of(1),
        multiplicity: Float64Array.of(1),
      };
    }
    let max = -Infinity;
    let min = Infinity;
    let count = 0;
    const parts: { step: number; future: Future }[] = [];
    forEachAllocation(state, total, (x) => {
      this.budget.spend(1);
      let step = lf[total];
      for (const v of x) step -= lf[v];
      const code = this.codec.child(state, x);
      const future = this.get(stage + 1, this.codec.lastState(), code);
      if (step + future.max > max) max = step + future.max;
      if (step + future.min < min) min = step + future.min;
      count += future.count;
      parts.push({ step, future });
    });
    return { max, min, parts, count, list: null, cumulative: null, multiplicity: null };
  }
}

/**
 * Σ_e masses_e · (listed completions' weight with w_e + w ≤ limit), for the
 * past entries e in [from, to), scaled by e^{−past.max − future.max}. Binary
 * searches when the entries are few, else one merge: as w_e rises the allowed
 * completions shrink, so a single pointer walks the list down.
 */
function settleAgainstList(past: SortedPast, from: number, to: number, future: Future, limit: number): number {
  const list = future.list as Float64Array;
  const cumulative = future.cumulative as Float64Array;
  const { logWeights, masses } = past;
  let acc = 0;
  if ((to - from) * Math.log2(list.length + 1) < list.length) {
    for (let e = from; e < to; e++) {
      const k = countUpTo(list, limit - logWeights[e]);
      if (k > 0) acc += masses[e] * cumulative[k - 1];
    }
    return acc;
  }
  let k = countUpTo(list, limit - logWeights[from]);
  for (let e = from; e < to && k > 0; e++) {
    const bound = limit - logWeights[e];
    while (k > 0 && list[k - 1] > bound) k--;
    if (k > 0) acc += masses[e] * cumulative[k - 1];
  }
  return acc;
}

// Past weights are merged on a grid of 2⁻³³ ≈ 1.2e-10 in ln W: far below the tolerance above.
const MERGE_SCALE = 2 ** 33;
const TWO_TO_32 = 4294967296;

/**
 * Distinct ln W values, each with a count (partial tables reaching a state, or
 * completions of a state): an open-addressing hash table on the weight rounded
 * to the 2⁻³³ grid, weight and count side by side in one Float64Array so a
 * probe touches one cache line (a Map with non-small-integer keys is several
 * times slower). The first weight seen for a grid point is kept, unrounded, so
 * rounding never accumulates along a path.
 */
class WeightTally {
  private slots = new Float64Array(16); // [weight, count] pairs; count 0 marks an empty slot
  private shift = 29; // 32 − log2(number of slots)
  size = 0;

  add(logWeight: number, count: number): void {
    const slots = this.slots;
    const mask = (slots.length >> 1) - 1;
    const key = Math.round(logWeight * MERGE_SCALE);
    let h = this.hash(key);
    for (;;) {
      const at = h << 1;
      if (slots[at + 1] === 0) {
        slots[at] = logWeight;
        slots[at + 1] = count;
        if (++this.size * 2 > mask) this.grow();
        return;
      }
      if (Math.round(slots[at] * MERGE_SCALE) === key) {
        slots[at + 1] += count;
        return;
      }
      h = (h + 1) & mask;
    }
  }

  // Fibonacci hashing on both 32-bit halves of the key; the top bits index the table.
  private hash(key: number): number {
    const high = Math.floor(key / TWO_TO_32);
    return Math.imul((key - high * TWO_TO_32) ^ Math.imul(high, 0x85ebca6b), 0x9e3779b1) >>> this.shift;
  }

  private grow(): void {
    const old = this.slots;
    this.slots = new Float64Array(old.length * 2);
    this.shift--;
    this.size = 0;
    for (let at = 0; at < old.length; at += 2) if (old[at + 1] !== 0) this.add(old[at], old[at + 1]);
  }

  /** The distinct weights ascending, with their counts. */
  sorted(): { logWeights: Float64Array; counts: Float64Array } {
    const slots = this.slots;
    const logWeights = new Float64Array(this.size);
    let k = 0;
    for (let at = 0; at < slots.length; at += 2) if (slots[at + 1] !== 0) logWeights[k++] = slots[at];
    logWeights.sort();
    const counts = new Float64Array(this.size);
    const mask = (slots.length >> 1) - 1;
    for (let i = 0; i < logWeights.length; i++) {
      const w = logWeights[i];
      let h = this.hash(Math.round(w * MERGE_SCALE));
      while (slots[(h << 1) + 1] === 0 || slots[h << 1] !== w) h = (h + 1) & mask;
      counts[i] = slots[(h << 1) + 1];
    }
    return { logWeights, counts };
  }
}

/** A partial-table state with the past weights of the undecided partial tables reaching it. */
interface Node {
  state: Int32Array;
  past: WeightTally;
}

/** A node's distinct past weights ascending, with cumulative masses. */
interface SortedPast {
  logWeights: Float64Array;
  paths: Float64Array;
  /** Largest past ln W, the scale of `masses`. */
  max: number;
  /** masses[i] = paths_i · exp(logWeights_i − max). */
  masses: Float64Array;
  /** cumulative[i] = Σ_{j<i} masses_j; length + 1 entries. */
  cumulative: Float64Array;
}

function sortPast(tally: WeightTally): SortedPast {
  const { logWeights, counts: paths } = tally.sorted();
  const max = logWeights.length > 0 ? logWeights[logWeights.length - 1] : 0;
  const masses = new Float64Array(logWeights.length);
  const cumulative = new Float64Array(logWeights.length + 1);
  for (let i = 0; i < logWeights.length; i++) {
    masses[i] = paths[i] * Math.exp(logWeights[i] - max);
    cumulative[i + 1] = cumulative[i] + masses[i];
  }
  return { logWeights, paths, max, masses, cumulative };
}

// Number of sorted values ≤ limit.
function countUpTo(values: Float64Array, limit: number): number {
  let lo = 0;
  let hi = values.length;
  while (lo < hi) {
    const mid = (lo + hi) >>> 1;
    if (values[mid] <= limit) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}

/**
 * Fisher–Freeman–Halton exact test for an r×c table: the probability, with
 * both margins fixed, of all tables at most as probable as the observed one.
 *
 * Method: under independence with fixed margins a table has probability
 * P = Π R_i! Π C_j! / (n! Π x_ij!) (Freeman & Halton 1951, Biometrika 38:141–149;
 * Fisher 1935 for 2×2). p = Σ P(y) over tables y with P(y) ≤ P(x)·(1 + 10⁻⁷),
 * the relative tolerance R's fisher.test uses. Tables are enumerated column by
 * column as paths through a network whose nodes are the sorted remaining row
 * totals (Mehta & Patel 1983, "A network algorithm for performing Fisher's
 * exact test in r × c contingency tables", JASA 78:427–434). For each node the
 * longest and shortest remaining paths are found once (memoised on the
 * remaining margins), so a partial table whose every completion is at most as
 * probable as the observed one is added in closed form (the completions'
 * total weight is m!/Π r'_i!), one whose every completion is more probable is
 * dropped, and only the rest goes on; partial tables reaching a node with the
 * same weight (to 1e-10) are merged in a hash table. A node whose
 * completions are few next to the partial tables waiting at it (at most
 * max(4,096, 8×) as many) lists them once — distinct weights ascending, with
 * cumulative masses — and settles every waiting partial table by binary
 * search or one merge. Log-factorials are precomputed; the shorter side of
 * the table plays "rows", and columns go smallest first.
 *
 * Throws a RangeError for an invalid table (see validateTable) and, naming
 * the limit, when the enumeration would exceed `maxSteps` — callers then fall
 * back to monteCarloPValue. {@link exactIsFeasible} screens tables cheaply.
 *
 * Cost: 2×c and 3×c tables with n up to ~100 take milliseconds to a few
 * hundred milliseconds; the work grows steeply with n and with min(r, c).
 *
 * @example
 * exactPValue([[3, 1], [1, 3]]); // 0.4857142857142857  (= 34/70, Fisher's tea tasting; R: 0.4857)
 */
export function exactPValue(observed: readonly (readonly number[])[], options: ExactOptions = {}): number {
  return fisherExactTest(observed, options).pValue;
}

/** Result of {@link fisherExactTest}. */
export interface FisherExactResult {
  /** Fisher–Freeman–Halton p-value (see {@link exactPValue}). */
  pValue: number;
  /** Enumeration steps used, comparable with maxSteps and exactIsFeasible's estimate. */
  steps: number;
}

/**
 * {@link exactPValue} with the work it took, for logs and for tuning budgets.
 *
 * @example
 * fisherExactTest([[3, 1], [1, 3]]).pValue; // 0.4857142857142857
 */
export function fisherExactTest(
  observed: readonly (readonly number[])[],
  options: ExactOptions = {},
): FisherExactResult {
  const walk = new NetworkWalk(toProblem(observed), checkMaxSteps(options.maxSteps));
  return { pValue: Math.min(1, walk.run()), steps: walk.budget.used };
}

/** One run of the network algorithm: the stages, the memoised futures and the running p. */
class NetworkWalk {
  readonly budget: StepBudget;
  private readonly lf: Float64Array;
  private readonly codec: StateCodec;
  private readonly futures: Futures;
  private readonly columnTotals: number[];
  /** ln W a complete table may have and still count (observed, with the tolerance). */
  private readonly threshold: number;
  /** ln(Π R_i! / n!): P = exp(logConstant + ln W). */
  private readonly logConstant: number;
  private readonly rootState: Int32Array;
  private pValue = 0;

  constructor(problem: Problem, maxSteps: number) {
    const { rowTotals, columnTotals, n } = problem;
    this.lf = logFactorialTable(n);
    this.budget = new StepBudget(maxSteps);
    this.codec = new StateCodec(rowTotals.length, Math.max(...rowTotals));
    this.futures = new Futures(columnTotals, this.lf, this.codec, this.budget);
    this.columnTotals = columnTotals;
    this.threshold = problem.logObservedWeight + Math.log1p(RELATIVE_TOLERANCE);
    this.logConstant = sumLogFactorials(rowTotals, this.lf) - this.lf[n];
    this.rootState = Int32Array.from(rowTotals).sort();
  }

  // Every node holds only partial tables its own bounds could not settle; each is
  // extended by every way to fill the next column and settled against the child's
  // bounds at once, so only the still-undecided ones travel on to the next stage.
  run(): number {
    const root: Node = { state: this.rootState, past: new WeightTally() };
    root.past.add(0, 1);
    let stage = new Map<number | string, Node>([[this.codec.code(this.rootState), root]]);
    for (let k = 0; k < this.columnTotals.length && stage.size > 0; k++) {
      const next = new Map<number | string, Node>();
      for (const [code, node] of stage) this.visit(k, code, node, next);
      stage = next;
    }
    return this.pValue;
  }

  private visit(k: number, code: number | string, node: Node, next: Map<number | string, Node>): void {
    const past = sortPast(node.past);
    const size = past.logWeights.length;
    this.budget.spend(size);
    const own = this.futures.get(k, node.state, code);
    // Listing this node's completions costs at most their number: worth it when
    // they are few next to the partial tables waiting here.
    if (own.list !== null || own.count <= Math.max(LIST_FLOOR, LIST_RATIO * size)) {
      this.futures.listed(own);
      this.pValue +=
        Math.exp(this.logConstant + past.max + own.max) * settleAgainstList(past, 0, size, own, this.threshold);
      return;
    }
    forEachAllocation(node.state, this.columnTotals[k], (x) => this.extend(k, node, past, x, next));
  }

  // Partial tables of `node` extended by filling column k with x.
  private extend(k: number, node: Node, past: SortedPast, x: Int32Array, next: Map<number | string, Node>): void {
    const lf = this.lf;
    const total = this.columnTotals[k];
    this.budget.spend(1);
    let step = lf[total];
    for (const v of x) step -= lf[v];
    const childCode = this.codec.child(node.state, x);
    const childState = this.codec.lastState();
    const future = this.futures.get(k + 1, childState, childCode);
    const limit = this.threshold - step; // a past weight w counts when w + future ≤ limit
    const allIn = countUpTo(past.logWeights, limit - future.max);
    const undecided = countUpTo(past.logWeights, limit - future.min);
    if (allIn > 0) {
      this.pValue +=
        past.cumulative[allIn] * Math.exp(this.logConstant + past.max + step + logTotalWeight(childState, lf));
    }
    if (undecided === allIn) return;
    this.budget.spend(undecided - allIn);
    if (future.list !== null) {
      const scale = Math.exp(this.logConstant + past.max + step + future.max);
      this.pValue += scale * settleAgainstList(past, allIn, undecided, future, limit);
      return;
    }
    let child = next.get(childCode);
    if (child === undefined) {
      child = { state: childState, past: new WeightTally() };
      next.set(childCode, child);
    }
    for (let e = allIn; e < undecided; e++) child.past.add(past.logWeights[e] + step, past.paths[e]);
  }
}

// ln of the total weight of all completions of a state: ln(m!/Π r'_i!).
function logTotalWeight(state: Int32Array, lf: Float64Array): number {
  let m = 0;
  let logTotal = 0;
  for (const v of state) {
    m += v;
    logTotal -= lf[v];
  }
  return logTotal + lf[m];
}

function checkMaxSteps(maxSteps: number | undefined): number {
  const value = maxSteps ?? EXACT_DEFAULT_MAX_STEPS;
  if (!Number.isInteger(value) || value < 1) {
    throw new RangeError(`maxSteps must be a positive whole number (got ${value})`);
  }
  return value;
}

// Empirical work model, fitted by least squares to the steps taken on 250
// random tables (2 ≤ r ≤ 5, r ≤ c ≤ 30, 10 ≤ n ≤ 300, flat and skewed margins):
// log10 steps ≈ 0.161 S + 0.523 r + 1.282 log10 n − 1.142, where S = Σ_j
// log10 C(C_j + r − 1, r − 1) counts the ways to split each column ignoring
// the row totals; residual sd 0.55. The margin (+1.19, the largest residual)
// makes the estimate exceed the actual work on every one of those tables.
const MODEL = { split: 0.161, rows: 0.523, logN: 1.282, intercept: -1.142, margin: 1.19 };

/**
 * Cheap screen for {@link exactPValue}: an estimate of the enumeration steps
 * it will take, compared with the step budget.
 *
 * Method: an empirical model of the network algorithm's work (fitted on 250
 * random 2×c to 5×c tables, n ≤ 300), log10 steps ≈ 0.161 S + 0.523 r +
 * 1.282 log10 n − 1.142 + 1.19, with r the shorter side and S =
 * Σ_j log10 C(C_j + r − 1, r − 1); the +1.19 margin made it an overestimate
 * for every fitted table. A 2×2 table takes at most about 2n steps. It is a screen, not a guarantee: "feasible" tables
 * almost always finish, and callers should still catch the RangeError of
 * exactPValue; "not feasible" ones sometimes would have finished.
 *
 * Cost: O(r·c).
 *
 * @example
 * exactIsFeasible([[3, 1], [1, 3]]).feasible; // true
 */
export function exactIsFeasible(
  observed: readonly (readonly number[])[],
  options: ExactOptions = {},
): ExactFeasibility {
  const maxSteps = checkMaxSteps(options.maxSteps);
  const { rowTotals, columnTotals, n } = toProblem(observed);
  const r = rowTotals.length;
  const lf = logFactorialTable(n + r);
  let split = 0;
  for (const c of columnTotals) split += (lf[c + r - 1] - lf[r - 1] - lf[c]) / Math.LN10;
  const log10Steps =
    MODEL.split * split + MODEL.rows * r + MODEL.logN * Math.log10(n) + MODEL.intercept + MODEL.margin;
  // A 2×2 table is one column of at most n + 1 ways, each settled at once.
  const twoByTwo = r === 2 && columnTotals.length === 2;
  const estimatedSteps = twoByTwo ? 2 * n + 8 : Math.ceil(Math.pow(10, log10Steps));
  const feasible = estimatedSteps <= maxSteps;
  const shape = `a ${r}×${columnTotals.length} table (shorter side first) with n = ${n}`;
  const reason = feasible
    ? `exact enumeration of ${shape} should take under ${estimatedSteps.toLocaleString("en-US")} steps, within the budget of ${maxSteps.toLocaleString("en-US")}`
    : `exact enumeration of ${shape} may take up to ${estimatedSteps.toLocaleString("en-US")} steps, over the budget of ${maxSteps.toLocaleString("en-US")}; use monteCarloPValue`;
  return { feasible, reason, estimatedSteps, maxSteps };
}

import { checkTableMargins, type RandomTableSampler, type RandomTableSamplerOptions } from "./patefield";
import { createShuffleKernel, KERNEL_LAYOUT } from "./shuffle-kernel";
import { createXoroshiroStream } from "./xoroshiro-stream";

/** Largest n the permutation sampler takes (the size of its shared workspace; see below). */
export const PERMUTATION_SAMPLER_MAX_N = 2 ** 14;

/** Largest number of cells r·c the permutation sampler takes. */
export const PERMUTATION_SAMPLER_MAX_CELLS = 2 ** 14;

// One workspace shared by every permutation sampler: UNITS, the row of unit
// labels being shuffled; META, per position i the packed word
// threshold_i | cellBase_i << 16 (Lemire's rejection threshold for a pick
// from n − i, the offset of the cells of i's block); CELLS, the counts of the
// table being drawn; LABEL_SIZE, the label totals; WEIGHTS, the cell
// weights; STATE, the generator state.
// Why module constants: V8 compiles a loop over a constant typed array with
// its address and length folded in; over an array passed as an argument,
// every iteration re-checks its map and reloads its base and length, and the
// loop spills more — about 1.6 times the time per pick (measured). Why 16-bit
// units and counts: the loop's data (for n = 5,000: 10 KB of units, 20 KB of
// META, 1.6 KB of counts) then fits the 32 KB L1 cache.
// Samplers take turns: the one using it last keeps its arrangement and
// generator state there, and they go back to its own copies when another
// sampler takes over, so interleaved samplers draw the same tables as
// separate ones (JavaScript runs one sampler at a time; a worker thread has
// its own module instance). 320 KB, allocated once (inside the kernel's
// memory when there is one).
const MAX_N = PERMUTATION_SAMPLER_MAX_N;
const MAX_CELLS = PERMUTATION_SAMPLER_MAX_CELLS;
const MAX_LABELS = MAX_CELLS / 2; // every layout has at least 2 blocks
// The workspace lives in the WebAssembly kernel's memory when there is one
// (see shuffle-kernel.ts), so the kernel and the JavaScript loops below work
// on the same arrays.
const KERNEL = createShuffleKernel();
const UNITS = KERNEL === null ? new Uint16Array(MAX_N) : new Uint16Array(KERNEL.memory.buffer, KERNEL_LAYOUT.units, MAX_N);
const META = KERNEL === null ? new Int32Array(MAX_N) : new Int32Array(KERNEL.memory.buffer, KERNEL_LAYOUT.meta, MAX_N);
const CELLS = KERNEL === null ? new Uint16Array(MAX_CELLS) : new Uint16Array(KERNEL.memory.buffer, KERNEL_LAYOUT.cells, MAX_CELLS);
// The kernel's generator state, s0 and s1 as little-endian i64: [s00, s01, s10, s11].
const KERNEL_STATE = KERNEL === null ? new Int32Array(4) : new Int32Array(KERNEL.memory.buffer, KERNEL_LAYOUT.state, 4);
let kernelEnabled = KERNEL !== null;
const LABEL_SIZE = KERNEL === null ? new Int32Array(MAX_LABELS) : new Int32Array(KERNEL.memory.buffer, KERNEL_LAYOUT.labelSize, MAX_LABELS);
const WEIGHTS = KERNEL === null ? new Float64Array(MAX_CELLS) : new Float64Array(KERNEL.memory.buffer, KERNEL_LAYOUT.weights, MAX_CELLS);
// The last block's counts, as the kernel's tally leaves them.
const KERNEL_LEFT = KERNEL === null ? new Uint16Array(MAX_LABELS) : new Uint16Array(KERNEL.memory.buffer, KERNEL_LAYOUT.left, MAX_LABELS);
// The owner's xoroshiro128+ state [s01, s00, s11, s10] (longer than needed: V8
// keeps typed arrays of up to 64 bytes on its heap, where they can move, and
// then cannot fold their address into the code).
const STATE = new Int32Array(32);
let owner: PermutationSampler | null = null;

/** How {@link createPermutationTableSampler} lays out a table (see there). */
export interface PermutationLayout {
  /** True when the blocks are the columns (the labels the rows). */
  blocksAreColumns: boolean;
  /** Block indices in shuffle order, the largest total last. */
  blockOrder: Int32Array;
  /** Positions shuffled per table: n less the largest block. */
  shuffled: number;
}

/**
 * Blocks along the margin holding the largest single total (columns on a
 * tie), that block last (the first of equal ones), so a table costs n − max
 * picks. A function of the margins alone.
 *
 * @example
 * permutationLayout([3, 5], [2, 2, 4]).shuffled; // 3
 */
export function permutationLayout(rowTotals: readonly number[], columnTotals: readonly number[]): PermutationLayout {
  let maxRow = 0;
  let maxColumn = 0;
  let n = 0;
  for (const t of rowTotals) {
    if (t > maxRow) maxRow = t;
    n += t;
  }
  for (const t of columnTotals) if (t > maxColumn) maxColumn = t;
  const blocksAreColumns = maxColumn >= maxRow;
  const totals = blocksAreColumns ? columnTotals : rowTotals;
  const largest = blocksAreColumns ? maxColumn : maxRow;
  const last = totals.indexOf(largest);
  const blockOrder = Int32Array.from({ length: totals.length }, (_, k) => (k < last ? k : k + 1));
  blockOrder[totals.length - 1] = last;
  return { blocksAreColumns, blockOrder, shuffled: n - largest };
}

interface PermutationSampler {
  n: number;
  /** This sampler's generator state while another sampler holds the workspace. */
  state: Int32Array;
  /** This sampler's arrangement of the units while another sampler holds the workspace. */
  units: Uint16Array;
  meta: Int32Array;
  labelSize: Int32Array;
  weights: Float64Array;
}

function takeWorkspace(sampler: PermutationSampler): void {
  if (owner !== null) {
    owner.units.set(UNITS.subarray(0, owner.n));
    owner.state.set(STATE.subarray(0, 4));
  }
  STATE.set(sampler.state);
  UNITS.set(sampler.units, 0);
  META.set(sampler.meta, 0);
  LABEL_SIZE.set(sampler.labelSize);
  WEIGHTS.set(sampler.weights);
  owner = sampler;
}

// One xoroshiro128+ step is spelled out in both shuffles below (JavaScript has
// no inlining macro, and a call would put the state back in memory): with
// lo, hi the halves of the 64-bit output s0 + s1 (the carry of the low half
// added by hand), and the state [s01, s00, s11, s10] as createXoroshiroStream's.

/**
 * The partial shuffle of the workspace's first n units over positions
 * 0..m−1 (m a multiple of 3, at most n − 1), counting each placed unit in
 * its cell. Three 16-bit chunks per generator step (bits 16–31, 32–47, 48–63
 * of the 64-bit output) give three picks, rejected together.
 * The state comes in as arguments and goes back to STATE on the way out.
 * V8 compiles this function during its first, long call, and an access
 * that had not run by then with a feedback vector lacks type feedback, so
 * the compiled code would deoptimize on reaching it (the exit, a rejected
 * step) and V8 may settle on a slower on-stack-replacement build of the
 * loop (seen: 14 µs or 21–32 µs per table at random from one process to
 * the next): the warm-up at the end of this module runs every path once,
 * in the interpreter, before any real table. Storing the state on every
 * pass instead (as before) costs four typed-array stores per step.
 */
function shuffle(n: number, m: number, s01: number, s00: number, s11: number, s10: number): void {
  // Typed as 32-bit integers from here (arguments are any number to V8, which
  // would then add in floating point).
  n |= 0;
  m |= 0;
  s01 |= 0;
  s00 |= 0;
  s11 |= 0;
  s10 |= 0;
  let i = 0;
  for (;;) {
    if (i >= m) {
      STATE[0] = s01;
      STATE[1] = s00;
      STATE[2] = s11;
      STATE[3] = s10;
      return;
    }
    const lo = (s00 + s10) | 0;
    const hi = (s01 + s11 + (((s00 & s10) | ((s00 | s10) & ~lo)) >>> 31)) | 0;
    const a0 = s10 ^ s00;
    const a1 = s11 ^ s01;
    const t00 = s00;
    s00 = (t00 << 24) ^ (s01 >>> 8) ^ a0 ^ (a0 << 16);
    s01 = (s01 << 24) ^ (t00 >>> 8) ^ a1 ^ ((a1 << 16) | (a0 >>> 16));
    s10 = (a1 << 5) ^ (a0 >>> 27);
    s11 = (a0 << 5) ^ (a1 >>> 27);
    const b = n - i; // positions i..n−1 to pick from; b − 2 ≥ 1
    const q1 = Math.imul(lo >>> 16, b); // < 2³⁰: b ≤ 2¹⁴
    const q2 = Math.imul(hi & 0xffff, b - 1);
    const q3 = Math.imul(hi >>> 16, b - 2);
    const e1 = META[i];
    const e2 = META[i + 1];
    const e3 = META[i + 2];
    // The sign bit is set when any low half falls below its threshold: reject all three.
    if ((((q1 & 0xffff) - (e1 & 0xffff)) | ((q2 & 0xffff) - (e2 & 0xffff)) | ((q3 & 0xffff) - (e3 & 0xffff))) < 0) continue;
    let j = i + (q1 >>> 16);
    let t = UNITS[j];
    UNITS[j] = UNITS[i];
    UNITS[i] = t;
    CELLS[(e1 >>> 16) + t]++;
    i++;
    j = i + (q2 >>> 16);
    t = UNITS[j];
    UNITS[j] = UNITS[i];
    UNITS[i] = t;
    CELLS[(e2 >>> 16) + t]++;
    i++;
    j = i + (q3 >>> 16);
    t = UNITS[j];
    UNITS[j] = UNITS[i];
    UNITS[i] = t;
    CELLS[(e3 >>> 16) + t]++;
    i++;
  }
}

// shuffle, run by the WebAssembly kernel on the same arrays (the state
// copied in and out: STATE is [s01, s00, s11, s10], the kernel's
// [s00, s01, s10, s11]).
function shuffleInKernel(n: number, m: number): void {
  KERNEL_STATE[0] = STATE[1];
  KERNEL_STATE[1] = STATE[0];
  KERNEL_STATE[2] = STATE[3];
  KERNEL_STATE[3] = STATE[2];
  (KERNEL as NonNullable<typeof KERNEL>).shuffle(n, m);
  STATE[0] = KERNEL_STATE[1];
  STATE[1] = KERNEL_STATE[0];
  STATE[2] = KERNEL_STATE[3];
  STATE[3] = KERNEL_STATE[2];
}

// tally, run by the WebAssembly kernel (the same operations in the same
// order, so the same Σ w x² to the last bit).
function tallyInKernel(labels: number, cells: number, out: Int32Array | undefined, caller: Int32Array): number {
  const last = cells - labels;
  if (out !== undefined) for (let k = 0; k < last; k++) out[caller[k]] = CELLS[k];
  const sum = (KERNEL as NonNullable<typeof KERNEL>).tally(labels, cells);
  if (out !== undefined) for (let t = 0; t < labels; t++) out[caller[last + t]] = KERNEL_LEFT[t];
  return sum;
}

/**
 * Whether permutation samplers run their shuffle and tally in the
 * WebAssembly kernel (the default where WebAssembly is available) or in
 * JavaScript; both draw the same tables and sums for a seed. For tests and benchmarks. Returns whether the
 * kernel is in use after the call (false where there is none).
 *
 * @example
 * useShuffleKernel(true); // true
 */
export function useShuffleKernel(enabled: boolean): boolean {
  kernelEnabled = enabled && KERNEL !== null;
  return kernelEnabled;
}

/**
 * The same shuffle one pick per generator step (bits 48–63), for tables too
 * small to round m up to a multiple of 3 within n − 1 positions (only when
 * the largest margin total is 1 or 2).
 */
function shuffleSingly(n: number, m: number, s01: number, s00: number, s11: number, s10: number): void {
  // Typed as 32-bit integers from here (arguments are any number to V8, which
  // would then add in floating point).
  n |= 0;
  m |= 0;
  s01 |= 0;
  s00 |= 0;
  s11 |= 0;
  s10 |= 0;
  let i = 0;
  for (;;) {
    if (i >= m) {
      STATE[0] = s01;
      STATE[1] = s00;
      STATE[2] = s11;
      STATE[3] = s10;
      return;
    }
    const lo = (s00 + s10) | 0;
    const hi = (s01 + s11 + (((s00 & s10) | ((s00 | s10) & ~lo)) >>> 31)) | 0;
    const a0 = s10 ^ s00;
    const a1 = s11 ^ s01;
    const t00 = s00;
    s00 = (t00 << 24) ^ (s01 >>> 8) ^ a0 ^ (a0 << 16);
    s01 = (s01 << 24) ^ (t00 >>> 8) ^ a1 ^ ((a1 << 16) | (a0 >>> 16));
    s10 = (a1 << 5) ^ (a0 >>> 27);
    s11 = (a0 << 5) ^ (a1 >>> 27);
    const q = Math.imul(hi >>> 16, n - i);
    const e = META[i];
    if ((q & 0xffff) < (e & 0xffff)) continue;
    const j = i + (q >>> 16);
    const t = UNITS[j];
    UNITS[j] = UNITS[i];
    UNITS[i] = t;
    CELLS[(e >>> 16) + t]++;
    i++;
  }
}

/**
 * Σ w x² over the shuffled blocks, and over the last block by subtraction
 * (label totals less the rest); clears the counts and copies the table to
 * `out` in the caller's cell order when given. Label by label down the
 * blocks, so what the shuffled blocks leave of a label stays in a local
 * (three typed-array accesses per cell instead of five), four cells at a
 * time in four partial sums so the additions do not wait on each other;
 * branch-free on the counts (most cells of a sparse table are 0, and a test
 * on each would mispredict).
 */
function tally(labels: number, cells: number, out: Int32Array | undefined, caller: Int32Array): number {
  const last = cells - labels;
  if (kernelEnabled) return tallyInKernel(labels, cells, out, caller);
  if (out !== undefined) for (let k = 0; k < last; k++) out[caller[k]] = CELLS[k];
  const stride = 4 * labels;
  let s0 = 0;
  let s1 = 0;
  let s2 = 0;
  let s3 = 0;
  for (let t = 0; t < labels; t++) {
    let left = LABEL_SIZE[t];
    let k = t;
    for (; k + 3 * labels < last; k += stride) {
      const x0 = CELLS[k];
      const x1 = CELLS[k + labels];
      const x2 = CELLS[k + 2 * labels];
      const x3 = CELLS[k + 3 * labels];
      s0 += x0 * x0 * WEIGHTS[k];
      s1 += x1 * x1 * WEIGHTS[k + labels];
      s2 += x2 * x2 * WEIGHTS[k + 2 * labels];
      s3 += x3 * x3 * WEIGHTS[k + 3 * labels];
      left -= x0 + x1 + (x2 + x3);
    }
    for (; k < last; k += labels) {
      const x = CELLS[k];
      s0 += x * x * WEIGHTS[k];
      left -= x;
    }
    s1 += left * left * WEIGHTS[last + t];
    if (out !== undefined) out[caller[last + t]] = left;
  }
  // Also the last block's counts of the positions shuffled beyond m (see createPermutationTableSampler).
  CELLS.fill(0, 0, cells);
  return s0 + s1 + (s2 + s3);
}

/**
 * Seeded sampler of random r×c tables with both margins fixed, drawn from
 * their exact conditional (multiple hypergeometric) distribution under
 * independence, by shuffling the units themselves.
 *
 * Method: given both margins, an r×c table under independence has the
 * multiple hypergeometric law P(x) = Π r_i! Π c_j! / (n! Π x_ij!), the law
 * behind exact conditional tests of independence (Agresti 2013, Categorical
 * Data Analysis, 3rd ed., on exact inference for r×c tables; Good 2005,
 * Permutation, Parametric and Bootstrap Tests of Hypotheses). It is
 * the law of the table got by writing the n units' labels of one margin in
 * a row (label t repeated t's total times), shuffling them uniformly, and
 * cutting the row into consecutive blocks of the other margin's totals: of
 * the n!/Π L_t! equally likely arrangements (L the label totals), Π_b (B_b!
 * / Π_t x_tb!) give table x (B the block totals), which is the formula.
 * The blocks run along the margin with the largest single total, that block
 * last; the labels along the other margin (see permutationLayout). The
 * shuffle is a partial Fisher–Yates (Durstenfeld 1964, CACM 7:420; Knuth,
 * TAOCP vol. 2, §3.4.2, Algorithm P): position i swaps with a uniform pick
 * from positions i..n−1, stopping once every block but the last is full
 * (m = n − largest total positions), so the last block's counts are the
 * label totals less the rest. The row is not reset between tables: a
 * uniform shuffle of any arrangement is uniform.
 *
 * Picks: Lemire's multiply-shift with rejection (Lemire 2019, "Fast random
 * integer generation in an interval", ACM TOMACS 29:3), exactly uniform: a
 * 16-bit chunk c gives ⌊c·b / 2¹⁶⌋, uniform on 0..b−1 once the chunks whose
 * c·b mod 2¹⁶ falls below 2¹⁶ mod b are rejected (b ≤ n ≤ 2¹⁴, so c·b is an
 * exact 32-bit integer). Each step of the xoroshiro128+ generator — the
 * state sequence of createXoroshiroStream(seed), stepped inline so the
 * state lives in locals — yields its full 64-bit output s0 + s1 (the
 * stream's 32-bit word is the low half), and three picks take its bits
 * 16–63, leaving out the low bits, the weakest of a + scrambler (Blackman &
 * Vigna 2018). If any of the three is rejected all three are and the step
 * is redone: the accepted set is a product of the three acceptance sets,
 * so the picks stay independent and uniform (about 7% of steps for
 * n = 5,000).
 * Why: a generator step costs about as much as a pick and its swap
 * together, so three picks per step nearly halve the time per unit.
 * The shuffle and the sum run in a small WebAssembly kernel
 * (shuffle-kernel.ts, the same loops with 64-bit integers and no per-access
 * checks) where WebAssembly is available, else in JavaScript; the two give
 * the same tables and sums for a seed (the tests compare them table by
 * table).
 *
 * Cost: O(n + r·c) setup and memory; per table m picks (about 1.6 ns each
 * in the kernel on a 2.6 GHz core, 3.5 ns in JavaScript) and O(r·c) to sum
 * Σ w x² (about 2 µs for 800 cells) — no dependence on the size of
 * the cells, so it beats Patefield's (r−1)(c−1) hypergeometric draws when n
 * is modest against r·c (monteCarloPValue chooses between the two). Throws
 * a RangeError beyond n = {@link PERMUTATION_SAMPLER_MAX_N} or r·c =
 * {@link PERMUTATION_SAMPLER_MAX_CELLS} (its shared workspace).
 *
 * @example
 * const out = new Int32Array(4);
 * createPermutationTableSampler([4, 4], [4, 4], { seed: 1 }).sample(out); // 0; out holds a 2×2 table with those margins
 */
export function createPermutationTableSampler(
  rowTotals: readonly number[],
  columnTotals: readonly number[],
  options: RandomTableSamplerOptions,
): RandomTableSampler {
  const n = checkTableMargins(rowTotals, columnTotals);
  const rows = rowTotals.length;
  const columns = columnTotals.length;
  const cells = rows * columns;
  if (n > PERMUTATION_SAMPLER_MAX_N || cells > PERMUTATION_SAMPLER_MAX_CELLS) {
    throw new RangeError(
      `the permutation sampler takes n ≤ ${PERMUTATION_SAMPLER_MAX_N.toLocaleString("en-US")} and at most ${PERMUTATION_SAMPLER_MAX_CELLS.toLocaleString("en-US")} cells (got n = ${n}, ${cells} cells)`,
    );
  }
  if (options.weights !== undefined && options.weights.length !== cells) {
    throw new RangeError(`weights need ${cells} cells (got ${options.weights.length})`);
  }
  const { blocksAreColumns, blockOrder, shuffled: m } = permutationLayout(rowTotals, columnTotals);
  const blocks = blockOrder.length;
  const labelTotals = blocksAreColumns ? rowTotals : columnTotals;
  const blockTotals = blocksAreColumns ? columnTotals : rowTotals;
  const labels = labelTotals.length;
  const labelSize = Int32Array.from(labelTotals);
  // Cell (block b of blockOrder, label t) at b·labels + t; `caller` maps it to the caller's cell.
  const caller = new Int32Array(cells);
  const weights = new Float64Array(cells);
  for (let b = 0; b < blocks; b++) {
    for (let t = 0; t < labels; t++) {
      const k = blocksAreColumns ? t * columns + blockOrder[b] : blockOrder[b] * columns + t;
      caller[b * labels + t] = k;
      if (options.weights !== undefined) weights[b * labels + t] = options.weights[k];
    }
  }
  const units = new Uint16Array(n);
  for (let t = 0, p = 0; t < labels; t++) units.fill(t, p, (p += labelSize[t]));
  // Positions shuffled: m rounded up to a multiple of 3 when that leaves one
  // unit unshuffled (the extra ones are in the last block and counted there,
  // which the tally ignores), else m one pick at a time.
  const batched = 3 * Math.ceil(m / 3) <= n - 1;
  const shuffled = batched ? 3 * Math.ceil(m / 3) : m;
  // Per shuffled position: Lemire's threshold 2¹⁶ mod (n − i) and the offset of its block's cells.
  const meta = new Int32Array(shuffled);
  for (let b = 0, p = 0; b < blocks; b++) {
    for (const end = Math.min(shuffled, p + blockTotals[blockOrder[b]]); p < end; p++) meta[p] = (65536 % (n - p)) | ((b * labels) << 16);
  }
  const state = Int32Array.from(createXoroshiroStream(options.seed).getState()); // [s01, s00, s11, s10]
  const self: PermutationSampler = { n, state, units, meta, labelSize, weights };

  return {
    rows,
    columns,
    sample(out?: Int32Array): number {
      if (out !== undefined && out.length !== cells) {
        throw new RangeError(`output buffer needs ${cells} cells (got ${out.length})`);
      }
      if (owner !== self) takeWorkspace(self);
      // The state goes in as arguments: an array read on entry would run before V8
      // has a feedback vector for the first call, and lack type feedback (see shuffle).
      if (batched && kernelEnabled) shuffleInKernel(n, shuffled);
      else if (batched) shuffle(n, shuffled, STATE[0], STATE[1], STATE[2], STATE[3]);
      else shuffleSingly(n, shuffled, STATE[0], STATE[1], STATE[2], STATE[3]);
      return tally(labels, cells, out, caller);
    },
  };
}

// Warm-up (see shuffle): one small table (six blocks, so tally's four-wide
// loop runs too) drawn with and without an output buffer at module load, so
// every array access of shuffle and tally has run, with type feedback,
// before the first real table. Well under a millisecond, once; the
// workspace is left to the next sampler.
{
  const warmUp = createPermutationTableSampler([8, 8], [1, 1, 1, 1, 2, 10], { seed: 1 });
  const kernel = kernelEnabled;
  kernelEnabled = false;
  warmUp.sample(new Int32Array(12));
  warmUp.sample();
  kernelEnabled = kernel;
  warmUp.sample(new Int32Array(12));
  warmUp.sample();
  owner = null;
}

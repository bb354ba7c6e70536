import { xoroshiro128plus } from "pure-rand/generator/xoroshiro128plus";
import { skipN } from "pure-rand/utils/skipN";

/**
 * pure-rand's xoroshiro128+ generator with its state held in an Int32Array,
 * so a hot loop can draw 32-bit words without a method call on a class
 * instance per draw.
 *
 * Method: Blackman & Vigna 2018, "Scrambled linear pseudorandom number
 * generators" (xoroshiro128+, 2¹²⁸ − 1 period), in exactly the 32-bit-word
 * formulation of pure-rand 8 (generator/xoroshiro128plus.js): the state is
 * seeded by pure-rand's own xoroshiro128plus(seed) and warmed up with
 * skipN(rng, WARM_UP), and the step below is the same arithmetic, so
 * `nextInt32()` returns the very sequence pure-rand's `next()` would after
 * that warm-up (the tests compare them word for word). The warm-up matters:
 * the seeded state (−1, ~seed, seed, 0) has little entropy, and its first
 * words are nearly the seed itself (the first uniform for seed 1 is
 * 0.99999999953).
 * Why: in V8 the class-based `next()` costs several times more than the
 * arithmetic, and Monte Carlo p-values need millions of words.
 *
 * @example
 * const rng = xoroshiro128plus(42);
 * skipN(rng, WARM_UP);
 * createXoroshiroStream(42).nextInt32() === rng.next(); // true
 */
export interface XoroshiroStream {
  /** Next 32-bit word as a signed integer, as pure-rand's next(). */
  nextInt32(): number;
  /** Next uniform in [0, 1) with 32-bit resolution: (word >>> 0) · 2⁻³². */
  nextUniform32(): number;
  /** Current state [s01, s00, s11, s10], as pure-rand's getState(). */
  getState(): number[];
}

const TWO_TO_MINUS_32 = 2.3283064365386963e-10;

/** Words discarded after seeding (see {@link XoroshiroStream}). */
export const WARM_UP = 32;

/**
 * A {@link XoroshiroStream} seeded like pure-rand's xoroshiro128plus(seed)
 * (the seed is used as a 32-bit integer).
 *
 * @example
 * createXoroshiroStream(1).nextUniform32(); // 0.5254774913191795  (the same on every run)
 */
export function createXoroshiroStream(seed: number): XoroshiroStream {
  if (!Number.isSafeInteger(seed)) throw new RangeError(`seed must be an integer (got ${seed})`);
  const seeded = xoroshiro128plus(seed);
  skipN(seeded, WARM_UP);
  const state = Int32Array.from(seeded.getState()); // [s01, s00, s11, s10]
  function nextInt32(): number {
    const s01 = state[0];
    const s00 = state[1];
    const s11 = state[2];
    const s10 = state[3];
    const out = (s00 + s10) | 0;
    const a0 = s10 ^ s00;
    const a1 = s11 ^ s01;
    state[1] = (s00 << 24) ^ (s01 >>> 8) ^ a0 ^ (a0 << 16);
    state[0] = (s01 << 24) ^ (s00 >>> 8) ^ a1 ^ ((a1 << 16) | (a0 >>> 16));
    state[3] = (a1 << 5) ^ (a0 >>> 27);
    state[2] = (a0 << 5) ^ (a1 >>> 27);
    return out;
  }
  return {
    nextInt32,
    nextUniform32: () => (nextInt32() >>> 0) * TWO_TO_MINUS_32,
    getState: () => Array.from(state),
  };
}

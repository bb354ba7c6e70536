/**
 * A 32-bit seed from a string (FNV-1a), so the Monte Carlo p-value of a window is the same
 * on every rerun and on every machine: seeded from what the window is (comparison, start,
 * end), never from the clock.
 *
 * @example
 * seedFrom("line|2026-01-05|2026-01-11"); // 1929287798
 */
export function seedFrom(text: string): number {
  let h = 0x811c9dc5;
  for (let i = 0; i < text.length; i++) {
    h ^= text.charCodeAt(i);
    h = Math.imul(h, 0x01000193);
  }
  return h >>> 0;
}

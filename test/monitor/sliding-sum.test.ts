import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { createCube } from "@/lib/monitor/cube";
import { SlidingSum } from "@/lib/monitor/sliding-sum";

function directSum(data: Int32Array, width: number, days: number, from: number, length: number): number[] {
  const out = new Array(width).fill(0);
  for (let d = Math.max(from, 0); d < Math.min(from + length, days); d++) {
    for (let j = 0; j < width; j++) out[j] += data[d * width + j];
  }
  return out;
}

describe("sliding window sums", () => {
  it("equal a direct sum after any sequence of moves, including ones past the cube's edges", () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 1, max: 12 }),
        fc.array(fc.integer({ min: 0, max: 50 }), { minLength: 6, maxLength: 6 * 30 }),
        fc.array(fc.integer({ min: -15, max: 45 }), { minLength: 1, maxLength: 20 }),
        (length, counts, moves) => {
          const days = Math.floor(counts.length / 6);
          fc.pre(days > 0);
          const cube = createCube(100, days, ["a", "b"], ["x", "y", "z"]);
          cube.data.set(counts.slice(0, days * 6));
          const sliding = new SlidingSum(cube, length);
          for (const m of moves) {
            sliding.moveTo(100 + m);
            expect([...sliding.sums]).toEqual(directSum(cube.data, 6, days, m, length));
          }
        },
      ),
    );
  });
});

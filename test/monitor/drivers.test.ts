import { describe, expect, it } from "vitest";
import { tableDrivers } from "@/lib/monitor/drivers";

describe("drivers", () => {
  it("are the cells whose |adjusted residual| exceeds the Bonferroni critical value (R: qnorm(1 - 0.05/8) = 2.497705)", () => {
    // R: chisq.test(matrix(c(20,10,10,20),2), correct=FALSE)$stdres = ±2.581989, all four cells beyond 2.4977.
    const drivers = tableDrivers([[20, 10], [10, 20]], ["L1", "L2"], ["A", "B"], 0.05);
    expect(drivers).toHaveLength(4);
    for (const d of drivers) expect(Math.abs(d.adjustedResidual)).toBeCloseTo(2.581989, 6);
    // A looser α raises the bar: at α = 0.001 the critical value is 3.66 and nothing drives.
    expect(tableDrivers([[20, 10], [10, 20]], ["L1", "L2"], ["A", "B"], 0.001)).toEqual([]);
    expect(tableDrivers([[18, 12], [12, 18]], ["L1", "L2"], ["A", "B"], 0.05)).toEqual([]);
  });

  it("carry observed, expected, ratio and share of X², largest |residual| first, excess first on ties", () => {
    // R: chisq.test(matrix(c(90,50,10,50),2), correct=FALSE)$stdres = ±6.172134
    const drivers = tableDrivers([[90, 10], [50, 50]], ["L1", "L2"], ["A", "B"], 0.05);
    expect(drivers.map((d) => [d.row, d.category, Math.sign(d.adjustedResidual)])).toEqual([
      ["L2", "B", 1],
      ["L1", "A", 1],
      ["L1", "B", -1],
      ["L2", "A", -1],
    ]);
    expect(drivers[0]).toMatchObject({ observed: 50, expected: 30, contribution: 0.35 });
    expect(drivers[0].ratio).toBeCloseTo(5 / 3, 12);
    expect(drivers[0].adjustedResidual).toBeCloseTo(6.172134, 6);
  });
});

import { describe, expect, it } from "vitest";
import { rateHomogeneity } from "@/lib/stats";
import { R, relativeError } from "./reference";

describe(`rateHomogeneity against ${R.version} (pchisq of the Poisson dispersion statistic, fixture)`, () => {
  R.rates.forEach((ref, k) => {
    it(`case ${k + 1}: ū, X², p and u-chart limits`, () => {
      const result = rateHomogeneity(ref.defects, ref.units);
      expect(relativeError(result.uBar, ref.uBar)).toBeLessThan(1e-15);
      expect(relativeError(result.chiSquare, ref.chiSquare)).toBeLessThan(1e-12);
      expect(result.df).toBe(ref.df);
      expect(relativeError(result.log10PValue * Math.LN10, ref.logPValue)).toBeLessThan(1e-10);
      if (ref.pValue > 0) expect(relativeError(result.pValue, ref.pValue)).toBeLessThan(1e-8);
      result.perGroup.forEach((g, i) => {
        expect(g.lowerLimit).toBeCloseTo(ref.lower[i], 14);
        expect(g.upperLimit).toBeCloseTo(ref.upper[i], 14);
      });
    });
  });
});

describe("rateHomogeneity by hand", () => {
  it("[10, 30] defects on [100, 100] units: ū = 0.2, X² = 10, df 1, both inside 0.2 ± 0.134", () => {
    const result = rateHomogeneity([10, 30], [100, 100]);
    expect(result.uBar).toBe(0.2);
    expect(result.chiSquare).toBeCloseTo(10, 12);
    expect(result.df).toBe(1);
    expect(result.perGroup[0].upperLimit).toBeCloseTo(0.2 + 3 * Math.sqrt(0.002), 14);
    expect(result.perGroup.map((g) => g.outside)).toEqual([null, null]);
  });

  it("[5, 40] on [100, 100]: ū = 0.225, limits 0.225 ± 0.1423, one group below and one above", () => {
    const result = rateHomogeneity([5, 40], [100, 100]);
    expect(result.chiSquare).toBeCloseTo((2 * 17.5 * 17.5) / 22.5, 12);
    expect(result.perGroup.map((g) => g.outside)).toEqual(["below", "above"]);
  });

  it("floors the lower limit at 0 and flags only groups outside", () => {
    const result = rateHomogeneity([0, 2, 3], [10, 12, 9]);
    expect(result.perGroup.every((g) => g.lowerLimit === 0)).toBe(true);
    expect(result.perGroup.every((g) => g.outside === null)).toBe(true);
  });

  it("with no defects at all, X² = 0 and p = 1", () => {
    const result = rateHomogeneity([0, 0, 0], [5, 6, 7]);
    expect(result.chiSquare).toBe(0);
    expect(result.pValue).toBe(1);
  });

  it("rejects bad input", () => {
    expect(() => rateHomogeneity([1, 2], [3])).toThrow(/defects has 2 groups but units has 1/);
    expect(() => rateHomogeneity([1], [3])).toThrow(/at least 2 groups/);
    expect(() => rateHomogeneity([1, -2], [3, 4])).toThrow(/group 2 must be a non-negative whole number/);
    expect(() => rateHomogeneity([1, 2.5], [3, 4])).toThrow(/non-negative whole number/);
    expect(() => rateHomogeneity([1, 2], [3, 0])).toThrow(/units of group 2 must be a finite number above 0/);
    expect(() => rateHomogeneity([1, 2], [3, Number.NaN])).toThrow(RangeError);
    expect(() => rateHomogeneity([1, 2], [3, Infinity])).toThrow(RangeError);
  });
});

import jStat from "jstat";
import { describe, expect, it } from "vitest";
import { driverCriticalValue, logGamma, normalQuantile, stirlingError } from "@/lib/stats";
import { R, relativeError } from "./reference";

describe(`normalQuantile (AS 241) against ${R.version} qnorm (fixture r-reference.json)`, () => {
  it("matches to 1e-15 relative from 1e-300 to 1 − 1e-6", () => {
    R.qnorm.p.forEach((p, k) => {
      expect(relativeError(normalQuantile(p), R.qnorm.q[k]), `p=${p}`).toBeLessThan(1e-15);
    });
  });

  it("is antisymmetric, and gives ±∞ at 0 and 1", () => {
    // 1 − p is exact for these p, so the two quantiles must cancel.
    for (const p of [0.5 ** 20, 0.015625, 0.25, 0.375]) expect(normalQuantile(1 - p) + normalQuantile(p)).toBeCloseTo(0, 13);
    expect(normalQuantile(0)).toBe(-Infinity);
    expect(normalQuantile(1)).toBe(Infinity);
    expect(normalQuantile(0.5)).toBe(0);
  });

  it("rejects probabilities outside [0, 1]", () => {
    expect(() => normalQuantile(-0.1)).toThrow(RangeError);
    expect(() => normalQuantile(1.1)).toThrow(RangeError);
    expect(() => normalQuantile(Number.NaN)).toThrow(RangeError);
  });

  it("is why jstat's quantile is not used for tail probabilities", () => {
    // jstat 1.9.6 normal.inv (an erfc inversion) is off by ~1e-10 relative at p = 1e-10 and
    // by ~1% at p = 1e-20 (−9.1469 against R's −9.26234); AS 241 holds full precision.
    const p = 1e-20;
    expect(relativeError(normalQuantile(p), -9.2623400897984052)).toBeLessThan(1e-15);
    expect(relativeError(jStat.normal.inv(p, 0, 1), -9.2623400897984052)).toBeGreaterThan(1e-3);
  });
});

describe(`driverCriticalValue against ${R.version} qnorm(α/(2rc), lower.tail = FALSE)`, () => {
  for (const { rows, columns, alpha, z } of R.driverCriticalValues) {
    it(`${rows}×${columns}, α = ${alpha}`, () => {
      expect(relativeError(driverCriticalValue(rows, columns, alpha), z)).toBeLessThan(1e-14);
    });
  }

  it("rejects bad shapes and levels", () => {
    expect(() => driverCriticalValue(0, 3, 0.05)).toThrow(RangeError);
    expect(() => driverCriticalValue(2, 2.5, 0.05)).toThrow(RangeError);
    expect(() => driverCriticalValue(2, 3, 0)).toThrow(RangeError);
    expect(() => driverCriticalValue(2, 3, 1)).toThrow(RangeError);
  });
});

describe(`logGamma against ${R.version} lgamma`, () => {
  it("matches to 1e-14 relative (1e-15 absolute near the zeros at 1 and 2)", () => {
    R.lgamma.x.forEach((x, k) => {
      const want = R.lgamma.value[k];
      const error = Math.abs(want) < 1 ? Math.abs(logGamma(x) - want) : relativeError(logGamma(x), want);
      expect(error, `x=${x}`).toBeLessThan(1e-14);
    });
  });

  it("stirlingError is the remainder of Stirling's formula", () => {
    for (const n of [0.5, 1, 3.25, 7, 15, 16.5, 40, 200, 1000]) {
      const direct = logGamma(n + 1) - (n + 0.5) * Math.log(n) + n - 0.5 * Math.log(2 * Math.PI);
      // The direct form cancels two numbers of size ln Γ(n+1); allow for its rounding.
      expect(Math.abs(stirlingError(n) - direct)).toBeLessThan(1e-15 * Math.max(1, logGamma(n + 1)) * 8);
    }
    expect(() => logGamma(0)).toThrow(RangeError);
  });
});

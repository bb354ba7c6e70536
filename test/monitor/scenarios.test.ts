/**
 * Scenarios with known injected changes, generated with a seeded Poisson plant
 * (helpers/simulate.ts, pure-rand xoroshiro128+): the scan must find a mix change and
 * name its line and category, must not call a rate-only change a mix change (the rate
 * scan must see it), and must stay quiet on quiet data at the promised rate.
 */
import { describe, expect, it } from "vitest";
import { scanRates, scanWindows, type ScanConfig } from "@/lib/monitor";
import { codes, simulatePlant, type PlantSpec } from "./helpers/simulate";

const plant = (over: Partial<PlantSpec> = {}): PlantSpec => ({
  start: "2026-01-05",
  days: 120,
  lines: codes("L", 6),
  shifts: ["A", "B", "C"],
  categories: codes("C", 10),
  weights: [14, 12, 9, 7, 6, 5, 5, 4, 3, 3],
  unitsPerShift: 2000,
  defectsPerUnit: 0.01,
  ...over,
});

const config: ScanConfig = { compare: "line", windowDays: 7, stepDays: 1, alpha: 0.05, adjust: "bh", minEffect: 0 };

describe("a planted mix change", () => {
  const change = { line: "L03", category: "C07", from: "2026-03-06", to: "2026-03-20", factor: 3 };
  const { tallies } = simulatePlant(plant({ changes: [change] }), 11);
  const result = scanWindows(tallies, config);

  it("flags windows overlapping the change and none far from it", () => {
    const flagged = result.windows.filter((w) => w.flagged);
    expect(flagged.length).toBeGreaterThan(5);
    for (const w of flagged) {
      expect(w.end >= change.from && w.start <= change.to).toBe(true);
    }
  });

  it("forms one episode whose top driver is the planted line and category, in excess", () => {
    expect(result.episodes).toHaveLength(1);
    const episode = result.episodes[0];
    expect(episode.start <= "2026-03-20" && episode.end >= "2026-03-06").toBe(true);
    expect(episode.drivers[0]).toMatchObject({ row: "L03", category: "C07" });
    expect(episode.drivers[0].adjustedResidual).toBeGreaterThan(0);
    expect(episode.drivers[0].windows).toBe(episode.windows);
    // The peak is the smallest adjusted p of the episode's windows.
    const inEpisode = result.windows.filter((w) => w.flagged && w.start >= episode.start && w.end <= episode.end);
    expect(inEpisode).toHaveLength(episode.windows);
    expect(episode.peak.adjustedPValue).toBe(Math.min(...inEpisode.map((w) => w.adjustedPValue!)));
  });

  it("gives every flagged window the planted cell as its top driver, with observed/expected > 1", () => {
    for (const w of result.windows.filter((x) => x.flagged)) {
      expect(w.drivers[0]).toMatchObject({ row: "L03", category: "C07" });
      expect(w.drivers[0].ratio).toBeGreaterThan(1.3);
      expect(w.drivers[0].observed).toBeGreaterThan(w.drivers[0].expected);
      const sorted = [...w.drivers].sort((a, b) => Math.abs(b.adjustedResidual) - Math.abs(a.adjustedResidual));
      expect(w.drivers).toEqual(sorted);
    }
  });

  it("is gated by the effect size when minEffect is set above the change's Cramér's V", () => {
    const peakV = Math.max(...result.windows.map((w) => w.cramersVCorrected ?? 0));
    const strict = scanWindows(tallies, { ...config, minEffect: peakV + 0.01 });
    expect(strict.windows.some((w) => w.flagged)).toBe(false);
    expect(strict.windows.filter((w) => w.adjustedPValue! <= 0.05).length).toBeGreaterThan(0);
  });
});

describe("a planted rate-only change", () => {
  const change = { line: "L02", from: "2026-03-06", to: "2026-03-20", factor: 1.8 };
  const { tallies, units } = simulatePlant(plant({ changes: [change] }), 12);

  it("does not flag the mix: the mix test conditions on each line's total", () => {
    const mix = scanWindows(tallies, config);
    expect(mix.windows.filter((w) => w.flagged)).toEqual([]);
    expect(mix.episodes).toEqual([]);
  });

  it("shows in the rate scan, with the line above its u-chart limit", () => {
    const rates = scanRates(tallies, units, config);
    const flagged = rates.windows.filter((w) => w.rateFlagged);
    expect(flagged.length).toBeGreaterThan(5);
    for (const w of flagged) expect(w.end >= change.from && w.start <= change.to).toBe(true);
    expect(rates.episodes).toHaveLength(1);
    const peak = rates.episodes[0].peak;
    expect(peak.groups.find((g) => g.group === "L02")?.outside).toBe("above");
    expect(peak.groups.filter((g) => g.outside === "above").map((g) => g.group)).toEqual(["L02"]);
  });
});

describe("a quiet year", () => {
  // 20 seeded quiet plants (no change), 359 overlapping 7-day windows each.
  const SEEDS = 20;
  const quiet = plant({ days: 365, lines: codes("L", 5), categories: codes("C", 8), weights: [9, 8, 7, 6, 5, 4, 3, 2] });
  const scans = (adjust: ScanConfig["adjust"]) =>
    Array.from({ length: SEEDS }, (_, s) => scanWindows(simulatePlant(quiet, 1000 + s).tallies, { ...config, adjust }));
  const bh = scans("bh");

  it("flags at most the promised share: under the global null BH controls the FWER at α", () => {
    // Seeds with any flag ~ Binomial(20, ≤ 0.05); P(≥ 4) ≈ 0.016, so more than 3 means the
    // adjustment is not holding. The windows are 7-day overlapping, so flags come in runs.
    const seedsWithFlags = bh.filter((r) => r.windows.some((w) => w.flagged)).length;
    expect(seedsWithFlags).toBeLessThanOrEqual(3);
    const all = bh.flatMap((r) => r.windows);
    const share = all.filter((w) => w.flagged).length / all.length;
    expect(share).toBeLessThanOrEqual(0.05);
  });

  it("would flag far more without the adjustment (the check above has teeth)", () => {
    const raw = scans("none");
    const seedsWithFlags = raw.filter((r) => r.windows.some((w) => w.flagged)).length;
    expect(seedsWithFlags).toBeGreaterThan(15);
    const all = raw.flatMap((r) => r.windows);
    const share = all.filter((w) => w.flagged).length / all.length;
    // ≈ α of quiet windows flag with raw p, as expected of a valid test.
    expect(share).toBeGreaterThan(0.025);
    expect(share).toBeLessThan(0.08);
  });
});

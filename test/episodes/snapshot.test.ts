import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { episodeSnapshots, getEpisode } from "@/lib/db/episodes";
import { loadEpisodeContext } from "@/lib/episodes/context";
import { liveSource } from "@/lib/episodes/live-source";
import { syncComparison } from "@/lib/episodes/sync";
import { useTempDatabase } from "../helpers/temp-db";
import { PLANT, correctTally, plantedCount, seedMasterData, seedTallies } from "./helpers";

let ctx: Awaited<ReturnType<typeof useTempDatabase>>;
let id = 0;
beforeAll(async () => {
  ctx = await useTempDatabase();
  seedMasterData();
  seedTallies(0, 50);
  id = (await syncComparison(liveSource, "lines")).created[0];
});
afterAll(async () => ctx.cleanup());

describe("snapshot against the live result", () => {
  it("shows no difference while the data are unchanged", async () => {
    const view = (await loadEpisodeContext(liveSource, id))!;
    expect(view.snapshot?.reason).toBe("raised");
    expect(view.diff?.anyChange).toBe(false);
    expect(view.diff?.measures.every((m) => !m.changed)).toBe(true);
    expect(view.diff?.cells.length).toBeGreaterThan(0);
    expect(view.diff?.cells.every((c) => !c.changed)).toBe(true);
  });

  it("keeps what was seen and marks what a late correction changed: the driver cell, p and V", async () => {
    const record = (await getEpisode(id))!;
    const raised = (await episodeSnapshots(id))[0].analysis;
    const i = raised.peak!.rows.indexOf(PLANT.changeLine);
    const j = raised.peak!.columns.indexOf(PLANT.changeCategory);
    const thenObserved = raised.peak!.observed[i][j];
    // A late correction inside the peak window: day 1 of the window, shift A, halved.
    const date = record.peakStart;
    const was = plantedCount(date, PLANT.changeLine, "A", PLANT.changeCategory);
    correctTally(date, PLANT.changeLine, "A", PLANT.changeCategory, Math.floor(was / 2), "recount after sorting");

    const view = (await loadEpisodeContext(liveSource, id))!;
    // The stored snapshot is untouched.
    expect((await episodeSnapshots(id))[0].analysis.peak!.observed[i][j]).toBe(thenObserved);
    const diff = view.diff!;
    expect(diff.anyChange).toBe(true);
    const cell = diff.cells.find((c) => c.row === PLANT.changeLine && c.category === PLANT.changeCategory)!;
    expect(cell.changed).toBe(true);
    expect(cell.then?.observed).toBe(thenObserved);
    expect(cell.now?.observed).toBe(thenObserved - (was - Math.floor(was / 2)));
    expect(Math.abs(cell.now!.adjustedResidual)).toBeLessThan(Math.abs(cell.then!.adjustedResidual));
    const measure = (key: string) => diff.measures.find((m) => m.key === key)!;
    expect(measure("n")).toMatchObject({ changed: true, then: raised.peak!.n, now: raised.peak!.n - (was - Math.floor(was / 2)) });
    expect(measure("pValue").changed).toBe(true);
    expect(measure("cramersVCorrected").changed).toBe(true);
    expect(measure("pValue").then).toBe(raised.peak!.pValue);
    expect(measure("pValue").now).toBe(view.peak!.pValue);
    expect(measure("method").changed).toBe(false);
  });
});

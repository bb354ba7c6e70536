import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { db } from "@/lib/db/client";
import { countOpenEpisodes, episodeSnapshots, getEpisode, listEpisodes } from "@/lib/db/episodes";
import { liveSource } from "@/lib/episodes/live-source";
import { syncComparison } from "@/lib/episodes/sync";
import { useTempDatabase } from "../helpers/temp-db";
import { PLANT, seedMasterData, seedTallies, undoPlantedChange } from "./helpers";

let ctx: Awaited<ReturnType<typeof useTempDatabase>>;
beforeAll(async () => {
  ctx = await useTempDatabase();
  seedMasterData();
});
afterAll(async () => ctx.cleanup());

describe("syncing episode records with the scan", () => {
  let firstId = 0;

  it("creates one record, status new, with a raised snapshot of the peak window, when the scan finds the planted change", async () => {
    // Days 0–32: the change (from day 28) has run for 5 days.
    seedTallies(0, 33);
    const scan = await liveSource.scan((await liveSource.comparison("lines"))!);
    expect(scan.episodes.length).toBe(1);
    const summary = await syncComparison(liveSource, "lines");
    expect(summary.created.length).toBe(1);
    firstId = summary.created[0];
    const record = (await getEpisode(firstId))!;
    expect(record.status).toBe("new");
    expect(record.start).toBe(scan.episodes[0].start);
    expect(record.end).toBe(scan.episodes[0].end);
    expect(record.windows).toBe(scan.episodes[0].windows);
    expect(record.peakStart).toBe(scan.episodes[0].peak.start);
    expect(record.minAdjustedP).toBe(scan.episodes[0].peak.adjustedPValue);
    expect(record.drivers[0]).toMatchObject({ row: PLANT.changeLine, category: PLANT.changeCategory });
    const snapshots = await episodeSnapshots(firstId);
    expect(snapshots.map((s) => s.reason)).toEqual(["raised"]);
    const peak = snapshots[0].analysis.peak!;
    expect(peak.start).toBe(record.peakStart);
    expect(peak.pValue).toBe(scan.episodes[0].peak.pValue);
    expect(peak.adjustedPValue).toBe(scan.episodes[0].peak.adjustedPValue);
    expect(peak.observed.length).toBe(PLANT.lines.length);
    expect(peak.adjustedResiduals.length).toBe(PLANT.lines.length);
    expect(snapshots[0].analysis.config).toMatchObject({ compare: "line", windowDays: 7, alpha: 0.05, adjust: "bh" });
    expect(await countOpenEpisodes()).toBe(1);
  });

  it("is idempotent: a second sync of the same scan changes nothing", async () => {
    const before = await db().auditEvent.count();
    const row = await db().episode.findUniqueOrThrow({ where: { id: firstId } });
    const summary = await syncComparison(liveSource, "lines");
    // Not even lastSeenAt is rewritten within the refresh interval: viewing a page is not a write.
    expect((await db().episode.findUniqueOrThrow({ where: { id: firstId } })).updatedAt).toEqual(row.updatedAt);
    expect(summary).toMatchObject({ created: [], updated: [], gone: [], unchanged: [firstId] });
    expect(await db().episode.count()).toBe(1);
    expect(await db().auditEvent.count()).toBe(before);
  });

  it("grows the same record as new days extend the change", async () => {
    const before = (await getEpisode(firstId))!;
    seedTallies(33, 50);
    const summary = await syncComparison(liveSource, "lines");
    expect(summary.created).toEqual([]);
    expect(summary.updated).toEqual([firstId]);
    const after = (await getEpisode(firstId))!;
    expect(after.start <= before.start).toBe(true);
    expect(after.end > before.end).toBe(true);
    expect(after.windows).toBeGreaterThan(before.windows);
    expect(after.lastSeenAt.getTime()).toBeGreaterThanOrEqual(before.lastSeenAt.getTime());
    expect(await db().episode.count()).toBe(1);
    // Growing is not a new raise: still the one snapshot.
    expect((await episodeSnapshots(firstId)).length).toBe(1);
    const range = await db().auditEvent.findFirst({ where: { action: "episode.range", entityId: String(firstId) } });
    expect(range).not.toBeNull();
  });

  it("marks a record gone (never deletes it) when corrections remove the change", async () => {
    undoPlantedChange();
    const scan = await liveSource.scan((await liveSource.comparison("lines"))!);
    expect(scan.episodes.length).toBe(0);
    const summary = await syncComparison(liveSource, "lines");
    expect(summary.gone).toEqual([firstId]);
    const record = (await getEpisode(firstId))!;
    expect(record.goneAt).not.toBeNull();
    expect(record.status).toBe("new");
    expect(await listEpisodes({ includeGone: false })).toEqual([]);
    expect((await listEpisodes()).map((e) => e.id)).toEqual([firstId]);
    expect(await db().auditEvent.count({ where: { action: "episode.gone", entityId: String(firstId) } })).toBe(1);
  });
});

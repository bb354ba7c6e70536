import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { db } from "@/lib/db/client";
import { countOpenEpisodes, listEpisodes } from "@/lib/db/episodes";
import { parseEpisodeFilter, filterQuery } from "@/lib/episodes/filter";
import { liveSource } from "@/lib/episodes/live-source";
import { syncAllComparisons } from "@/lib/episodes/sync";
import { changeEpisodeStatus } from "@/lib/episodes/workflow";
import { useTempDatabase } from "../helpers/temp-db";
import { PLANT, seedMasterData, seedTallies, seedUsers } from "./helpers";

let ctx: Awaited<ReturnType<typeof useTempDatabase>>;
let users: ReturnType<typeof seedUsers>;
beforeAll(async () => {
  ctx = await useTempDatabase();
  seedMasterData();
  users = seedUsers();
  seedTallies(0, 50);
  await syncAllComparisons(liveSource);
});
afterAll(async () => ctx.cleanup());

describe("the list of flagged periods", () => {
  it("filters by comparison, line, category, status and date range", async () => {
    const all = await listEpisodes();
    const lines = all.filter((e) => e.comparison.code === "lines");
    expect(lines).toHaveLength(1);
    const id = lines[0].id;
    expect((await listEpisodes({ comparison: "lines" })).map((e) => e.id)).toEqual([id]);
    expect((await listEpisodes({ comparison: "lines", line: PLANT.changeLine })).map((e) => e.id)).toEqual([id]);
    expect((await listEpisodes({ comparison: "lines", category: PLANT.changeCategory })).map((e) => e.id)).toEqual([id]);
    expect(await listEpisodes({ comparison: "lines", category: "no-such-category" })).toEqual([]);
    // Overlap with the date range, either end open.
    expect((await listEpisodes({ comparison: "lines", from: lines[0].end })).map((e) => e.id)).toEqual([id]);
    expect(await listEpisodes({ comparison: "lines", from: "2026-06-01" })).toEqual([]);
    expect(await listEpisodes({ comparison: "lines", to: "2026-03-05" })).toEqual([]);
    expect((await listEpisodes({ comparison: "lines", from: "2026-03-01", to: lines[0].start })).map((e) => e.id)).toEqual([id]);
    const open = await countOpenEpisodes();
    expect(open).toBe(all.length);
    await changeEpisodeStatus(liveSource, id, "false-alarm", "Known trial run on L2", { id: users.engineer.id, name: users.engineer.name });
    expect(await countOpenEpisodes()).toBe(open - 1);
    expect((await listEpisodes({ status: "false-alarm" })).map((e) => e.id)).toEqual([id]);
    expect((await listEpisodes({ status: "open" })).some((e) => e.id === id)).toBe(false);
  });

  it("a comparison within one line (its shifts) concerns that line, whatever its driver rows", async () => {
    const comparison = await db().comparison.findUniqueOrThrow({ where: { code: `shifts-${PLANT.changeLine}` } });
    const e = await db().episode.create({
      data: {
        comparisonId: comparison.id,
        start: "2026-03-10",
        end: "2026-03-20",
        peakStart: "2026-03-12",
        peakEnd: "2026-03-18",
        windows: 5,
        minAdjustedP: 0.001,
        drivers: JSON.stringify([{ row: "B", category: "flash", windows: 5, adjustedResidual: 4.2 }]),
      },
    });
    expect((await listEpisodes({ line: PLANT.changeLine })).map((x) => x.id)).toContain(e.id);
    expect((await listEpisodes({ line: "L1" })).map((x) => x.id)).not.toContain(e.id);
    expect((await listEpisodes({ category: "flash" })).map((x) => x.id)).toContain(e.id);
  });

  it("reads the filter from a query string, dropping bad values with a message", () => {
    const { filter, errors } = parseEpisodeFilter(new URLSearchParams("status=open&line=L2&from=2026-03-01&to=nope&category=seal"));
    expect(filter).toEqual({ status: "open", line: "L2", from: "2026-03-01", category: "seal" });
    expect(errors).toHaveLength(1);
    expect(parseEpisodeFilter({ status: "done" }).errors[0]).toContain("Unknown status");
    expect(parseEpisodeFilter({ from: "2026-04-01", to: "2026-03-01" }).filter).toEqual({});
    expect(filterQuery(filter)).toBe("?status=open&line=L2&category=seal&from=2026-03-01");
    expect(filterQuery({})).toBe("");
  });
});

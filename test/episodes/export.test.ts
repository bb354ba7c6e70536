import { parse } from "csv-parse/sync";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { addDays } from "@/lib/dates";
import { addEpisodeNote, getEpisode, listEpisodes } from "@/lib/db/episodes";
import { CSV_HEADER, episodesCsv, episodesJson, gatherEpisodes } from "@/lib/episodes/export";
import { liveSource } from "@/lib/episodes/live-source";
import { syncComparison } from "@/lib/episodes/sync";
import type { ScanResult } from "@/lib/monitor/types";
import { analyzeTable } from "@/lib/stats/analyze-table";
import { useTempDatabase } from "../helpers/temp-db";
import { PLANT, plantedCount, seedMasterData, seedTallies, seedUsers } from "./helpers";

let ctx: Awaited<ReturnType<typeof useTempDatabase>>;
let id = 0;
let scan: ScanResult;
beforeAll(async () => {
  ctx = await useTempDatabase();
  seedMasterData();
  const users = seedUsers();
  seedTallies(0, 50);
  id = (await syncComparison(liveSource, "lines")).created[0];
  await addEpisodeNote(id, "=HYPERLINK(\"http://example.invalid\")", { id: users.engineer.id, name: users.engineer.name });
  scan = await liveSource.scan((await liveSource.comparison("lines"))!);
});
afterAll(async () => ctx.cleanup());

/** The window's table straight from the planted counts, independent of the app's SQL. */
function truthTable(start: string, days: number, rows: string[], columns: string[]): number[][] {
  return rows.map((line) =>
    columns.map((category) => {
      let sum = 0;
      for (let d = 0; d < days; d++) for (const shift of PLANT.shifts) sum += plantedCount(addDays(start, d), line, shift, category);
      return sum;
    }),
  );
}

describe("episode exports", () => {
  it("CSV: tidy long form, one row per episode × window × group × category, numbers equal to the scan's", async () => {
    const record = (await getEpisode(id))!;
    const text = episodesCsv(await gatherEpisodes(liveSource, [record]));
    expect(text.endsWith("\r\n")).toBe(true);
    const rows = parse(text, { columns: true, skip_empty_lines: true }) as Record<string, string>[];
    expect(Object.keys(rows[0])).toEqual([...CSV_HEADER]);
    const episode = scan.episodes[0];
    const flagged = scan.windows.filter((w) => w.flagged && w.start >= episode.start && w.end <= episode.end);
    expect(flagged.length).toBe(episode.windows);
    expect(rows.length).toBe(flagged.length * PLANT.lines.length * PLANT.categories.length);
    expect([...new Set(rows.map((r) => r.window_start))]).toEqual(flagged.map((w) => w.start));
    for (const w of flagged) {
      const mine = rows.filter((r) => r.window_start === w.start);
      const columns = w.categories;
      const truth = truthTable(w.start, 7, w.groups, columns);
      const a = analyzeTable(truth);
      for (const r of mine) {
        const i = w.groups.indexOf(r.group);
        const j = columns.indexOf(r.category.startsWith("'=") ? r.category.slice(1) : r.category);
        expect(i).toBeGreaterThanOrEqual(0);
        expect(j).toBeGreaterThanOrEqual(0);
        expect(Number(r.observed)).toBe(truth[i][j]);
        expect(Number(r.expected)).toBe(a.expected[i][j]);
        expect(Number(r.adjusted_residual)).toBe(a.adjustedResiduals[i][j]);
        expect(Number(r.contribution)).toBe(a.contributions[i][j]);
        expect(Number(r.p_value)).toBe(w.pValue);
        expect(Number(r.adjusted_p_value)).toBe(w.adjustedPValue);
        expect(Number(r.chi_square)).toBe(w.chiSquare);
        expect(r.method).toBe(w.method);
        expect(r.window_flagged).toBe("true");
        expect(r.episode_id).toBe(String(id));
        expect(r.status).toBe("new");
        const isDriver = w.drivers.some((d) => d.row === r.group && d.category === columns[j]);
        expect(r.driver).toBe(String(isDriver));
      }
    }
    expect(rows.some((r) => r.group === PLANT.changeLine && r.category === PLANT.changeCategory && r.driver === "true")).toBe(true);
  });

  it("CSV: a category code that starts like a formula is neutralised, and fields are RFC 4180 quoted", async () => {
    const text = episodesCsv(await gatherEpisodes(liveSource, await listEpisodes()));
    const lines = text.split("\r\n");
    expect(lines.some((l) => l.includes(",'=SUM(A1),"))).toBe(true);
    expect(lines.some((l) => /,=SUM\(A1\),/.test(l))).toBe(false);
  });

  it("JSON: the same windows and cells, plus the configuration, notes and snapshots", async () => {
    const record = (await getEpisode(id))!;
    const exported = await gatherEpisodes(liveSource, [record]);
    const doc = JSON.parse(JSON.stringify(await episodesJson(exported, { exportedAt: new Date("2026-05-01T10:00:00Z"), exportedBy: "Erin Engineer" }))) as {
      exportedBy: string;
      episodes: {
        id: number;
        configuration: Record<string, unknown>;
        windows: { start: string; pValue: number; adjustedPValue: number; method: string; cells: { group: string; category: string; observed: number; expected: number; adjustedResidual: number; contribution: number }[] }[];
        notes: { author: string; body: string }[];
        snapshots: { reason: string }[];
      }[];
    };
    expect(doc.exportedBy).toBe("Erin Engineer");
    const e = doc.episodes[0];
    expect(e.id).toBe(id);
    expect(e.configuration).toMatchObject({ compare: "line", windowDays: 7, stepDays: 1, alpha: 0.05, adjust: "bh", minEffect: 0, sparse: "auto" });
    const csvRows = parse(episodesCsv(exported), { columns: true }) as Record<string, string>[];
    const cells = e.windows.flatMap((w) => w.cells.map((c) => ({ w, c })));
    expect(cells.length).toBe(csvRows.length);
    cells.forEach(({ w, c }, k) => {
      const r = csvRows[k];
      expect(r.window_start).toBe(w.start);
      expect(r.group).toBe(c.group);
      expect(Number(r.observed)).toBe(c.observed);
      expect(Number(r.expected)).toBe(c.expected);
      expect(Number(r.adjusted_residual)).toBe(c.adjustedResidual);
      expect(Number(r.contribution)).toBe(c.contribution);
      expect(Number(r.p_value)).toBe(w.pValue);
    });
    const peak = scan.episodes[0].peak;
    expect(e.windows.find((w) => w.start === peak.start)).toMatchObject({ pValue: peak.pValue, adjustedPValue: peak.adjustedPValue, method: peak.method });
    expect(e.notes).toEqual([{ author: "Erin Engineer", createdAt: expect.any(String), body: "=HYPERLINK(\"http://example.invalid\")" }]);
    expect(e.snapshots.map((s) => s.reason)).toEqual(["raised"]);
  });
});

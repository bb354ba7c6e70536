import { parse } from "csv-parse/sync";
import { Writable } from "node:stream";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { parseExportArgs } from "@/lib/cli/export";
import { db } from "@/lib/db/client";
import { episodesExporter, parseEpisodesExportArgs } from "@/lib/episodes/export";
import { useTempDatabase } from "../helpers/temp-db";
import { PLANT, seedMasterData, seedTallies } from "./helpers";

let ctx: Awaited<ReturnType<typeof useTempDatabase>>;
beforeAll(async () => {
  ctx = await useTempDatabase();
  seedMasterData();
  seedTallies(0, 50);
});
afterAll(async () => ctx.cleanup());

function sink(): { out: Writable; text: () => string } {
  const chunks: string[] = [];
  const out = new Writable({
    write(chunk, _enc, done) {
      chunks.push(String(chunk));
      done();
    },
  });
  return { out, text: () => chunks.join("") };
}

describe("npm run export -- --episodes", () => {
  it("is dispatched by the command line's parser with its own arguments", () => {
    const { exporter, args } = parseExportArgs(["--episodes", "--status", "open", "--format", "json", "--from", "2026-03-01"]);
    expect(exporter).toBe(episodesExporter);
    expect(args.rest).toEqual(["--status", "open", "--format", "json"]);
    expect(args.from).toBe("2026-03-01");
    expect(() => parseExportArgs(["--status", "open"])).toThrow(/unknown argument/);
    expect(parseEpisodesExportArgs(args.rest)).toEqual({ status: "open", format: "json" });
    expect(() => parseEpisodesExportArgs(["--status", "closed"])).toThrow(/--status closed/);
    expect(() => parseEpisodesExportArgs(["--format", "xlsx"])).toThrow(/--format xlsx/);
    expect(() => parseEpisodesExportArgs(["--status"])).toThrow(/needs a value/);
  });

  it("syncs, writes the CSV and records the export", async () => {
    const { out, text } = sink();
    const rows = await episodesExporter.run({ from: null, to: null, lines: [], rest: ["--status", "new"] }, out, undefined, { id: null, name: "command line (test)" });
    const parsed = parse(text(), { columns: true }) as Record<string, string>[];
    expect(parsed.length).toBe(rows);
    expect(rows).toBeGreaterThan(0);
    expect(parsed.some((r) => r.comparison === "lines" && r.group === PLANT.changeLine && r.category === PLANT.changeCategory && r.driver === "true")).toBe(true);
    expect(parsed.every((r) => r.status === "new")).toBe(true);
    const audit = await db().auditEvent.findFirst({ where: { action: "export.episodes.csv" }, orderBy: { id: "desc" } });
    expect(audit?.actorName).toBe("command line (test)");
    expect(JSON.parse(audit!.after!)).toMatchObject({ via: "command line", filter: { status: "new" } });
  });

  it("writes JSON with the configuration, filtered by dates and line", async () => {
    const { out, text } = sink();
    const count = await episodesExporter.run({ from: "2026-06-01", to: null, lines: [], rest: ["--format", "json"] }, out, undefined, { id: null, name: "command line (test)" });
    const doc = JSON.parse(text()) as { episodes: unknown[] };
    expect(count).toBe(0);
    expect(doc.episodes).toEqual([]);
    const { out: out2, text: text2 } = sink();
    await episodesExporter.run({ from: null, to: null, lines: [PLANT.changeLine], rest: ["--format", "json"] }, out2, undefined, { id: null, name: "t" });
    const doc2 = JSON.parse(text2()) as { episodes: { comparison: { code: string }; configuration: { windowDays: number } }[] };
    expect(doc2.episodes.find((e) => e.comparison.code === "lines")?.configuration.windowDays).toBe(7);
  });
});

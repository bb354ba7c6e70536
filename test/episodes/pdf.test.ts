import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { addEpisodeNote, setEpisodeActionRefs } from "@/lib/db/episodes";
import { briefDataOf, loadEpisodeContext } from "@/lib/episodes/context";
import { liveSource } from "@/lib/episodes/live-source";
import { renderEpisodeBrief } from "@/lib/episodes/pdf";
import { syncComparison } from "@/lib/episodes/sync";
import { changeEpisodeStatus } from "@/lib/episodes/workflow";
import { useTempDatabase } from "../helpers/temp-db";
import { PLANT, correctTally, plantedCount, seedMasterData, seedTallies, seedUsers } from "./helpers";
import { pdfDeclaredPages, pdfPageCount, pdfStreams, pdfText, pdfTextLines } from "./pdf-reader";

let ctx: Awaited<ReturnType<typeof useTempDatabase>>;
let id = 0;
let text = "";
let pdf: Buffer;
let compressed: Buffer;
let data: Parameters<typeof renderEpisodeBrief>[0];
beforeAll(async () => {
  ctx = await useTempDatabase();
  seedMasterData();
  const users = seedUsers();
  seedTallies(0, 50);
  id = (await syncComparison(liveSource, "lines")).created[0];
  const erin = { id: users.engineer.id, name: users.engineer.name };
  await changeEpisodeStatus(liveSource, id, "investigating", null, erin);
  await addEpisodeNote(id, "Sealing die on L2 inspected: wear on cavity 4.", erin);
  await setEpisodeActionRefs(id, "CA-2026-041", erin);
  // A late correction, so the brief has something under "Then and now".
  const view = (await loadEpisodeContext(liveSource, id))!;
  const date = view.record.peakStart;
  correctTally(date, PLANT.changeLine, "B", PLANT.changeCategory, plantedCount(date, PLANT.changeLine, "B", PLANT.changeCategory) - 5);
  const fresh = (await loadEpisodeContext(liveSource, id))!;
  data = briefDataOf(fresh, "Erin Engineer", new Date("2026-05-01T09:30:00Z"));
  pdf = await renderEpisodeBrief(data, { compress: false });
  compressed = await renderEpisodeBrief(data);
  text = pdfText(pdf);
});
afterAll(async () => ctx.cleanup());

describe("the PDF brief", () => {
  it("is a PDF of a few A4 pages, drawn without raster images", () => {
    expect(pdf.subarray(0, 5).toString("latin1")).toBe("%PDF-");
    expect(pdf.subarray(-6).toString("latin1")).toContain("%%EOF");
    const pages = pdfPageCount(pdf);
    expect(pages).toBeGreaterThanOrEqual(2);
    expect(pages).toBeLessThanOrEqual(6);
    expect(pdfDeclaredPages(pdf)).toBe(pages);
    expect(pdf.toString("latin1")).not.toContain("/Subtype /Image");
    expect(pdf.toString("latin1")).toContain("/MediaBox [0 0 595.28 841.89]");
    expect(text).toContain(`page ${pages} of ${pages}`);
  });

  it("draws the heatmap and the timeline as vector paths: a filled rectangle per heatmap cell, a polyline per timeline", () => {
    const content = pdfStreams(pdf).join("\n");
    const rects = (content.match(/ re\n/g) ?? []).length;
    const lines = (content.match(/ l\n/g) ?? []).length;
    // Heatmap: lines × categories cells (each filled and outlined), legend swatches, table shading.
    expect(rects).toBeGreaterThan(2 * PLANT.lines.length * PLANT.categories.length + 9);
    expect(lines).toBeGreaterThan(20);
  });

  it("says what was flagged, with the reading, the drivers and the tables", () => {
    expect(text).toContain(`Flagged period #${id}: All lines compared`);
    expect(text).toContain("What was flagged");
    expect(text).toContain("The mix of defect categories differs between the lines");
    expect(text).toContain("Drivers at the peak window");
    expect(pdfTextLines(pdf).some((l) => l.includes("Line 2") )).toBe(true);
    expect(text).toContain("Seal leak");
    expect(text).toContain("Adjusted residuals at the peak window");
    expect(text).toContain("Observed (expected) counts at the peak window");
    expect(text).toContain("Timeline around the flagged period");
  });

  it("carries status, owner, action references, notes, the then-and-now, configuration and cautions", () => {
    expect(text).toContain("Status: Under investigation");
    expect(text).toContain("Erin Engineer");
    expect(text).toContain("CA-2026-041");
    expect(text).toContain("Sealing die on L2 inspected: wear on cavity 4.");
    expect(text).toContain("Then and now");
    expect(text).toContain("changed");
    expect(text).toContain("Configuration used");
    expect(text).toContain("7 days, stepping 1 day");
    expect(text).toContain("Benjamini-Hochberg");
    expect(text).toContain("not proof of a cause");
    expect(text).toContain("Very large samples make small, unimportant differences significant");
    expect(text).toContain("says nothing about the defect rate");
    expect(text).toContain("quality system, customer requirements and local regulations");
  });

  it("compresses its content streams by default, with the same pages and text", () => {
    expect(compressed.length).toBeLessThan(pdf.length / 2);
    expect(compressed.toString("latin1")).toContain("/FlateDecode");
    expect(pdfPageCount(compressed)).toBe(pdfPageCount(pdf));
    expect(pdfText(compressed)).toBe(text);
  });

  it("prints only characters the built-in font has", () => {
    expect(text).not.toMatch(/[−χα≥≤⁻▲▼]/);
    expect(text).not.toContain("?");
  });
});

describe("the brief's peak test line for a Monte Carlo peak", () => {
  const render = async (monteCarlo: NonNullable<typeof data.peak>["monteCarlo"]) =>
    pdfText(await renderEpisodeBrief({ ...data, peak: { ...data.peak!, method: "monte-carlo", monteCarlo } }, { compress: false }));

  it("names sequential stopping and the count when the drawing stopped at the h-th table", async () => {
    const text = await render({ replicates: 1234, seed: 42, standardError: 0.0077, hits: 100, stoppedEarly: true, stopAfterHits: 100, maxReplicates: 10_000 });
    expect(text).toContain("sequential Monte Carlo: stopped after 100 random tables");
    expect(text).toContain("p = 100/1,234");
  });

  it("keeps a snapshot from before sequential stopping readable (replicates and seed only)", async () => {
    const text = await render({ replicates: 10_000, seed: 42, standardError: 0.0006 });
    expect(text).toContain("Monte Carlo: 10,000 random tables");
    expect(text).not.toContain("sequential");
  });
});

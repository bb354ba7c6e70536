import { userInfo } from "node:os";
import type { Writable } from "node:stream";
import { auditExport, episodeNotes, episodeSnapshots, listEpisodes, type EpisodeFilter, type EpisodeRecord } from "@/lib/db/episodes";
import { csvStream, toCsv, writeCsv, type CsvValue } from "@/lib/csv/write-csv";
import type { ScanResult } from "@/lib/monitor/types";
import { liveSource } from "./live-source";
import { episodeWindows, overlappingEpisode, type EpisodeSource } from "./source";
import { EPISODE_STATUSES, statusLabel } from "./status";
import { syncAllComparisons } from "./sync";
import type { Actor, ComparisonInfo, WindowAnalysis } from "./types";

/**
 * Exports of flagged periods for people who work in spreadsheets and scripts.
 *
 * CSV, tidy long form: one row per episode × window × group × category, with the
 * observed and expected count, Haberman's adjusted residual, the cell's share of X², and
 * the window's p, adjusted p and method (RFC 4180 quoting and OWASP formula
 * neutralisation by lib/csv). Numbers are written at full precision, so they equal the
 * scan's. JSON: the same windows and cells, plus the configuration each comparison was
 * scanned with, the record's workflow fields, notes and snapshots.
 *
 * The windows of an episode are its flagged windows in the live scan; for a record the
 * scan no longer finds, the testable windows inside its stored range (none flag).
 */

export const EXPORT_FORMATS = ["csv", "json", "pdf"] as const;
export type ExportFormat = (typeof EXPORT_FORMATS)[number];

export interface ExportedEpisode {
  record: EpisodeRecord;
  comparison: ComparisonInfo;
  live: { start: string; end: string; windows: number } | null;
  windows: WindowAnalysis[];
}

/** The live windows of each record, with one scan per comparison. */
export async function gatherEpisodes(source: EpisodeSource, records: readonly EpisodeRecord[]): Promise<ExportedEpisode[]> {
  const scans = new Map<number, { comparison: ComparisonInfo; scan: ScanResult } | null>();
  const out: ExportedEpisode[] = [];
  for (const record of records) {
    let entry = scans.get(record.comparison.id);
    if (entry === undefined) {
      const comparison = await source.comparison(record.comparison.id);
      entry = comparison ? { comparison, scan: await source.scan(comparison) } : null;
      scans.set(record.comparison.id, entry);
    }
    if (!entry) continue;
    const liveEpisode = overlappingEpisode(entry.scan, record);
    const scanned = liveEpisode
      ? episodeWindows(entry.scan, liveEpisode)
      : entry.scan.windows.filter((w) => w.testable && w.start >= record.start && w.end <= record.end);
    const windows: WindowAnalysis[] = [];
    for (const w of scanned) {
      const analysis = await source.window(entry.comparison, w.start);
      if (analysis) windows.push(analysis);
    }
    out.push({
      record,
      comparison: entry.comparison,
      live: liveEpisode ? { start: liveEpisode.start, end: liveEpisode.end, windows: liveEpisode.windows } : null,
      windows,
    });
  }
  return out;
}

export const CSV_HEADER = [
  "episode_id",
  "comparison",
  "status",
  "episode_start",
  "episode_end",
  "window_start",
  "window_end",
  "window_flagged",
  "group",
  "category",
  "observed",
  "expected",
  "adjusted_residual",
  "contribution",
  "driver",
  "n",
  "chi_square",
  "df",
  "p_value",
  "adjusted_p_value",
  "method",
  "cramers_v_corrected",
] as const;

/** The CSV rows (without header), in episode, window, group, category order. */
export function* csvRows(episodes: readonly ExportedEpisode[]): Generator<CsvValue[]> {
  for (const e of episodes) {
    const range = e.live ?? e.record;
    for (const w of e.windows) {
      const drivers = new Set(w.drivers.map((d) => `${d.row}\u0000${d.category}`));
      for (let i = 0; i < w.rows.length; i++) {
        for (let j = 0; j < w.columns.length; j++) {
          yield [
            e.record.id,
            e.comparison.code,
            e.record.status,
            range.start,
            range.end,
            w.start,
            w.end,
            w.flagged,
            w.rows[i],
            w.columns[j],
            w.observed[i][j],
            w.expected[i][j],
            w.adjustedResiduals[i][j],
            w.contributions[i][j],
            drivers.has(`${w.rows[i]}\u0000${w.columns[j]}`),
            w.n,
            w.chiSquare,
            w.df,
            w.pValue,
            w.adjustedPValue,
            w.method,
            w.cramersVCorrected,
          ];
        }
      }
    }
  }
}

/** The whole CSV document. */
export function episodesCsv(episodes: readonly ExportedEpisode[]): string {
  return toCsv(CSV_HEADER, csvRows(episodes));
}

/** The CSV as a stream of UTF-8 chunks (route handlers). */
export function episodesCsvStream(episodes: readonly ExportedEpisode[]): ReadableStream<Uint8Array> {
  return csvStream(CSV_HEADER, csvRows(episodes));
}

export interface ExportMeta {
  exportedAt: Date;
  exportedBy: string;
  filter?: EpisodeFilter | null;
}

function cellsOf(w: WindowAnalysis) {
  const drivers = new Set(w.drivers.map((d) => `${d.row}\u0000${d.category}`));
  const cells = [];
  for (let i = 0; i < w.rows.length; i++) {
    for (let j = 0; j < w.columns.length; j++) {
      cells.push({
        group: w.rows[i],
        category: w.columns[j],
        observed: w.observed[i][j],
        expected: w.expected[i][j],
        adjustedResidual: w.adjustedResiduals[i][j],
        contribution: w.contributions[i][j],
        driver: drivers.has(`${w.rows[i]}\u0000${w.columns[j]}`),
      });
    }
  }
  return cells;
}

/** The JSON document: windows and cells as in the CSV, plus configuration, workflow, notes and snapshots. */
export async function episodesJson(episodes: readonly ExportedEpisode[], meta: ExportMeta): Promise<unknown> {
  const out = [];
  for (const e of episodes) {
    const [notes, snapshots] = await Promise.all([episodeNotes(e.record.id), episodeSnapshots(e.record.id)]);
    const r = e.record;
    out.push({
      id: r.id,
      comparison: { code: e.comparison.code, name: e.comparison.name, compare: e.comparison.compare },
      configuration: e.comparison.config,
      status: r.status,
      statusLabel: statusLabel(r.status),
      owner: r.owner?.name ?? null,
      actionRefs: r.actionRefs,
      start: r.start,
      end: r.end,
      peakStart: r.peakStart,
      peakEnd: r.peakEnd,
      flaggedWindows: r.windows,
      minAdjustedP: r.minAdjustedP,
      drivers: r.drivers,
      firstSeenAt: r.firstSeenAt.toISOString(),
      lastSeenAt: r.lastSeenAt.toISOString(),
      goneAt: r.goneAt?.toISOString() ?? null,
      live: e.live,
      windows: e.windows.map((w) => ({
        start: w.start,
        end: w.end,
        flagged: w.flagged,
        testable: w.testable,
        reason: w.reason,
        n: w.n,
        chiSquare: w.chiSquare,
        df: w.df,
        pValue: w.pValue,
        adjustedPValue: w.adjustedPValue,
        method: w.method,
        monteCarlo: w.monteCarlo,
        cramersVCorrected: w.cramersVCorrected,
        critical: w.critical,
        pooled: w.pooled,
        expectedCounts: w.expectedCounts,
        groups: w.rows,
        categories: w.columns,
        cells: cellsOf(w),
      })),
      notes: notes.map((n) => ({ author: n.author.name, createdAt: n.createdAt.toISOString(), body: n.body })),
      snapshots: snapshots.map((s) => ({ reason: s.reason, status: s.status, takenAt: s.takenAt.toISOString(), analysis: s.analysis })),
    });
  }
  return {
    format: "linemix.episodes",
    version: 1,
    exportedAt: meta.exportedAt.toISOString(),
    exportedBy: meta.exportedBy,
    filter: meta.filter ?? null,
    episodes: out,
  };
}

/** A file name like "linemix-episode-12.csv" or "linemix-episodes-2026-12-01.json". */
export function exportFileName(format: ExportFormat, episodeId: number | null, now = new Date()): string {
  return episodeId === null ? `linemix-episodes-${now.toISOString().slice(0, 10)}.${format}` : `linemix-episode-${episodeId}.${format}`;
}

/** Arguments of `npm run export -- --episodes`: --status S (or "open"), --format csv|json. */
export function parseEpisodesExportArgs(rest: readonly string[]): { status: EpisodeFilter["status"] | null; format: "csv" | "json" } {
  let status: EpisodeFilter["status"] | null = null;
  let format: "csv" | "json" = "csv";
  for (let i = 0; i < rest.length; i++) {
    const flag = rest[i];
    const value = rest[i + 1];
    if ((flag === "--status" || flag === "--format") && (value === undefined || value.startsWith("--"))) throw new RangeError(`${flag} needs a value`);
    if (flag === "--status") {
      if (value !== "open" && !(EPISODE_STATUSES as readonly string[]).includes(value)) {
        throw new RangeError(`--status ${value}: use open or one of ${EPISODE_STATUSES.join(", ")}`);
      }
      status = value as EpisodeFilter["status"];
      i++;
    } else if (flag === "--format") {
      if (value !== "csv" && value !== "json") throw new RangeError(`--format ${value}: use csv or json`);
      format = value;
      i++;
    } else throw new RangeError(`unknown argument ${flag} for --episodes`);
  }
  return { status, format };
}

/** Who runs the command line, for the audit trail. */
export function commandLineActor(): Actor {
  let user = process.env.LINEMIX_ACTOR ?? "";
  if (!user) {
    try {
      user = userInfo().username;
    } catch {
      user = "unknown";
    }
  }
  return { id: null, name: `command line (${user})` };
}

/**
 * The `--episodes` exporter of `npm run export`: syncs the records with the latest scans,
 * then writes the filtered list (--status, and the common --from/--to/--line) as CSV or
 * JSON, and records the export. Resolves with the number of rows (CSV) or episodes (JSON).
 */
export const episodesExporter = {
  flag: "--episodes",
  summary: "flagged periods: --status S (or open), --format csv|json; long-form cells or JSON with configuration",
  ownArguments: true,
  async run(
    args: { from: string | null; to: string | null; lines: string[]; rest: string[] },
    out: Writable,
    source: EpisodeSource = liveSource,
    actor: Actor = commandLineActor(),
  ): Promise<number> {
    const { status, format } = parseEpisodesExportArgs(args.rest);
    await syncAllComparisons(source);
    const filter: EpisodeFilter = {};
    if (status) filter.status = status;
    if (args.from) filter.from = args.from;
    if (args.to) filter.to = args.to;
    let records: EpisodeRecord[];
    if (args.lines.length === 0) records = await listEpisodes(filter);
    else {
      const byId = new Map<number, EpisodeRecord>();
      for (const line of args.lines) for (const r of await listEpisodes({ ...filter, line })) byId.set(r.id, r);
      records = [...byId.values()].sort((a, b) => (a.start < b.start ? 1 : a.start > b.start ? -1 : b.id - a.id));
    }
    const exported = await gatherEpisodes(source, records);
    const recorded = { ...filter, ...(args.lines.length ? { lines: args.lines } : {}) };
    let count: number;
    if (format === "csv") count = await writeCsv(out, CSV_HEADER, csvRows(exported));
    else {
      const doc = await episodesJson(exported, { exportedAt: new Date(), exportedBy: actor.name, filter: recorded as EpisodeFilter });
      await new Promise<void>((resolve, reject) => out.write(`${JSON.stringify(doc, null, 2)}\n`, (e) => (e ? reject(e) : resolve())));
      count = exported.length;
    }
    await auditExport(actor, { format, episodeIds: records.map((r) => r.id), list: true, filter: recorded, via: "command line" });
    return count;
  },
};

// npm run export -- [--from YYYY-MM-DD] [--to YYYY-MM-DD] [--line CODE ...] [--units]
// CSV to stdout in the import's columns: one row per date, shift, line and category with
// the summed count of current entries (--units: inspected units per date, shift, line).
// Each kind of export is an Exporter chosen by its flag; add one to EXPORTERS to extend.
import type { Writable } from "node:stream";
import { closeDb, rawDb } from "../db/client";
import { iterateUnitTotals } from "../db/inspections";
import { applyPendingMigrations } from "../db/migrate";
import { iterateCellTotals } from "../db/tallies";
import { writeCsv } from "../csv/write-csv";
import { isIsoDate } from "../dates";
import { TALLY_COLUMNS, UNITS_COLUMNS } from "../intake/csv-read";
import { episodesExporter } from "../episodes/export";

export type ExportArgs = {
  from: string | null;
  to: string | null;
  lines: string[];
  /** Arguments the common parser did not consume, for the chosen exporter. */
  rest: string[];
};

export type Exporter = {
  /** The flag that selects it; null for the default (tallies). */
  flag: string | null;
  summary: string;
  run(args: ExportArgs, out: Writable): Promise<number>;
  /** Reads the arguments the common parser did not consume (args.rest) itself. */
  ownArguments?: boolean;
};

const tallies: Exporter = {
  flag: null,
  summary: "summed tally per date, shift, line, category (the import's tally columns)",
  run: (args, out) => writeCsv(out, TALLY_COLUMNS, iterateCellTotals({ from: args.from, to: args.to, lineCodes: args.lines }, rawDb())),
};

const units: Exporter = {
  flag: "--units",
  summary: "summed inspected units per date, shift, line (the import's units columns)",
  run: (args, out) => writeCsv(out, UNITS_COLUMNS, iterateUnitTotals({ from: args.from, to: args.to, lineCodes: args.lines }, rawDb())),
};

/** Exporters by selecting flag. Another exporter (e.g. --episodes) is added here. */
export const EXPORTERS: Exporter[] = [tallies, units, episodesExporter];

const USAGE = [
  "usage: npm run export -- [--from YYYY-MM-DD] [--to YYYY-MM-DD] [--line CODE ...] [KIND]",
  ...EXPORTERS.map((e) => `  ${(e.flag ?? "(default)").padEnd(12)} ${e.summary}`),
].join("\n");

class UsageError extends Error {}

export function parseExportArgs(argv: string[]): { exporter: Exporter; args: ExportArgs } {
  const args: ExportArgs = { from: null, to: null, lines: [], rest: [] };
  const chosen: Exporter[] = [];
  for (let i = 0; i < argv.length; i += 1) {
    const a = argv[i];
    const value = () => {
      const v = argv[i + 1];
      if (v === undefined || v.startsWith("--")) throw new UsageError(`${a} needs a value`);
      i += 1;
      return v;
    };
    if (a === "--from" || a === "--to") {
      const v = value();
      if (!isIsoDate(v)) throw new UsageError(`${a} ${v}: not a calendar date in YYYY-MM-DD form`);
      if (a === "--from") args.from = v;
      else args.to = v;
    } else if (a === "--line") {
      args.lines.push(...value().split(",").filter(Boolean));
      while (argv[i + 1] !== undefined && !argv[i + 1].startsWith("--")) args.lines.push(...argv[++i].split(",").filter(Boolean));
    } else {
      const exporter = EXPORTERS.find((e) => e.flag === a);
      if (exporter) chosen.push(exporter);
      else args.rest.push(a);
    }
  }
  if (args.from && args.to && args.from > args.to) throw new UsageError(`--from ${args.from} is after --to ${args.to}`);
  if (chosen.length > 1) throw new UsageError(`choose one kind of export, got ${chosen.map((e) => e.flag).join(" and ")}`);
  const exporter = chosen[0] ?? tallies;
  if (args.rest.length && !exporter.ownArguments) throw new UsageError(`unknown argument ${args.rest.join(" ")}`);
  return { exporter, args };
}

async function main(): Promise<number> {
  const argv = process.argv.slice(2);
  if (argv.includes("--help") || argv.includes("-h")) {
    process.stdout.write(`${USAGE}\n`);
    return 0;
  }
  let parsed: ReturnType<typeof parseExportArgs>;
  try {
    parsed = parseExportArgs(argv);
  } catch (error) {
    if (error instanceof UsageError) {
      process.stderr.write(`${error.message}\n${USAGE}\n`);
      return 2;
    }
    throw error;
  }
  await applyPendingMigrations();
  if (parsed.args.lines.length) {
    const known = new Set((rawDb().prepare("SELECT code FROM Line").all() as { code: string }[]).map((r) => r.code));
    const unknown = parsed.args.lines.filter((l) => !known.has(l));
    if (unknown.length) {
      process.stderr.write(`unknown line${unknown.length > 1 ? "s" : ""}: ${unknown.join(", ")}\n`);
      return 1;
    }
  }
  process.stdout.on("error", (error: NodeJS.ErrnoException) => {
    // A closed pipe (e.g. `| head`) ends the export quietly.
    if (error.code === "EPIPE") process.exit(0);
    throw error;
  });
  const rows = await parsed.exporter.run(parsed.args, process.stdout);
  process.stderr.write(`exported ${rows.toLocaleString("en")} rows\n`);
  return 0;
}

if (process.argv[1] && /export\.ts$/.test(process.argv[1])) {
  main()
    .then(async (code) => {
      await closeDb();
      process.exitCode = code;
    })
    .catch((error: unknown) => {
      process.stderr.write(`export failed: ${error instanceof Error ? error.message : String(error)}\n`);
      process.exit(1);
    });
}

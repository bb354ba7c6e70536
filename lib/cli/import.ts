// npm run import -- FILE [--dry-run] [--add-missing] [--force]
// Imports a tally file (date,shift,line,category,count[,product,note]) or an
// inspected-units file (date,shift,line,units[,product]). All or nothing: any bad row
// refuses the whole file with every problem listed by file line; nothing is written.
import { createReadStream, statSync } from "node:fs";
import path from "node:path";
import { closeDb, rawDb } from "../db/client";
import { databaseTrouble } from "../db/errors";
import { applyPendingMigrations } from "../db/migrate";
import { cliActor } from "../intake/actor";
import { formatProblem } from "../intake/csv-read";
import { importCsv, type ImportOutcome } from "../intake/import";

const USAGE = "usage: npm run import -- FILE [--dry-run] [--add-missing] [--force]";
const FLAGS = new Set(["--dry-run", "--add-missing", "--force"]);

function fail(message: string, code = 1): never {
  process.stderr.write(`${message}\n`);
  process.exit(code);
}

function describe(outcome: ImportOutcome): string {
  const what = outcome.kind === "units" ? "inspected-units" : "tally";
  const total = outcome.kind === "units" ? "units" : "defects";
  return (
    `${outcome.rows.toLocaleString("en")} ${what} rows, ${outcome.summary.firstDate} … ${outcome.summary.lastDate}, ` +
    `${outcome.summary.total.toLocaleString("en")} ${total}`
  );
}

function createdText(outcome: ImportOutcome, verb: string): string[] {
  const lines: string[] = [];
  for (const [kind, codes] of Object.entries(outcome.created)) {
    if (codes.length) lines.push(`${verb} ${kind}${codes.length > 1 ? "s" : ""}: ${codes.join(", ")}`);
  }
  return lines;
}

async function main(): Promise<number> {
  const args = process.argv.slice(2);
  const files = args.filter((a) => !a.startsWith("--"));
  const flags = args.filter((a) => a.startsWith("--"));
  const unknown = flags.filter((f) => !FLAGS.has(f));
  if (args.includes("--help") || args.includes("-h")) {
    process.stdout.write(`${USAGE}\n`);
    return 0;
  }
  if (unknown.length) fail(`unknown option ${unknown.join(", ")}\n${USAGE}`, 2);
  if (files.length !== 1) fail(files.length === 0 ? `no file given\n${USAGE}` : `one file at a time, got ${files.length}\n${USAGE}`, 2);
  const file = files[0];
  try {
    if (!statSync(file).isFile()) fail(`${file}: not a file`);
  } catch {
    fail(`${file}: no such file`);
  }

  await applyPendingMigrations();
  const outcome = await importCsv(createReadStream(file), {
    actor: cliActor(),
    fileName: path.basename(file),
    dryRun: flags.includes("--dry-run"),
    addMissing: flags.includes("--add-missing"),
    force: flags.includes("--force"),
    sqlite: rawDb(),
  });

  if (outcome.status === "refused") {
    const n = outcome.problems.length + outcome.moreProblems;
    const out: string[] = [`${file}: refused, nothing written — ${n.toLocaleString("en")} problem${n === 1 ? "" : "s"}:`];
    for (const p of outcome.problems) out.push(formatProblem(p));
    if (outcome.moreProblems) out.push(`… and ${outcome.moreProblems.toLocaleString("en")} more problems`);
    process.stderr.write(`${out.join("\n")}\n`);
    return 1;
  }
  if (outcome.status === "checked") {
    const lines = [`${file}: ${describe(outcome)} — no problems found; nothing written (dry run)`, ...createdText(outcome, "would create")];
    if (outcome.existingEntries) lines.push(`note: ${outcome.existingEntries.toLocaleString("en")} current entries already exist on these lines in this date span; the import adds to them`);
    process.stdout.write(`${lines.join("\n")}\n`);
    return 0;
  }
  const seconds = ((outcome.elapsedMs.read + outcome.elapsedMs.write) / 1000).toFixed(1);
  const lines = [`${file}: imported ${describe(outcome)} as batch #${outcome.batchId} in ${seconds} s${outcome.duplicateOf ? " (forced: same content as batch #" + outcome.duplicateOf.batchId + ")" : ""}`, ...createdText(outcome, "created")];
  process.stdout.write(`${lines.join("\n")}\n`);
  return 0;
}

main()
  .then(async (code) => {
    await closeDb();
    process.exit(code);
  })
  .catch((error: unknown) => {
    // A full, read-only, locked or failing database: the import's one transaction rolled back.
    const trouble = databaseTrouble(error);
    const said = trouble ? `${trouble.message} (${trouble.sqliteCode})` : error instanceof Error ? error.message : String(error);
    process.stderr.write(`import failed: ${said}\n`);
    process.exit(1);
  });

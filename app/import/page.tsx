import type { Metadata } from "next";
import { requirePageUser } from "@/lib/auth/guard";
import { roleAtLeast } from "@/lib/auth/roles";
import { TALLY_COLUMNS, TALLY_OPTIONAL, UNITS_COLUMNS, UNITS_OPTIONAL } from "@/lib/intake/csv-read";
import { ImportForm } from "./import-form";

export const dynamic = "force-dynamic";
export const metadata: Metadata = { title: "Import" };

export default async function ImportPage() {
  const me = await requirePageUser("engineer", { path: "/import" });
  return (
    <>
      <h1>Import counts from a CSV file</h1>
      <p className="lede">
        Check a file first: every problem is listed with its line number and nothing is written until the whole file is clean. The same file is never counted twice
        unless you say so.
      </p>
      <div className="card">
        <p>
          <strong>Tally file</strong> columns: <code className="mono">{TALLY_COLUMNS.join(",")}</code>, optional <code className="mono">{TALLY_OPTIONAL.join(",")}</code>.
          <br />
          <strong>Inspected-units file</strong> columns: <code className="mono">{UNITS_COLUMNS.join(",")}</code>, optional <code className="mono">{UNITS_OPTIONAL.join(",")}</code>.
        </p>
        <p className="muted">
          Columns in any order, header in any case, UTF-8 (with or without BOM), dates as YYYY-MM-DD. Counts are added to what is already recorded. For years of
          history use the command line: <code className="mono">npm run import -- FILE</code>.
        </p>
      </div>
      <ImportForm canAddMissing={roleAtLeast(me.role, "admin")} />
    </>
  );
}

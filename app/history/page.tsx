import type { Metadata } from "next";
import Link from "next/link";
import { SelectField } from "@/app/components/forms/select-field";
import { SheetChooser } from "@/app/components/forms/sheet-chooser";
import { requirePageUser } from "@/lib/auth/guard";
import { SOURCE_LABELS, firstParam } from "@/lib/intake/format";
import { historyPageData, type HistoryRow } from "@/lib/intake/pages";

export const dynamic = "force-dynamic";
export const metadata: Metadata = { title: "Cell history" };

type Search = { searchParams: Promise<Record<string, string | string[] | undefined>> };

function EntriesTable({ rows, valueLabel }: { rows: HistoryRow[]; valueLabel: string }) {
  return (
    <div className="table-scroll">
      <table className="data">
        <thead>
          <tr>
            <th scope="col">Entry</th>
            <th scope="col">Recorded (plant time)</th>
            <th scope="col">By</th>
            <th scope="col">How</th>
            <th scope="col" className="num">
              {valueLabel}
            </th>
            <th scope="col">Status</th>
            <th scope="col">Reason / note</th>
          </tr>
        </thead>
        <tbody>
          {rows.map((r) => (
            <tr key={r.id} id={`entry-${r.id}`}>
              <td className="mono">#{r.id}</td>
              <td>{r.at}</td>
              <td>{r.by}</td>
              <td>
                {SOURCE_LABELS[r.source] ?? r.source}
                {r.importBatchId !== null && <span className="muted"> (batch #{r.importBatchId})</span>}
                {r.supersedesId !== null && <div className="muted">replaces #{r.supersedesId}</div>}
              </td>
              <td className="num">{r.value.toLocaleString("en")}</td>
              <td>
                {r.status === "current" ? (
                  <span className="intake-status-current">current</span>
                ) : (
                  <span>
                    <span className="intake-status-superseded">superseded</span> by #{r.supersededById}
                  </span>
                )}
              </td>
              <td>
                {r.reason && <div>Reason: {r.reason}</div>}
                {r.note && <div className="muted">Note: {r.note}</div>}
                {r.product && <div className="muted">Product {r.product}</div>}
              </td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}

export default async function HistoryPage({ searchParams }: Search) {
  await requirePageUser("engineer", { path: "/history" });
  const sp = await searchParams;
  const data = historyPageData({ date: firstParam(sp.date), shift: firstParam(sp.shift), line: firstParam(sp.line), category: firstParam(sp.category) });
  const sheetQuery = data.date && data.shift && data.line ? `date=${data.date}&shift=${encodeURIComponent(data.shift.code)}&line=${encodeURIComponent(data.line.code)}` : null;
  return (
    <>
      <h1>Cell history</h1>
      <p className="lede">Every entry of a cell (date × shift × line × category), superseded ones included: who recorded it, when, how, and why it was corrected.</p>
      {data.problems.map((p) => (
        <p key={p} className="error-text" role="alert">
          {p}
        </p>
      ))}
      <SheetChooser
        action="/history"
        label="Choose the cell"
        idPrefix="h"
        lines={data.lines}
        shifts={data.shifts}
        line={data.line?.code}
        shift={data.shift?.code}
        date={data.date ?? ""}
        dateFirst
        dateRequired
        submitLabel="Show history"
        extraFields={
          <SelectField
            id="h-category"
            name="category"
            label="Category"
            anyLabel="All (sheet overview)"
            value={data.category?.code}
            options={data.categories.map((c) => ({ value: c.code, label: c.active ? c.name : `${c.name} (retired)` }))}
          />
        }
      />

      {data.entries && data.category && (
        <>
          <h2>
            {data.category.name} — {data.line?.name}, {data.shift?.name}, {data.date}
          </h2>
          <p>
            Current total: <strong>{(data.currentTotal ?? 0).toLocaleString("en")}</strong> from {data.entries.filter((e) => e.status === "current").length} current of{" "}
            {data.entries.length} entries.
          </p>
          {data.entries.length ? <EntriesTable rows={data.entries} valueLabel="Count" /> : <p className="muted">No entries for this cell.</p>}
          {sheetQuery && (
            <p>
              <Link href={`/history?${sheetQuery}`}>Whole sheet</Link> · <Link href={`/entry/corrections?${sheetQuery}`}>Correct an entry</Link>
            </p>
          )}
        </>
      )}
      {data.sheet && (
        <>
          <h2>
            {data.line?.name}, {data.shift?.name}, {data.date}
          </h2>
          {data.sheet.length === 0 ? (
            <p className="muted">No tally entries for this sheet.</p>
          ) : (
            <table className="data">
              <thead>
                <tr>
                  <th scope="col">Category</th>
                  <th scope="col" className="num">
                    Current total
                  </th>
                  <th scope="col" className="num">
                    Entries
                  </th>
                  <th scope="col" className="num">
                    Superseded
                  </th>
                </tr>
              </thead>
              <tbody>
                {data.sheet.map((c) => (
                  <tr key={c.code}>
                    <td>
                      <Link href={`/history?${sheetQuery}&category=${encodeURIComponent(c.code)}`}>{c.name}</Link>
                    </td>
                    <td className="num">{c.total.toLocaleString("en")}</td>
                    <td className="num">{c.entries}</td>
                    <td className="num">{c.superseded}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          )}
          <h3>Units inspected</h3>
          {data.units && data.units.length ? <EntriesTable rows={data.units} valueLabel="Units" /> : <p className="muted">No units recorded.</p>}
        </>
      )}
    </>
  );
}

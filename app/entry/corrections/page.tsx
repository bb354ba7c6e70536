import type { Metadata } from "next";
import Link from "next/link";
import { randomUUID } from "node:crypto";
import { requirePageUser } from "@/lib/auth/guard";
import { actorFromPrincipal } from "@/lib/intake/actor";
import { SOURCE_LABELS, firstParam } from "@/lib/intake/format";
import { correctionsPageData, describeCorrection } from "@/lib/intake/pages";
import { ResultForm } from "@/app/components/forms/result-form";
import { SheetChooser } from "@/app/components/forms/sheet-chooser";
import { correctEntryAction } from "./actions";

export const dynamic = "force-dynamic";
export const metadata: Metadata = { title: "Corrections" };

type Search = { searchParams: Promise<Record<string, string | string[] | undefined>> };

export default async function CorrectionsPage({ searchParams }: Search) {
  const me = await requirePageUser("operator", { floor: true, path: "/entry/corrections" });
  const sp = await searchParams;
  const data = correctionsPageData({ line: firstParam(sp.line), shift: firstParam(sp.shift), date: firstParam(sp.date) }, actorFromPrincipal(me));
  const done = describeCorrection(firstParam(sp.corrected));
  const q = data.line && data.shift ? `date=${data.date}&shift=${encodeURIComponent(data.shift.code)}&line=${encodeURIComponent(data.line.code)}` : "";
  return (
    <>
      <h1>Corrections</h1>
      <p className="lede">
        A correction never changes or deletes a count: it records a new value that replaces the old one, with your name and a reason. The old value stays in the history.
      </p>
      {done && (
        <div className="sheet-notice sheet-notice-ok" role="status">
          <p className="sheet-notice-title">
            <span aria-hidden="true">✓ </span>Corrected: {done}
          </p>
        </div>
      )}
      {data.problems.map((p) => (
        <p key={p} className="error-text" role="alert">
          {p}
        </p>
      ))}
      <SheetChooser
        action="/entry/corrections"
        label="Choose the sheet"
        idPrefix="c"
        lines={data.lines}
        shifts={data.shifts}
        line={data.line?.code}
        shift={data.shift?.code}
        date={data.date}
        submitLabel="Show entries"
      />

      {data.line && data.shift && (
        <h2>
          {data.line.name} · {data.shift.name} · {data.date}
        </h2>
      )}
      {data.rows.length === 0 ? (
        <p className="muted">Nothing recorded for this sheet.</p>
      ) : (
        <div className="table-scroll">
          <table className="data">
            <thead>
              <tr>
                <th scope="col">What</th>
                <th scope="col" className="num">
                  Value
                </th>
                <th scope="col">Recorded by</th>
                <th scope="col">How</th>
                <th scope="col">Correct to</th>
              </tr>
            </thead>
            <tbody>
              {data.rows.map((r) => (
                <tr key={`${r.kind}-${r.id}`}>
                  <td>
                    {r.label}
                    {data.canSeeHistory && r.category && (
                      <>
                        {" "}
                        <Link href={`/history?${q}&category=${encodeURIComponent(r.category)}`} className="muted">
                          history
                        </Link>
                      </>
                    )}
                    {r.note && <div className="muted">Note: {r.note}</div>}
                  </td>
                  <td className="num">{r.value.toLocaleString("en")}</td>
                  <td>
                    {r.by}
                    <div className="muted">{r.at}</div>
                  </td>
                  <td>
                    {SOURCE_LABELS[r.source] ?? r.source}
                    {r.reason && <div className="muted">Reason: {r.reason}</div>}
                  </td>
                  <td>
                    {r.canCorrect ? (
                      <ResultForm action={correctEntryAction} submitLabel="Correct" className="correction-form" label={`Correct ${r.label}`}>
                        <input type="hidden" name="idempotencyKey" value={randomUUID()} />
                        <input type="hidden" name="kind" value={r.kind} />
                        <input type="hidden" name="entryId" value={r.id} />
                        <input type="hidden" name="back" value={`/entry/corrections?${q}`} />
                        <div className="field">
                          <label htmlFor={`v-${r.kind}-${r.id}`}>New value</label>
                          <input id={`v-${r.kind}-${r.id}`} name="value" inputMode="numeric" required defaultValue={r.value} />
                        </div>
                        <div className="field">
                          <label htmlFor={`r-${r.kind}-${r.id}`}>Reason</label>
                          <input id={`r-${r.kind}-${r.id}`} name="reason" required maxLength={500} />
                        </div>
                      </ResultForm>
                    ) : (
                      <span className="muted">{r.why}</span>
                    )}
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      )}
      <p>
        {q && <Link href={`/entry?${q}`}>Back to the floor sheet</Link>}
        {data.canSeeHistory && q && (
          <>
            {" · "}
            <Link href={`/history?${q}`}>History of this sheet</Link>
          </>
        )}
      </p>
    </>
  );
}

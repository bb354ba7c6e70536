import type { Metadata } from "next";
import Link from "next/link";
import { requirePageUser } from "@/lib/auth/guard";
import { actorFromPrincipal } from "@/lib/intake/actor";
import { firstParam, localClock } from "@/lib/intake/format";
import { entryPageData } from "@/lib/intake/pages";
import { FloorSheet } from "./floor-sheet";
import { SheetPicker } from "./sheet-picker";

export const dynamic = "force-dynamic";
export const metadata: Metadata = { title: "Floor entry" };

type Search = { searchParams: Promise<Record<string, string | string[] | undefined>> };

export default async function EntryPage({ searchParams }: Search) {
  const me = await requirePageUser("operator", { floor: true, path: "/entry" });
  const sp = await searchParams;
  const data = entryPageData({ line: firstParam(sp.line), shift: firstParam(sp.shift), date: firstParam(sp.date) }, actorFromPrincipal(me));
  const sheet = data.sheet;
  return (
    <>
      <h1>Floor entry</h1>
      {data.problems.map((p) => (
        <p key={p} className="error-text" role="alert">
          {p}
        </p>
      ))}
      {data.lines.length === 0 || data.shifts.length === 0 ? (
        <p className="caution">No active lines or shifts yet. An administrator sets them up under Setup.</p>
      ) : (
        <SheetPicker
          lines={data.lines.map((l) => ({ code: l.code, name: l.name }))}
          shifts={data.shifts.map((s) => ({ code: s.code, name: s.name, startTime: s.startTime, endTime: s.endTime }))}
          line={data.line?.code ?? ""}
          shift={data.shift?.code ?? ""}
          date={data.date}
          now={data.now}
          explicit={data.explicit}
        />
      )}
      {sheet && (
        <FloorSheet
          key={`${sheet.date}|${sheet.shift.code}|${sheet.line.code}`}
          sheet={{
            date: sheet.date,
            shift: { code: sheet.shift.code, name: sheet.shift.name },
            line: { code: sheet.line.code, name: sheet.line.name },
            basis: sheet.basis,
            recordedDefects: sheet.recordedDefects,
            recordedUnits: sheet.recordedUnits,
            entries: sheet.tallyEntries + sheet.unitsEntries,
            recordedBy: sheet.recordedBy.map((r) => ({ name: r.name, at: localClock(r.at) })),
          }}
          categories={sheet.categories.map((c) => ({ code: c.code, name: c.name, family: c.family, active: c.active, recorded: c.recorded }))}
          products={data.products}
          correctionHint={data.correctionHint}
          mayCorrect={data.mayCorrect}
          autoFocus={data.explicit}
        />
      )}
      {sheet && (
        <p className="muted no-print">
          <Link href={`/entry/corrections?date=${sheet.date}&shift=${encodeURIComponent(sheet.shift.code)}&line=${encodeURIComponent(sheet.line.code)}`}>
            Correct single entries of this sheet
          </Link>
        </p>
      )}
    </>
  );
}

import Link from "next/link";
import { historySpan, loadMasterData } from "@/lib/db/plant";

export const dynamic = "force-dynamic";

export default async function OverviewPage() {
  const [plant, span] = await Promise.all([loadMasterData(), historySpan()]);
  return (
    <>
      <h1>Overview</h1>
      <p className="lede">
        {plant.lines.length} lines, {plant.shifts.length} shifts and {plant.categories.length} defect categories.
        History from {span.first ?? "—"} to {span.last ?? "—"}: {span.defects.toLocaleString("en")} defects in{" "}
        {span.entries.toLocaleString("en")} tally entries.
      </p>
      <section className="grid" aria-label="Lines">
        {plant.lines.map((line) => (
          <div className="card" key={line.id}>
            <h2>{line.name}</h2>
            <p className="muted mono">{line.code}</p>
          </div>
        ))}
      </section>
      <p>
        <Link href="/entry">Record a shift&apos;s tallies</Link>
      </p>
    </>
  );
}

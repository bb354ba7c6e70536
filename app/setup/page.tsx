import type { Metadata } from "next";
import Link from "next/link";
import { requirePageUser } from "@/lib/auth/guard";
import { MASTER_LABELS, listMaster, recentMasterAudit } from "@/lib/db/master-data";
import { localStamp } from "@/lib/intake/format";
import { SETUP_KINDS, SetupNav } from "./setup-nav";

export const dynamic = "force-dynamic";
export const metadata: Metadata = { title: "Setup" };

export default async function SetupPage() {
  await requirePageUser("admin", { path: "/setup" });
  const [counts, audit] = await Promise.all([
    Promise.all(SETUP_KINDS.map(async (k) => ({ kind: k, rows: await listMaster(k) }))),
    recentMasterAudit(40),
  ]);
  return (
    <>
      <h1>Setup</h1>
      <SetupNav current="overview" />
      <p className="lede">Lines, shifts, defect categories and products. Codes are fixed once made; retiring keeps every recorded count and only stops new ones.</p>
      <div className="grid">
        {counts.map(({ kind, rows }) => (
          <div className="card" key={kind}>
            <h2>
              <Link href={`/setup/${kind}`}>{MASTER_LABELS[kind].many}</Link>
            </h2>
            <p>
              {rows.filter((r) => r.active).length} in use, {rows.filter((r) => !r.active).length} retired
            </p>
          </div>
        ))}
      </div>
      <h2>Recent changes</h2>
      {audit.length === 0 ? (
        <p className="muted">No changes yet.</p>
      ) : (
        <div className="table-scroll">
          <table className="data">
            <thead>
              <tr>
                <th scope="col">When (plant time)</th>
                <th scope="col">Who</th>
                <th scope="col">Change</th>
                <th scope="col">Details</th>
              </tr>
            </thead>
            <tbody>
              {audit.map((a) => (
                <tr key={a.id}>
                  <td>{localStamp(a.at)}</td>
                  <td>{a.actorName}</td>
                  <td className="mono">{a.action}</td>
                  <td className="mono">
                    {a.after}
                    {a.reason && <div className="muted">{a.reason}</div>}
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      )}
    </>
  );
}

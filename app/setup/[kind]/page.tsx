import type { Metadata } from "next";
import { notFound } from "next/navigation";
import { requirePageUser } from "@/lib/auth/guard";
import { MASTER_LABELS, listMaster, type MasterKind, type MasterRow } from "@/lib/db/master-data";
import { CODE_RULE } from "@/lib/intake/codes";
import { ResultForm } from "@/app/components/forms/result-form";
import { createMasterAction, setActiveAction, updateMasterAction } from "../actions";
import { SETUP_KINDS, SetupNav } from "../setup-nav";

export const dynamic = "force-dynamic";
export const metadata: Metadata = { title: "Setup" };

type Props = { params: Promise<{ kind: string }> };

function Fields({ kind, row, idPrefix }: { kind: MasterKind; row?: MasterRow; idPrefix: string }) {
  return (
    <>
      <div className="field">
        <label htmlFor={`${idPrefix}-name`}>Name</label>
        <input id={`${idPrefix}-name`} name="name" required maxLength={80} defaultValue={row?.name} />
      </div>
      {kind === "category" && (
        <div className="field">
          <label htmlFor={`${idPrefix}-family`}>Family</label>
          <input id={`${idPrefix}-family`} name="family" maxLength={40} defaultValue={row?.family ?? ""} />
        </div>
      )}
      {kind === "shift" && (
        <>
          <div className="field">
            <label htmlFor={`${idPrefix}-start`}>Starts</label>
            <input id={`${idPrefix}-start`} name="startTime" type="time" required className="setup-time" defaultValue={row?.startTime ?? ""} />
          </div>
          <div className="field">
            <label htmlFor={`${idPrefix}-end`}>Ends</label>
            <input id={`${idPrefix}-end`} name="endTime" type="time" required className="setup-time" defaultValue={row?.endTime ?? ""} />
          </div>
        </>
      )}
      {kind !== "product" && (
        <div className="field">
          <label htmlFor={`${idPrefix}-order`}>Order</label>
          <input id={`${idPrefix}-order`} name="displayOrder" inputMode="numeric" className="setup-order" defaultValue={row?.displayOrder ?? 0} />
        </div>
      )}
    </>
  );
}

export default async function SetupKindPage({ params }: Props) {
  const { kind: raw } = await params;
  // The guard first: an unknown kind is a 404 only for those allowed to see setup.
  await requirePageUser("admin", { path: `/setup/${encodeURIComponent(raw)}` });
  const kind = SETUP_KINDS.find((k) => k === raw);
  if (!kind) notFound();
  const rows = await listMaster(kind);
  const label = MASTER_LABELS[kind];
  return (
    <>
      <h1>{label.many}</h1>
      <SetupNav current={kind} />
      {kind === "shift" && (
        <p className="lede">
          Clock times are plant local time. A shift whose end is earlier than its start crosses midnight and belongs to the date on which it starts. Shifts in use
          must not overlap: 06:00–14:00 and 14:00–22:00 meet, they do not overlap.
        </p>
      )}
      {rows.length === 0 && <p className="muted">None yet.</p>}
      {rows.map((row) => (
        <div key={row.id} className={row.active ? "setup-row" : "setup-row setup-retired"}>
          <span className="setup-code">
            {row.code}
            {!row.active && <span className="muted"> (retired)</span>}
            <span className="muted"> · {row.entries.toLocaleString("en")} entries</span>
            {kind === "shift" && row.startTime === row.endTime && <span className="error-text"> · clock times not set</span>}
          </span>
          <ResultForm action={updateMasterAction} submitLabel="Save" className="form-row" label={`Edit ${row.code}`}>
            <input type="hidden" name="kind" value={kind} />
            <input type="hidden" name="id" value={row.id} />
            <Fields kind={kind} row={row} idPrefix={`e${row.id}`} />
          </ResultForm>
          <ResultForm
            action={setActiveAction}
            submitLabel={row.active ? "Retire" : "Use again"}
            secondary
            label={`${row.active ? "Retire" : "Use again"} ${row.code}`}
            confirm={row.active ? `Retire ${row.code}? Its recorded counts stay; new counts are no longer taken.` : undefined}
          >
            <input type="hidden" name="kind" value={kind} />
            <input type="hidden" name="id" value={row.id} />
            <input type="hidden" name="active" value={row.active ? "false" : "true"} />
          </ResultForm>
        </div>
      ))}
      <h2>Add a {label.one}</h2>
      <ResultForm action={createMasterAction} submitLabel={`Add ${label.one}`} className="card form-row" label={`Add a ${label.one}`}>
        <input type="hidden" name="kind" value={kind} />
        <div className="field">
          <label htmlFor="new-code">Code</label>
          <input id="new-code" name="code" required maxLength={32} pattern="[A-Za-z0-9._\-]{1,32}" aria-describedby="new-code-help" />
          <span id="new-code-help" className="muted">
            {CODE_RULE}; cannot be changed later
          </span>
        </div>
        <Fields kind={kind} idPrefix="new" />
      </ResultForm>
    </>
  );
}

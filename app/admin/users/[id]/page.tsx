import type { Metadata } from "next";
import Link from "next/link";
import { notFound } from "next/navigation";
import { requirePageUser } from "@/lib/auth/guard";
import { ROLES, ROLE_LABELS, isRole } from "@/lib/auth/roles";
import { db } from "@/lib/db/client";
import { ResultForm } from "@/app/components/forms/result-form";
import { AdminNav } from "../../admin-nav";
import { changeRoleAction, resetPasswordAction, setActiveAction, setBadgeAction } from "../actions";

export const dynamic = "force-dynamic";
export const metadata: Metadata = { title: "User" };

export default async function UserPage({ params }: { params: Promise<{ id: string }> }) {
  const { id: raw } = await params;
  await requirePageUser("admin", { path: `/admin/users/${encodeURIComponent(raw)}` });
  const id = Number(raw);
  if (!Number.isInteger(id) || id < 1) notFound();
  const user = await db().user.findUnique({ where: { id } });
  if (!user) notFound();
  const now = new Date();
  const [liveSessions, events] = await Promise.all([
    db().session.count({ where: { userId: id, revokedAt: null, expiresAt: { gt: now } } }),
    db().auditEvent.findMany({ where: { entity: "user", entityId: String(id) }, orderBy: { at: "desc" }, take: 20 }),
  ]);
  const hidden = <input type="hidden" name="userId" value={user.id} />;
  return (
    <>
      <p>
        <Link href="/admin/users">← Users</Link>
      </p>
      <h1>
        {user.displayName} <span className="muted mono">({user.username})</span>
      </h1>
      <AdminNav current="users" />
      <p>
        {isRole(user.role) ? ROLE_LABELS[user.role] : user.role} · {user.active ? "active" : "deactivated"} · {liveSessions} open session
        {liveSessions === 1 ? "" : "s"}
        {user.badgeNumber ? ` · badge ${user.badgeNumber}` : " · no badge"}
        {user.pinLockedUntil && user.pinLockedUntil > now ? " · badge locked" : ""}
      </p>

      <div className="grid">
        <section className="card" aria-labelledby="role-h">
          <h2 id="role-h">Role</h2>
          <p className="muted">Changing the role ends all of this user&apos;s sessions.</p>
          <ResultForm block action={changeRoleAction} submitLabel="Change role">
            {hidden}
            <div className="field">
              <label htmlFor="role">Role</label>
              <select id="role" name="role" defaultValue={user.role}>
                {ROLES.map((r) => (
                  <option key={r} value={r}>
                    {ROLE_LABELS[r]}
                  </option>
                ))}
              </select>
            </div>
            <div className="field">
              <label htmlFor="role-reason">Reason (optional)</label>
              <input id="role-reason" name="reason" maxLength={200} />
            </div>
          </ResultForm>
        </section>

        <section className="card" aria-labelledby="active-h">
          <h2 id="active-h">{user.active ? "Deactivate" : "Reactivate"}</h2>
          <ResultForm block
            action={setActiveAction}
            submitLabel={user.active ? "Deactivate account" : "Reactivate account"}
            secondary
            confirm={user.active ? `Deactivate ${user.username}? Their sessions end now.` : undefined}
          >
            {hidden}
            <input type="hidden" name="active" value={user.active ? "false" : "true"} />
            <div className="field">
              <label htmlFor="active-reason">Reason (optional)</label>
              <input id="active-reason" name="reason" maxLength={200} />
            </div>
          </ResultForm>
        </section>

        <section className="card" aria-labelledby="badge-h">
          <h2 id="badge-h">Badge and PIN</h2>
          <p className="muted">For the quick sign-in on floor PCs (floor entry only). Leave the badge empty to remove it.</p>
          <ResultForm block action={setBadgeAction} submitLabel="Save badge">
            {hidden}
            <div className="field">
              <label htmlFor="badge">Badge number</label>
              <input id="badge" name="badge" defaultValue={user.badgeNumber ?? ""} maxLength={20} autoComplete="off" />
            </div>
            <div className="field">
              <label htmlFor="pin">New PIN (4-8 digits)</label>
              <input id="pin" name="pin" type="password" inputMode="numeric" maxLength={8} autoComplete="new-password" />
            </div>
          </ResultForm>
        </section>

        <section className="card" aria-labelledby="pw-h">
          <h2 id="pw-h">Reset password</h2>
          <p className="muted">Ends all of this user&apos;s sessions.</p>
          <ResultForm block action={resetPasswordAction} submitLabel="Set password">
            {hidden}
            <div className="field">
              <label htmlFor="new-password">New password (12+ characters)</label>
              <input id="new-password" name="password" type="password" required minLength={12} autoComplete="new-password" />
            </div>
          </ResultForm>
        </section>
      </div>

      <h2>History</h2>
      {events.length === 0 ? (
        <p className="muted">No recorded changes.</p>
      ) : (
        <div className="table-scroll">
          <table className="data">
            <thead>
              <tr>
                <th scope="col">When (UTC)</th>
                <th scope="col">Who</th>
                <th scope="col">What</th>
                <th scope="col">Before</th>
                <th scope="col">After</th>
                <th scope="col">Reason</th>
              </tr>
            </thead>
            <tbody>
              {events.map((e) => (
                <tr key={e.id}>
                  <td>{e.at.toISOString().slice(0, 19).replace("T", " ")}</td>
                  <td>{e.actorName}</td>
                  <td className="mono">{e.action}</td>
                  <td className="mono">{e.before ?? ""}</td>
                  <td className="mono">{e.after ?? ""}</td>
                  <td>{e.reason ?? ""}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      )}
    </>
  );
}

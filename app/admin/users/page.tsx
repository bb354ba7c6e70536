import type { Metadata } from "next";
import Link from "next/link";
import { requirePageUser } from "@/lib/auth/guard";
import { ROLES, ROLE_LABELS, isRole } from "@/lib/auth/roles";
import { db } from "@/lib/db/client";
import { ResultForm } from "@/app/components/forms/result-form";
import { AdminNav } from "../admin-nav";
import { createUserAction } from "./actions";

export const dynamic = "force-dynamic";
export const metadata: Metadata = { title: "Users" };

export default async function UsersPage() {
  await requirePageUser("admin", { path: "/admin/users" });
  const now = new Date();
  const users = await db().user.findMany({
    orderBy: [{ active: "desc" }, { username: "asc" }],
    include: { sessions: { where: { revokedAt: null, expiresAt: { gt: now } }, select: { id: true, lastSeenAt: true } } },
  });
  return (
    <>
      <h1>Users</h1>
      <AdminNav current="users" />
      <div className="table-scroll">
        <table className="data">
          <thead>
            <tr>
              <th scope="col">User name</th>
              <th scope="col">Name</th>
              <th scope="col">Role</th>
              <th scope="col">Badge</th>
              <th scope="col">Status</th>
              <th scope="col">Last seen</th>
            </tr>
          </thead>
          <tbody>
            {users.map((u) => {
              const lastSeen = u.sessions.map((s) => s.lastSeenAt.getTime()).sort((a, b) => b - a)[0];
              return (
                <tr key={u.id}>
                  <td>
                    <Link href={`/admin/users/${u.id}`}>{u.username}</Link>
                  </td>
                  <td>{u.displayName}</td>
                  <td>{isRole(u.role) ? ROLE_LABELS[u.role] : u.role}</td>
                  <td className="mono">{u.badgeNumber ?? "—"}</td>
                  <td>
                    {u.active ? "Active" : "Deactivated"}
                    {u.pinLockedUntil && u.pinLockedUntil > now ? " · badge locked" : ""}
                  </td>
                  <td>{lastSeen ? new Date(lastSeen).toISOString().slice(0, 16).replace("T", " ") + " UTC" : "—"}</td>
                </tr>
              );
            })}
          </tbody>
        </table>
      </div>

      <section className="card" aria-labelledby="new-user">
        <h2 id="new-user">New user</h2>
        <ResultForm block action={createUserAction} submitLabel="Create user">
          <div className="form-row">
            <div className="field">
              <label htmlFor="nu-username">User name</label>
              <input id="nu-username" name="username" required minLength={2} maxLength={40} autoComplete="off" />
            </div>
            <div className="field">
              <label htmlFor="nu-display">Full name</label>
              <input id="nu-display" name="displayName" maxLength={80} autoComplete="off" />
            </div>
            <div className="field">
              <label htmlFor="nu-role">Role</label>
              <select id="nu-role" name="role" defaultValue="operator">
                {ROLES.map((r) => (
                  <option key={r} value={r}>
                    {ROLE_LABELS[r]}
                  </option>
                ))}
              </select>
            </div>
            <div className="field">
              <label htmlFor="nu-password">Initial password (12+ characters)</label>
              <input id="nu-password" name="password" type="password" required minLength={12} autoComplete="new-password" />
            </div>
          </div>
        </ResultForm>
      </section>
    </>
  );
}

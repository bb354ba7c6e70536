import type { Metadata } from "next";
import { requirePageUser } from "@/lib/auth/guard";
import { parseScopes } from "@/lib/auth/api-tokens";
import { API_SCOPES } from "@/lib/auth/roles";
import { db } from "@/lib/db/client";
import { ResultForm } from "@/app/components/forms/result-form";
import { AdminNav } from "../admin-nav";
import { createTokenAction, revokeTokenAction } from "./actions";

export const dynamic = "force-dynamic";
export const metadata: Metadata = { title: "API tokens" };

const SCOPE_HELP: Record<(typeof API_SCOPES)[number], string> = {
  "tallies:write": "send defect tallies (line gateways, scanners)",
  "analysis:read": "read analysis results (reporting jobs)",
};

const stamp = (d: Date | null) => (d ? d.toISOString().slice(0, 16).replace("T", " ") : "never");

export default async function TokensPage() {
  await requirePageUser("admin", { path: "/admin/tokens" });
  const tokens = await db().apiToken.findMany({
    orderBy: [{ revokedAt: { sort: "asc", nulls: "first" } }, { createdAt: "desc" }],
    include: { createdBy: { select: { username: true } } },
  });
  return (
    <>
      <h1>API tokens</h1>
      <AdminNav current="tokens" />
      <p className="lede">
        Machines send <code className="mono">Authorization: Bearer lmx_…</code>. A token is shown once when it is made; only a hash is kept. With{" "}
        <code className="mono">analysis:read</code> a token also downloads flagged periods (
        <code className="mono">/episodes/&lt;id&gt;/export/csv|json|pdf</code>, <code className="mono">/episodes/export/csv|json</code>).
      </p>
      <div className="table-scroll">
        <table className="data">
          <thead>
            <tr>
              <th scope="col">Name</th>
              <th scope="col">Starts with</th>
              <th scope="col">Scopes</th>
              <th scope="col">Created (UTC)</th>
              <th scope="col">Last used (UTC)</th>
              <th scope="col">Status</th>
            </tr>
          </thead>
          <tbody>
            {tokens.length === 0 && (
              <tr>
                <td colSpan={6} className="muted">
                  No tokens yet.
                </td>
              </tr>
            )}
            {tokens.map((t) => (
              <tr key={t.id}>
                <td>{t.name}</td>
                <td className="mono">{t.prefix}…</td>
                <td className="mono">{parseScopes(t.scopes).join(", ")}</td>
                <td>
                  {stamp(t.createdAt)} by {t.createdBy.username}
                </td>
                <td>{stamp(t.lastUsedAt)}</td>
                <td>
                  {t.revokedAt ? (
                    `Revoked ${stamp(t.revokedAt)}`
                  ) : (
                    <ResultForm block action={revokeTokenAction} submitLabel="Revoke" secondary confirm={`Revoke the token "${t.name}"? Machines using it stop working.`}>
                      <input type="hidden" name="tokenId" value={t.id} />
                    </ResultForm>
                  )}
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>

      <section className="card" aria-labelledby="new-token">
        <h2 id="new-token">New token</h2>
        <ResultForm block action={createTokenAction} submitLabel="Create token">
          <div className="field">
            <label htmlFor="token-name">Name (what uses it)</label>
            <input id="token-name" name="name" required minLength={2} maxLength={80} autoComplete="off" />
          </div>
          <fieldset className="field">
            <legend>Scopes</legend>
            {API_SCOPES.map((scope) => (
              <label key={scope} className="checkbox">
                <input type="checkbox" name="scopes" value={scope} /> <span className="mono">{scope}</span> — {SCOPE_HELP[scope]}
              </label>
            ))}
          </fieldset>
        </ResultForm>
      </section>
    </>
  );
}

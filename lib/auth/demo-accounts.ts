import type Database from "better-sqlite3";
import { closeDb } from "@/lib/db/client";
import type { Actor } from "./audit";
import type { Role } from "./roles";
import { createUser, setBadge } from "./users";

/**
 * Demo accounts for `npm run demo` only: created when the database has no users yet.
 * No default password exists anywhere else; a real installation makes its first admin
 * with `npm run user -- add NAME --role admin`.
 */
export const DEMO_ACCOUNTS: { username: string; displayName: string; role: Role; password: string }[] = [
  { username: "admin", displayName: "Demo Admin", role: "admin", password: "demo-admin-pass" },
  { username: "engineer", displayName: "Demo Engineer", role: "engineer", password: "demo-engineer-pass" },
  { username: "operator", displayName: "Demo Operator", role: "operator", password: "demo-operator-pass" },
];
export const DEMO_BADGE = { username: "operator", badge: "1001", pin: "2468" };

const DEMO_ACTOR: Actor = { id: null, name: "demo" };

export async function seedDemoAccounts(sqlite: Database.Database): Promise<string[]> {
  const { n } = sqlite.prepare("SELECT COUNT(*) AS n FROM User").get() as { n: number };
  const present = new Set(
    (sqlite.prepare("SELECT username FROM User").all() as { username: string }[]).map((r) => r.username),
  );
  if (n === 0) {
    for (const account of DEMO_ACCOUNTS) {
      const result = await createUser(DEMO_ACTOR, account);
      if (!result.ok) throw new Error(`demo account ${account.username}: ${result.error}`);
      if (account.username === DEMO_BADGE.username) {
        const badge = await setBadge(DEMO_ACTOR, result.userId, DEMO_BADGE.badge, DEMO_BADGE.pin);
        if (!badge.ok) throw new Error(`demo badge: ${badge.error}`);
      }
      present.add(account.username);
    }
    await closeDb();
  }
  const shown = DEMO_ACCOUNTS.filter((a) => present.has(a.username));
  if (shown.length === 0) return [];
  return [
    "",
    `Demo sign-ins${n === 0 ? "" : " (if not changed since)"} — demo only: change or remove before real use:`,
    ...shown.map((a) => `  ${a.role.padEnd(9)} ${a.username} / ${a.password}`),
    ...(present.has(DEMO_BADGE.username) ? [`  badge     ${DEMO_BADGE.badge} / PIN ${DEMO_BADGE.pin} (operator, floor entry only)`] : []),
  ];
}

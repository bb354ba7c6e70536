/**
 * Who is writing: the one shape every intake function takes. Route handlers, server
 * actions and pages build it from the principal the auth guard returns
 * (actorFromPrincipal); the command line builds it from the OS user. Intake code never
 * authenticates anyone itself.
 */

export type Role = "operator" | "engineer" | "admin";

export type Actor = {
  /** User id for people; null for API tokens and the command line. */
  userId: number | null;
  /** Name stored with entries and audit events. */
  name: string;
  /** A person's role; "system" for API tokens and the command line. */
  role: Role | "system";
};

const RANK: Record<Actor["role"], number> = { operator: 1, engineer: 2, admin: 3, system: 2 };

/** True when the actor holds at least `min` (API tokens and the CLI rank as engineers). */
export function actorAtLeast(actor: Actor, min: Role): boolean {
  return RANK[actor.role] >= RANK[min];
}

type UserPrincipalLike = { kind: "user"; userId: number; username: string; displayName: string; role: string };
type TokenPrincipalLike = { kind: "token"; tokenId: number; name: string };

export function actorFromPrincipal(principal: UserPrincipalLike | TokenPrincipalLike): Actor {
  if (principal.kind === "user") {
    const role = (["operator", "engineer", "admin"] as const).find((r) => r === principal.role) ?? "operator";
    return { userId: principal.userId, name: principal.displayName || principal.username, role };
  }
  return { userId: null, name: `API token "${principal.name}"`, role: "system" };
}

export function cliActor(): Actor {
  const user = process.env.USER ?? process.env.USERNAME ?? "unknown";
  return { userId: null, name: `command line (${user})`, role: "system" };
}

import { db } from "@/lib/db/client";

/** Who did something: a signed-in user, or a named system actor (cli, demo) with no id. */
export type Actor = { id: number | null; name: string };

export type AuditInput = {
  action: string; // e.g. user.create, user.role, token.revoke, auth.signin
  entity: string; // e.g. user, api-token, session
  entityId?: string | number | null;
  before?: unknown;
  after?: unknown;
  reason?: string | null;
};

type AuditClient = Pick<ReturnType<typeof db>, "auditEvent">;

const json = (value: unknown) => (value === undefined ? null : JSON.stringify(value));

/** Appends one AuditEvent (pass the transaction client to record it with the change). */
export async function recordAudit(actor: Actor, event: AuditInput, client: AuditClient = db()): Promise<void> {
  await client.auditEvent.create({
    data: {
      actorId: actor.id,
      actorName: actor.name,
      action: event.action,
      entity: event.entity,
      entityId: event.entityId === undefined || event.entityId === null ? null : String(event.entityId),
      before: json(event.before),
      after: json(event.after),
      reason: event.reason ?? null,
    },
  });
}

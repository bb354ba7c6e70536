"use server";

import { revalidatePath } from "next/cache";
import { z } from "zod";
import { issueApiToken, withdrawApiToken } from "@/lib/auth/api-tokens";
import { requireActionUser } from "@/lib/auth/guard";
import { API_SCOPES } from "@/lib/auth/roles";
import { actionOutcome, authFailure, validationFailure, type ActionResult } from "@/lib/http/action-result";

type Result = ActionResult<{ secret?: string }>;

async function admin(): Promise<{ id: number; name: string } | Result> {
  try {
    const me = await requireActionUser("admin");
    return { id: me.userId, name: me.username };
  } catch (error) {
    const refused = authFailure(error);
    if (refused) return refused;
    throw error;
  }
}

const createSchema = z.object({
  name: z.string().trim().min(2, "A token name has at least 2 characters.").max(80),
  scopes: z.array(z.enum(API_SCOPES)).min(1, "Choose at least one scope."),
});

export async function createTokenAction(_prev: Result, form: FormData): Promise<Result> {
  return actionOutcome("admin: create token", async (): Promise<Result> => {
    const actor = await admin();
    if ("ok" in actor) return actor;
    const parsed = createSchema.safeParse({ name: form.get("name") ?? "", scopes: form.getAll("scopes") });
    if (!parsed.success) return validationFailure(parsed.error);
    const created = await issueApiToken(actor, parsed.data.name, parsed.data.scopes);
    if (!created.ok) return { ok: false, status: 400, error: created.error };
    revalidatePath("/admin/tokens");
    return { ok: true, message: `Token "${parsed.data.name}" created (${created.prefix}…).`, data: { secret: created.token } };
  });
}

const revokeSchema = z.object({ tokenId: z.coerce.number().int().positive() });

export async function revokeTokenAction(_prev: Result, form: FormData): Promise<Result> {
  return actionOutcome("admin: revoke token", async (): Promise<Result> => {
    const actor = await admin();
    if ("ok" in actor) return actor;
    const parsed = revokeSchema.safeParse(Object.fromEntries(form));
    if (!parsed.success) return validationFailure(parsed.error);
    const result = await withdrawApiToken(actor, parsed.data.tokenId);
    if (!result.ok) return { ok: false, status: 400, error: result.error };
    revalidatePath("/admin/tokens");
    return { ok: true, message: "Token revoked." };
  });
}

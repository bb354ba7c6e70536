"use server";

import { revalidatePath } from "next/cache";
import { z } from "zod";
import { AuthError, requireActionUser, type UserPrincipal } from "@/lib/auth/guard";
import { EpisodeError, addEpisodeNote, setEpisodeActionRefs, setEpisodeOwner } from "@/lib/db/episodes";
import { liveSource } from "@/lib/episodes/live-source";
import { EPISODE_STATUSES, STATUS_LABELS } from "@/lib/episodes/status";
import { changeEpisodeStatus } from "@/lib/episodes/workflow";
import { databaseTrouble, describeTroubleForLog } from "@/lib/db/errors";
import { logServerError } from "@/lib/http/errors";

/** What every episode action answers: a message to show, or an error (with the field it concerns). */
export type EpisodeActionResult =
  | { ok: true; message: string; at: number }
  | { ok: false; error: string; field?: string; at: number };

const id = z.coerce.number().int().positive();

const statusForm = z.object({
  id,
  status: z.enum(EPISODE_STATUSES, { error: "Choose the new status." }),
  reason: z.string().trim().max(2000, "At most 2,000 characters.").optional().default(""),
});

const ownerForm = z.object({
  id,
  ownerId: z.union([z.literal(""), z.coerce.number().int().positive()]),
});

const refsForm = z.object({
  id,
  actionRefs: z.string().max(500, "At most 500 characters.").optional().default(""),
});

const noteForm = z.object({
  id,
  body: z.string().trim().min(1, "Write the note first.").max(5000, "At most 5,000 characters."),
});

function fail(error: string, field?: string): EpisodeActionResult {
  return { ok: false, error, field, at: Date.now() };
}

function done(message: string, episodeId: number): EpisodeActionResult {
  revalidatePath(`/episodes/${episodeId}`);
  revalidatePath("/episodes", "layout");
  return { ok: true, message, at: Date.now() };
}

function fields(form: FormData): Record<string, FormDataEntryValue> {
  return Object.fromEntries(form.entries());
}

/** Runs an action as a signed-in engineer; turns known failures into typed results. */
async function asEngineer(task: (me: UserPrincipal) => Promise<EpisodeActionResult>): Promise<EpisodeActionResult> {
  let me: UserPrincipal;
  try {
    me = await requireActionUser("engineer");
  } catch (error) {
    if (error instanceof AuthError) return fail(error.message);
    throw error;
  }
  try {
    return await task(me);
  } catch (error) {
    if (error instanceof EpisodeError) return fail(error.message, error.code === "reason" ? "reason" : undefined);
    const trouble = databaseTrouble(error);
    if (trouble) {
      console.warn(describeTroubleForLog(trouble, "episode action"));
      return fail(trouble.message);
    }
    const ref = logServerError(error, "episode action");
    return fail(`Something went wrong (reference ${ref}).`);
  }
}

const actorOf = (me: UserPrincipal) => ({ id: me.userId, name: me.displayName });

export async function changeStatusAction(_prev: EpisodeActionResult | null, form: FormData): Promise<EpisodeActionResult> {
  return asEngineer(async (me) => {
    const parsed = statusForm.safeParse(fields(form));
    if (!parsed.success) return fail(parsed.error.issues[0]?.message ?? "Check the form.", String(parsed.error.issues[0]?.path[0] ?? ""));
    const { id: episodeId, status, reason } = parsed.data;
    const change = await changeEpisodeStatus(liveSource, episodeId, status, reason, actorOf(me));
    return done(
      `Status changed to “${STATUS_LABELS[change.to]}”; a snapshot of the analysis was kept${change.ownerAssigned ? ", and you are now its owner" : ""}.`,
      episodeId,
    );
  });
}

export async function setOwnerAction(_prev: EpisodeActionResult | null, form: FormData): Promise<EpisodeActionResult> {
  return asEngineer(async (me) => {
    const parsed = ownerForm.safeParse(fields(form));
    if (!parsed.success) return fail("Choose an owner.", "ownerId");
    const ownerId = parsed.data.ownerId === "" ? null : parsed.data.ownerId;
    const changed = await setEpisodeOwner(parsed.data.id, ownerId, actorOf(me));
    return done(changed ? (ownerId === null ? "Owner cleared." : "Owner assigned.") : "The owner was already so.", parsed.data.id);
  });
}

export async function setActionRefsAction(_prev: EpisodeActionResult | null, form: FormData): Promise<EpisodeActionResult> {
  return asEngineer(async (me) => {
    const parsed = refsForm.safeParse(fields(form));
    if (!parsed.success) return fail(parsed.error.issues[0]?.message ?? "Check the form.", "actionRefs");
    const changed = await setEpisodeActionRefs(parsed.data.id, parsed.data.actionRefs, actorOf(me));
    return done(changed ? "Action references saved." : "No change to the action references.", parsed.data.id);
  });
}

export async function addNoteAction(_prev: EpisodeActionResult | null, form: FormData): Promise<EpisodeActionResult> {
  return asEngineer(async (me) => {
    const parsed = noteForm.safeParse(fields(form));
    if (!parsed.success) return fail(parsed.error.issues[0]?.message ?? "Check the form.", "body");
    await addEpisodeNote(parsed.data.id, parsed.data.body, actorOf(me));
    return done("Note added.", parsed.data.id);
  });
}

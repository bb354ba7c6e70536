import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { db } from "@/lib/db/client";
import { EpisodeError, addEpisodeNote, countOpenEpisodes, episodeAudit, episodeNotes, episodeSnapshots, getEpisode, setEpisodeActionRefs, setEpisodeOwner } from "@/lib/db/episodes";
import { liveSource } from "@/lib/episodes/live-source";
import { EPISODE_STATUSES, TRANSITIONS, canTransition } from "@/lib/episodes/status";
import { syncComparison } from "@/lib/episodes/sync";
import { changeEpisodeStatus } from "@/lib/episodes/workflow";
import { useTempDatabase } from "../helpers/temp-db";
import { seedMasterData, seedTallies, seedUsers } from "./helpers";

let ctx: Awaited<ReturnType<typeof useTempDatabase>>;
let users: ReturnType<typeof seedUsers>;
let id = 0;
beforeAll(async () => {
  ctx = await useTempDatabase();
  seedMasterData();
  users = seedUsers();
  seedTallies(0, 50);
  const summary = await syncComparison(liveSource, "lines");
  id = summary.created[0];
});
afterAll(async () => ctx.cleanup());

const erin = () => ({ id: users.engineer.id, name: users.engineer.name });

async function expectRefused(promise: Promise<unknown>, code: EpisodeError["code"]) {
  const error = await promise.then(
    () => null,
    (e: unknown) => e,
  );
  expect(error).toBeInstanceOf(EpisodeError);
  expect((error as EpisodeError).code).toBe(code);
}

describe("the review workflow", () => {
  it("allows exactly the documented transitions", () => {
    const allowed = EPISODE_STATUSES.flatMap((from) => EPISODE_STATUSES.filter((to) => canTransition(from, to)).map((to) => `${from}>${to}`));
    expect(allowed.sort()).toEqual(
      [
        "new>investigating",
        "new>no-action",
        "new>false-alarm",
        "investigating>explained",
        "investigating>no-action",
        "investigating>false-alarm",
        "explained>investigating",
        "no-action>investigating",
        "false-alarm>investigating",
      ].sort(),
    );
    for (const s of EPISODE_STATUSES) expect(TRANSITIONS[s]).not.toContain(s);
  });

  it("refuses a jump the workflow does not allow, and leaves no trace", async () => {
    const snapshots = (await episodeSnapshots(id)).length;
    await expectRefused(changeEpisodeStatus(liveSource, id, "explained", "found it", erin()), "transition");
    expect((await getEpisode(id))!.status).toBe("new");
    expect((await episodeSnapshots(id)).length).toBe(snapshots);
    expect(await db().auditEvent.count({ where: { action: "episode.status" } })).toBe(0);
  });

  it("takes a new episode into investigation without a reason, assigns the actor as owner, snapshots and audits", async () => {
    const change = await changeEpisodeStatus(liveSource, id, "investigating", "", erin());
    expect(change).toMatchObject({ from: "new", to: "investigating", ownerAssigned: true });
    const record = (await getEpisode(id))!;
    expect(record.status).toBe("investigating");
    expect(record.owner).toEqual({ id: users.engineer.id, name: "Erin Engineer" });
    const snapshots = await episodeSnapshots(id);
    expect(snapshots.map((s) => s.reason)).toEqual(["raised", "status:investigating"]);
    expect(snapshots[1].status).toBe("investigating");
    expect(snapshots[1].analysis.peak?.start).toBe(record.peakStart);
    const audit = await episodeAudit(id);
    const status = audit.filter((a) => a.action === "episode.status");
    expect(status).toHaveLength(1);
    expect(status[0]).toMatchObject({ actorName: "Erin Engineer", before: { status: "new" }, after: { status: "investigating", snapshotId: change.snapshotId } });
    expect(audit.some((a) => a.action === "episode.owner" && (a.after as { ownerId: number }).ownerId === users.engineer.id)).toBe(true);
    expect(await countOpenEpisodes()).toBe(1);
  });

  it("requires a reason to close", async () => {
    await expectRefused(changeEpisodeStatus(liveSource, id, "explained", "   ", erin()), "reason");
    expect((await getEpisode(id))!.status).toBe("investigating");
  });

  it("closes with a reason (no longer open) and reopens with one, a snapshot for each", async () => {
    await changeEpisodeStatus(liveSource, id, "explained", "Worn sealing die on L2, replaced", erin());
    expect((await getEpisode(id))!.status).toBe("explained");
    expect(await countOpenEpisodes()).toBe(0);
    await expectRefused(changeEpisodeStatus(liveSource, id, "false-alarm", "changed my mind", erin()), "transition");
    await changeEpisodeStatus(liveSource, id, "investigating", "Came back after the die change", { id: users.admin.id, name: users.admin.name });
    expect(await countOpenEpisodes()).toBe(1);
    const snapshots = await episodeSnapshots(id);
    expect(snapshots.map((s) => s.reason)).toEqual(["raised", "status:investigating", "status:explained", "status:investigating"]);
    const status = (await episodeAudit(id)).filter((a) => a.action === "episode.status");
    expect(status.map((a) => [a.actorName, a.reason])).toEqual([
      ["Erin Engineer", null],
      ["Erin Engineer", "Worn sealing die on L2, replaced"],
      ["Ada Admin", "Came back after the die change"],
    ]);
    // The owner stays Erin: reopening does not reassign.
    expect((await getEpisode(id))!.owner?.id).toBe(users.engineer.id);
  });

  it("audits owner changes, action references and notes, with the author and time", async () => {
    expect(await setEpisodeOwner(id, users.admin.id, erin())).toBe(true);
    expect(await setEpisodeOwner(id, users.admin.id, erin())).toBe(false);
    await expectRefused(setEpisodeOwner(id, 9999, erin()), "owner");
    expect(await setEpisodeActionRefs(id, "  CA-2026-041; containment QN-88  ", erin())).toBe(true);
    expect((await getEpisode(id))!.actionRefs).toBe("CA-2026-041; containment QN-88");
    const note = await addEpisodeNote(id, "Die cavity 4 shows wear.", erin());
    expect(note.author.name).toBe("Erin Engineer");
    await expectRefused(addEpisodeNote(id, "   ", erin()), "invalid");
    const notes = await episodeNotes(id);
    expect(notes.map((n) => [n.author.name, n.body])).toEqual([["Erin Engineer", "Die cavity 4 shows wear."]]);
    expect(notes[0].createdAt).toBeInstanceOf(Date);
    const actions = (await episodeAudit(id)).map((a) => a.action);
    expect(actions.filter((a) => a === "episode.owner")).toHaveLength(2); // auto-assign, then Ada
    expect(actions).toContain("episode.action-refs");
    expect(actions).toContain("episode.note");
    const owner = (await episodeAudit(id)).filter((a) => a.action === "episode.owner").at(-1)!;
    expect(owner).toMatchObject({ actorName: "Erin Engineer", before: { owner: "Erin Engineer" }, after: { owner: "Ada Admin" } });
  });
});

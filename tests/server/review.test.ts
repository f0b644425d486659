// Review and comments against the real database: rows of our own fixture
// studio only, removed afterwards; e-mails are checked in the outbox.
import { randomUUID } from "node:crypto";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { db } from "../../app/lib/db.server.ts";
import { approveRender, askForChanges, getTrackReview, listReviewHistory, ReviewActionError, ReviewForbiddenError, sendForReview } from "../../app/models/review.server.ts";
import { addComment, listComments, setCommentResolved } from "../../app/models/comment.server.ts";
import { createFixture, destroyFixture, type Fixture } from "./fixtures.ts";

let f: Fixture;
let revisionId: string;
let mixVersion = 0;
const LINK = "http://tidemark.test/review";

async function newMix(): Promise<string> {
  mixVersion++;
  const [row] = await db("mixes")
    .insert({
      track_id: f.trackId,
      version: mixVersion,
      original_name: `tidepool-v${mixVersion}.wav`,
      storage_key: `test/review/${randomUUID()}.wav`,
      size_bytes: 1000,
      sample_rate_hz: 48_000,
      channels: 2,
      bit_depth: 24,
      sample_format: "int",
      frames: 48_000 * 200,
    })
    .returning("id");
  return row.id;
}

/** A finished render (its file is never read here). */
async function doneRender(mixId: string, region?: [number, number], targetLufs: number | null = null): Promise<string> {
  const [row] = await db("renders")
    .insert({
      mix_id: mixId,
      chain_revision_id: revisionId,
      target_lufs: targetLufs,
      kind: region ? "preview" : "print",
      region_start_s: region?.[0] ?? null,
      region_end_s: region?.[1] ?? null,
      state: "done",
      progress: 1,
      finished_at: db.fn.now(),
      output_key: `test/review/${randomUUID()}.wav`,
    })
    .returning("id");
  return row.id;
}

const outbox = (ids: string[]) => db("outbox_emails").whereIn("id", ids).orderBy("to_address").select("to_address", "subject", "kind", "text");

beforeAll(async () => {
  expect(await db.schema.hasTable("review_events"), "run `npx tsx scripts/migrate.ts` first").toBe(true);
  f = await createFixture();
  const [chain] = await db("chains").insert({ studio_id: f.studioId, track_id: f.trackId, name: "Review chain" }).returning("id");
  const [rev] = await db("chain_revisions").insert({ chain_id: chain.id, revision: 1, params: JSON.stringify({ stages: [], output: {} }) }).returning("id");
  revisionId = rev.id;
});

afterAll(async () => {
  if (f) {
    await db("outbox_emails").where({ studio_id: f.studioId }).delete();
    // Renders hold their chain revision (NO ACTION); remove them before the studio's cascade.
    await db("renders").whereIn("mix_id", db("mixes").select("id").where({ track_id: f.trackId })).delete();
  }
  await destroyFixture(f);
  await db.destroy();
});

describe("review", () => {
  it("sends, asks for changes, sends again, approves — each with its e-mail; rendering keeps the approval, sending another master asks first", async () => {
    const mix1 = await newMix();
    const r1 = await doneRender(mix1, [60, 90]);
    expect((await getTrackReview(f.trackId)).state.status).toBe("in_progress");

    const sent = await sendForReview({ renderId: r1, senderId: f.users.engineer.id, message: "  First pass, a touch brighter.  ", link: "http://tidemark.test/r/1" });
    expect(sent.state).toMatchObject({ status: "sent", underReviewRenderId: r1 });
    // The release's client has one member; the other client of the studio hears nothing.
    const [invite] = await outbox(sent.emailIds);
    expect(sent.emailIds).toHaveLength(1);
    expect(invite).toMatchObject({ to_address: f.users.client.email, kind: "review_request" });
    expect(invite.text).toContain("First pass, a touch brighter.");
    expect(invite.text).toContain("http://tidemark.test/r/1");

    // Only the release's client gives the verdict.
    await expect(approveRender({ renderId: r1, userId: f.users.engineer.id, link: LINK })).rejects.toBeInstanceOf(ReviewForbiddenError);
    await expect(approveRender({ renderId: r1, userId: f.users.otherClient.id, link: LINK })).rejects.toBeInstanceOf(ReviewForbiddenError);
    await expect(askForChanges({ renderId: r1, userId: f.users.client.id, note: "  ", link: LINK })).rejects.toBeInstanceOf(ReviewActionError);

    const changes = await askForChanges({ renderId: r1, userId: f.users.client.id, note: "The chorus feels squashed.", link: "http://tidemark.test/t/1" });
    expect(changes.state).toMatchObject({ status: "changes_asked", changesNote: "The chorus feels squashed." });
    const [toEngineer] = await outbox(changes.emailIds);
    expect(toEngineer).toMatchObject({ to_address: f.users.engineer.email, kind: "review_changes" });
    expect(toEngineer.text).toContain("The chorus feels squashed.");
    // Changes already asked: no approval of the same render now.
    await expect(approveRender({ renderId: r1, userId: f.users.client.id, link: LINK })).rejects.toThrow(/changes were already asked/);

    // Another master (the same mix at a loudness target): version 2.
    const r2 = await doneRender(mix1, undefined, -14);
    await sendForReview({ renderId: r2, senderId: f.users.owner.id, link: "http://tidemark.test/r/2" });
    await expect(approveRender({ renderId: r1, userId: f.users.client.id, link: LINK })).rejects.toThrow(/newer version/);
    const approved = await approveRender({ renderId: r2, userId: f.users.client.id, link: "http://tidemark.test/t/1" });
    expect(approved.state).toMatchObject({ status: "approved", approvedRenderId: r2, approvedVersion: 2, changeRounds: 1 });
    const [toOwner] = await outbox(approved.emailIds);
    // The owner sent r2, so the owner hears of its approval.
    expect(toOwner).toMatchObject({ to_address: f.users.owner.email, kind: "review_approved" });

    const history = await listReviewHistory(f.trackId);
    expect(history.map((h) => [h.kind, h.userName])).toEqual([
      ["sent", `engineer ${f.tag}`],
      ["changes_asked", `client ${f.tag}`],
      ["sent", `owner ${f.tag}`],
      ["approved", `client ${f.tag}`],
    ]);

    // Rendering never clears the approval: the approved master again, another master, a new mix.
    await doneRender(mix1, [10, 40], -14);
    await doneRender(mix1, undefined, -10);
    const r4 = await doneRender(await newMix());
    expect((await getTrackReview(f.trackId)).state).toMatchObject({ status: "approved", approvedRenderId: r2 });
    // Sending another master to a client who approved needs the engineer's confirmation…
    await expect(sendForReview({ renderId: r4, senderId: f.users.engineer.id, link: LINK })).rejects.toThrow(/approved version 2.*version 3.*review again/);
    expect((await getTrackReview(f.trackId)).state.status).toBe("approved");
    // …and then opens a new review, the earlier approval still shown.
    const reopened = await sendForReview({ renderId: r4, senderId: f.users.engineer.id, link: LINK, confirmNewReview: true });
    expect(reopened.state).toMatchObject({ status: "sent", version: 3, approvedVersion: 2, approvedRenderId: r2 });
    await approveRender({ renderId: r4, userId: f.users.client.id, link: LINK });
    expect((await getTrackReview(f.trackId)).state).toMatchObject({ status: "approved", approvedVersion: 3 });
  });

  it("refuses to send an unfinished render, or for a client to send", async () => {
    const mix = await newMix();
    const done = await doneRender(mix);
    const [queued] = await db("renders").insert({ mix_id: mix, chain_revision_id: revisionId, kind: "print" }).returning("id");
    await expect(sendForReview({ renderId: queued.id, senderId: f.users.engineer.id, link: LINK })).rejects.toThrow(/finished render/);
    await expect(sendForReview({ renderId: done, senderId: f.users.client.id, link: LINK })).rejects.toBeInstanceOf(ReviewForbiddenError);
    await expect(sendForReview({ renderId: done, senderId: f.users.otherStudio.id, link: LINK })).rejects.toBeInstanceOf(ReviewForbiddenError);
  });

  it("lets only one of two verdicts given at once land", async () => {
    const mix = await newMix();
    const r = await doneRender(mix);
    await sendForReview({ renderId: r, senderId: f.users.engineer.id, link: LINK, confirmNewReview: true });
    const results = await Promise.allSettled([
      approveRender({ renderId: r, userId: f.users.client.id, link: LINK }),
      askForChanges({ renderId: r, userId: f.users.client.id, note: "Wait, one thing", link: LINK }),
    ]);
    expect(results.filter((x) => x.status === "fulfilled")).toHaveLength(1);
    expect(results.filter((x) => x.status === "rejected").map((x) => (x as PromiseRejectedResult).reason)).toEqual([expect.any(ReviewActionError)]);
  });
});

describe("comments", () => {
  it("pins comments to times, threads replies, resolves, and e-mails the other side", async () => {
    const mix = await newMix();
    const r = await doneRender(mix, [30, 60]);
    await sendForReview({ renderId: r, senderId: f.users.engineer.id, link: LINK, confirmNewReview: true });

    const late = await addComment({ renderId: r, authorId: f.users.client.id, timeS: 47.5, body: "Snare jumps out here", link: "http://tidemark.test/c" });
    const [toEngineer] = await outbox(late.emailIds);
    expect(toEngineer).toMatchObject({ to_address: f.users.engineer.email, kind: "comment" });
    expect(toEngineer.subject).toContain(`client ${f.tag}`);
    expect(toEngineer.text).toContain("0:47");
    const early = await addComment({ renderId: r, authorId: f.users.engineer.id, timeS: 31, body: "Intro lifted 0.5 dB", link: LINK });
    expect((await outbox(early.emailIds)).map((m) => m.to_address)).toEqual([f.users.client.email]);

    // A reply takes its thread's time and reaches the thread's starter and the other side once each.
    const reply = await addComment({ renderId: r, authorId: f.users.owner.id, parentId: late.comment.id, body: "Tamed it in the next pass", link: LINK });
    expect(reply.comment.timeS).toBe(47.5);
    expect((await outbox(reply.emailIds)).map((m) => m.to_address)).toEqual([f.users.client.email]);
    await expect(addComment({ renderId: r, authorId: f.users.client.id, parentId: reply.comment.id, body: "Thanks", link: LINK })).rejects.toThrow(/Reply to the thread/);

    await expect(addComment({ renderId: r, authorId: f.users.client.id, timeS: 500, body: "Too late", link: LINK })).rejects.toThrow(/after the end/);
    await expect(addComment({ renderId: r, authorId: f.users.client.id, body: "When?", link: LINK })).rejects.toThrow(/needs a time/);
    await expect(addComment({ renderId: r, authorId: f.users.otherClient.id, timeS: 3, body: "Not mine", link: LINK })).rejects.toBeInstanceOf(ReviewForbiddenError);
    await expect(addComment({ mixId: mix, authorId: f.users.client.id, parentId: late.comment.id, body: "Wrong place", link: LINK })).rejects.toBeInstanceOf(ReviewForbiddenError);

    const onMix = await addComment({ mixId: mix, authorId: f.users.engineer.id, timeS: 12, body: "Clip in the mix at the drop", link: LINK });
    expect(onMix.comment).toMatchObject({ mixId: mix, renderId: null, timeS: 12 });

    const threads = await listComments({ renderId: r });
    expect(threads.map((t) => [t.timeS, t.body, t.replies.map((x) => x.body)])).toEqual([
      [31, "Intro lifted 0.5 dB", []],
      [47.5, "Snare jumps out here", ["Tamed it in the next pass"]],
    ]);
    expect(threads[1].authorName).toBe(`client ${f.tag}`);
    expect((await listComments({ mixId: mix })).map((t) => t.body)).toEqual(["Clip in the mix at the drop"]);

    const resolved = await setCommentResolved(late.comment.id, f.users.engineer.id, true);
    expect(resolved.resolvedAt).toBeInstanceOf(Date);
    expect((await setCommentResolved(late.comment.id, f.users.client.id, false)).resolvedAt).toBeNull();
    await expect(setCommentResolved(late.comment.id, f.users.otherStudio.id, true)).rejects.toBeInstanceOf(ReviewForbiddenError);
  });
});

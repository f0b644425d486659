// The review room's data, as the page gets it: what a client may know and
// nothing more. Asserted on the loader's data (not the HTML): only renders
// sent to them, under plain names, with the engineer's message — never mix
// file names, chain names or revisions, loudness targets or traces. Staff get
// the same data (they see what the client sees).
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { db } from "../../app/lib/db.server.ts";
import * as roomPage from "../../app/routes/review-room.tsx";
import { approveRender, sendForReview } from "../../app/models/review.server.ts";
import { addStoredRender, type StoredRender } from "./download-fixture.ts";
import { createFixture, destroyFixture, outcomeOf, requestAs, type Fixture, type Persona } from "./fixtures.ts";

let f: Fixture;
let first: StoredRender;
let unsent: StoredRender;
let trackTitle = "";

type RoomData = Awaited<ReturnType<typeof roomPage.loader>>;
const load = (persona: Persona, query = `?track=${f.trackId}`) =>
  roomPage.loader({ request: requestAs(f, persona, `/releases/${f.releaseId}/room${query}`), params: { releaseId: f.releaseId }, context: {} } as never) as Promise<RoomData>;

/** Every key anywhere in a value. */
function keysOf(value: unknown, into = new Set<string>()): Set<string> {
  if (Array.isArray(value)) for (const v of value) keysOf(v, into);
  else if (value && typeof value === "object") {
    for (const [k, v] of Object.entries(value)) {
      into.add(k);
      keysOf(v, into);
    }
  }
  return into;
}

beforeAll(async () => {
  f = await createFixture();
  trackTitle = (await db("tracks").where({ id: f.trackId }).first("title")).title;
  first = await addStoredRender({ studioId: f.studioId, trackId: f.trackId });
  unsent = await addStoredRender({ studioId: f.studioId, trackId: f.trackId });
  await db("renders").where({ id: first.renderId }).update({ target_lufs: -14, peaks: JSON.stringify({ columns: 3, frames: 1000, sampleRate: 48_000, min: [-1, -2, -3], max: [1, 2, 3] }) });
  await sendForReview({ renderId: first.renderId, senderId: f.users.engineer.id, message: "A first pass: warmer, as we said.", link: "http://x.test/" });
});

afterAll(async () => {
  await first?.cleanup();
  await unsent?.cleanup();
  if (f) await db("outbox_emails").where({ studio_id: f.studioId }).delete();
  await destroyFixture(f);
});

describe("review room data", () => {
  it("is for the release's people only", async () => {
    expect(await outcomeOf(() => load("otherClient"))).toBe("404");
    expect(await outcomeOf(() => load("otherStudio"))).toBe("404");
    expect(await outcomeOf(() => load("signedOut"))).toBe("sign-in");
  });

  it("gives a client only what was sent, under plain names, with the engineer's message", async () => {
    const room = await load("client");
    expect(room.tracks.map((t) => [t.id, t.status, t.statusText])).toEqual([[f.trackId, "sent", "Sent for review (version 1)"]]);
    expect(room.selected?.versions.map((v) => v.renderId)).toEqual([first.renderId]);
    expect(room.selected?.current).toMatchObject({
      name: `Full master of ${trackTitle}, version 1`,
      message: "A first pass: warmer, as we said.",
      startS: 0,
      peaks: { startS: 0, min: [-1, -2, -3], max: [1, 2, 3] },
    });
    expect(room.selected?.verdictOpen).toBe(true);
  });

  it("carries none of the studio's internals: mix file names, chain names or revisions, targets, traces", async () => {
    const room = await load("client");
    const text = JSON.stringify(room);
    const mix = await db("mixes").where({ id: first.mixId }).first("original_name");
    const render = await db("renders").where({ id: first.renderId }).first("chain_revision_id", "mix_id");
    const chain = await db("chain_revisions as cr").join("chains as c", "c.id", "cr.chain_id").where("cr.id", render.chain_revision_id).first("c.name");
    for (const secret of [mix.original_name, chain.name, render.chain_revision_id, render.mix_id, unsent.renderId]) expect(text).not.toContain(secret);
    const keys = keysOf(room);
    for (const key of ["chainName", "chainRevisionId", "revision", "params", "mixId", "mixVersion", "originalName", "targetLufs", "tracesKey", "traces", "outputKey", "recipes", "approvedRecipe", "underReviewRecipe"]) {
      expect(keys.has(key), key).toBe(false);
    }
    // Staff see exactly the same (what the client sees), flagged as staff.
    const staff = await load("engineer");
    expect({ ...staff, staff: false }).toEqual(room);
  });

  it("keeps the approval through a render, shows the earlier approval while version 2 is under review, and offers both side by side", async () => {
    await approveRender({ renderId: first.renderId, userId: f.users.client.id, link: "http://x.test/" });
    // The unsent render was made from the same mix and chain without a target: another master, version 2.
    await sendForReview({ renderId: unsent.renderId, senderId: f.users.engineer.id, message: "Version 2: less limiting.", link: "http://x.test/", confirmNewReview: true });
    const room = await load("client");
    expect(room.tracks[0].statusText).toBe("Sent for review (version 2) · approved: version 1");
    expect(room.selected?.current).toMatchObject({ renderId: unsent.renderId, version: 2, message: "Version 2: less limiting." });
    expect(room.selected?.previous).toMatchObject({ renderId: first.renderId, version: 1 });
    // The fixture's masters last 1 000 frames (0.02 s): too short to switch between at one moment, so not side by side.
    expect(room.selected?.sideBySide).toBe(false);
  });

  it("sends a visitor without a track to the first track's address", async () => {
    const thrown = await load("client", "").catch((e: unknown) => e);
    expect((thrown as Response).headers.get("Location")).toBe(`/releases/${f.releaseId}/room?track=${f.trackId}`);
  });
});

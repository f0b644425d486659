// The running order: moving a track swaps it with its neighbour, in one
// transaction, and refuses moves past either end or of another release's track.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { createFixture, dataOf, destroyFixture, requestAs, type Fixture } from "./fixtures.ts";
import { db } from "../../app/lib/db.server.ts";
import { listTracks, moveTrack } from "../../app/models/track.server.ts";
import * as release from "../../app/routes/release.tsx";

let fixture: Fixture;
const titles = () => listTracks(fixture.releaseId).then((tracks) => tracks.map((t) => `${t.position}:${t.title.split(" ")[0]}`));

beforeAll(async () => {
  fixture = await createFixture();
  await db("tracks").where({ id: fixture.trackId }).update({ title: "Alpha" });
  // A gap in the numbering (1, 2, 5) stays: moves swap positions, they do not renumber.
  await db("tracks").insert([
    { release_id: fixture.releaseId, position: 2, title: "Bravo" },
    { release_id: fixture.releaseId, position: 5, title: "Charlie" },
  ]);
});
afterAll(() => destroyFixture(fixture));

type Args = Parameters<typeof release.action>[0];
const act = (form: Record<string, string>, persona: "engineer" | "client" = "engineer") =>
  release.action({ request: requestAs(fixture, persona, `/releases/${fixture.releaseId}`, { form }), params: { releaseId: fixture.releaseId }, context: {} } as unknown as Args);

describe("running order", () => {
  it("swaps a track with the one above or below", async () => {
    const tracks = await listTracks(fixture.releaseId);
    const charlie = tracks.find((t) => t.title === "Charlie")!;
    expect(dataOf(await act({ trackId: charlie.id, direction: "up" })).status).toBe(200);
    expect(await titles()).toEqual(["1:Alpha", "2:Charlie", "5:Bravo"]);
    expect(await moveTrack(fixture.releaseId, fixture.trackId, "down")).toBe(true);
    expect(await titles()).toEqual(["1:Charlie", "2:Alpha", "5:Bravo"]);
  });

  it("refuses a move past either end, and leaves the order as it was", async () => {
    const [first, , last] = await listTracks(fixture.releaseId);
    expect(dataOf(await act({ trackId: first.id, direction: "up" })).status).toBe(400);
    expect(await moveTrack(fixture.releaseId, last.id, "down")).toBe(false);
    expect(await titles()).toEqual(["1:Charlie", "2:Alpha", "5:Bravo"]);
  });

  it("refuses another release's track, bad input, and a client", async () => {
    const [other] = await db("tracks").insert({ release_id: fixture.otherReleaseId, position: 1, title: "Elsewhere" }).returning("id");
    expect(dataOf(await act({ trackId: other.id, direction: "up" })).status).toBe(400);
    expect(dataOf(await act({ trackId: fixture.trackId, direction: "sideways" })).status).toBe(400);
    await expect(act({ trackId: fixture.trackId, direction: "up" }, "client")).rejects.toMatchObject({ status: 404 });
    expect(await titles()).toEqual(["1:Charlie", "2:Alpha", "5:Bravo"]);
  });

  it("two moves at once both land, without breaking the unique positions", async () => {
    const [, alpha, bravo] = await listTracks(fixture.releaseId);
    const results = await Promise.all([moveTrack(fixture.releaseId, alpha.id, "up"), moveTrack(fixture.releaseId, bravo.id, "up")]);
    expect(results).toEqual([true, true]);
    const positions = (await listTracks(fixture.releaseId)).map((t) => t.position);
    expect(positions).toEqual([1, 2, 5]);
  });
});

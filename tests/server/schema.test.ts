// The database itself refuses what the app must never store, whatever code writes to it.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { db } from "../../app/lib/db.server.ts";
import { createFixture, destroyFixture, type Fixture } from "./fixtures.ts";

let fixture: Fixture;
beforeAll(async () => {
  fixture = await createFixture();
});
afterAll(async () => destroyFixture(fixture));

async function pgCode(write: () => Promise<unknown>): Promise<string | undefined> {
  try {
    await write();
    return undefined;
  } catch (error) {
    return (error as { code?: string }).code;
  }
}

describe("schema constraints", () => {
  it("compares e-mail addresses case-insensitively", async () => {
    const email = fixture.users.owner.email.toUpperCase();
    expect(await pgCode(() => db("users").insert({ email, name: "Twin", password_hash: "x" }))).toBe("23505");
  });

  it("ties a client member to a client and staff to none", async () => {
    const userId = fixture.users.otherStudio.id;
    expect(await pgCode(() => db("memberships").insert({ user_id: userId, studio_id: fixture.studioId, role: "client" }))).toBe("23514");
    expect(await pgCode(() => db("memberships").insert({ user_id: userId, studio_id: fixture.studioId, role: "engineer", client_id: fixture.clientId }))).toBe("23514");
    expect(await pgCode(() => db("memberships").insert({ user_id: userId, studio_id: fixture.studioId, role: "admin" }))).toBe("23514");
  });

  it("keeps a release's client inside the release's studio", async () => {
    expect(await pgCode(() => db("releases").insert({ studio_id: fixture.otherStudioId, client_id: fixture.clientId, title: "Crossed", kind: "single" }))).toBe("23503");
    expect(await pgCode(() => db("releases").insert({ studio_id: fixture.studioId, client_id: fixture.clientId, title: "Odd", kind: "boxset" }))).toBe("23514");
  });

  it("orders tracks uniquely and checks the ISRC shape", async () => {
    expect(await pgCode(() => db("tracks").insert({ release_id: fixture.releaseId, position: 1, title: "Twin" }))).toBe("23505");
    expect(await pgCode(() => db("tracks").insert({ release_id: fixture.releaseId, position: 9, title: "Bad code", isrc: "ZZ-TDM-26-00001" }))).toBe("23514");
    expect(await pgCode(() => db("tracks").insert({ release_id: fixture.releaseId, position: 0, title: "Zero" }))).toBe("23514");
  });

  it("lets two tracks swap positions inside one transaction", async () => {
    const [second] = await db("tracks").insert({ release_id: fixture.releaseId, position: 2, title: "Swap me" }).returning("id");
    await db.transaction(async (trx) => {
      await trx.raw("SET CONSTRAINTS tracks_release_position_unique DEFERRED");
      await trx("tracks").where({ id: fixture.trackId }).update({ position: 2 });
      await trx("tracks").where({ id: second.id }).update({ position: 1 });
    });
    const order = await db("tracks").where({ release_id: fixture.releaseId }).orderBy("position").pluck("id");
    expect(order).toEqual([second.id, fixture.trackId]);
  });
});

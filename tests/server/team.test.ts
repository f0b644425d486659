// The owner changes staff roles (a studio keeps at least one owner) and adds clients.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { db } from "../../app/lib/db.server.ts";
import * as team from "../../app/routes/team.tsx";
import { createFixture, dataOf, destroyFixture, requestAs, type Fixture } from "./fixtures.ts";

let fixture: Fixture;
beforeAll(async () => {
  fixture = await createFixture();
});
afterAll(async () => destroyFixture(fixture));

async function post(form: Record<string, string>) {
  return dataOf<{ message?: string; errors: Record<string, string> }>(
    await team.action({ request: requestAs(fixture, "owner", "/team", { form }), params: {}, context: {} } as never),
  );
}

const membershipOf = (userId: string) => db("memberships").first("id", "role").where({ user_id: userId, studio_id: fixture.studioId });

describe("team", () => {
  it("keeps at least one owner", async () => {
    const owner = await membershipOf(fixture.users.owner.id);
    const refused = await post({ intent: "role", membershipId: owner.id, role: "engineer" });
    expect(refused).toEqual({ status: 400, body: expect.objectContaining({ message: "The studio needs at least one owner" }) });
    expect((await membershipOf(fixture.users.owner.id)).role).toBe("owner");
  });

  it("promotes an engineer, after which the first owner may step down", async () => {
    const engineer = await membershipOf(fixture.users.engineer.id);
    expect((await post({ intent: "role", membershipId: engineer.id, role: "owner" })).status).toBe(200);
    expect((await membershipOf(fixture.users.engineer.id)).role).toBe("owner");
    const owner = await membershipOf(fixture.users.owner.id);
    expect((await post({ intent: "role", membershipId: owner.id, role: "engineer" })).status).toBe(200);
    expect((await membershipOf(fixture.users.owner.id)).role).toBe("engineer");
  });

  it("does not turn a client member into staff", async () => {
    // The owner stepped down above; act as the new owner.
    const client = await membershipOf(fixture.users.client.id);
    const result = dataOf<{ message?: string }>(
      await team.action({ request: requestAs(fixture, "engineer", "/team", { form: { intent: "role", membershipId: client.id, role: "owner" } }), params: {}, context: {} } as never),
    );
    expect(result).toEqual({ status: 400, body: expect.objectContaining({ message: "Only staff roles can be changed here" }) });
    expect((await membershipOf(fixture.users.client.id)).role).toBe("client");
  });

  it("adds a client once per name, whatever the case", async () => {
    const name = `New Artist ${fixture.tag}`;
    const request = (n: string) => requestAs(fixture, "engineer", "/team", { form: { intent: "client", name: n, kind: "artist" } });
    expect(dataOf(await team.action({ request: request(name), params: {}, context: {} } as never)).status).toBe(200);
    const again = dataOf<{ errors: Record<string, string> }>(await team.action({ request: request(name.toUpperCase()), params: {}, context: {} } as never));
    expect(again.status).toBe(400);
    expect(again.body.errors).toEqual({ name: "A client of this name exists" });
    expect(await db("clients").where({ studio_id: fixture.studioId }).whereRaw("lower(name) = lower(?)", [name]).count("* as n").first()).toEqual({ n: "1" });
  });
});

// The release and track forms: zod on the server, errors per field, the
// entered values kept, and the database checks (client of this studio, free position).
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { db } from "../../app/lib/db.server.ts";
import * as releaseNew from "../../app/routes/release-new.tsx";
import * as releaseEdit from "../../app/routes/release-edit.tsx";
import * as trackNew from "../../app/routes/track-new.tsx";
import * as trackEdit from "../../app/routes/track-edit.tsx";
import { createFixture, dataOf, destroyFixture, requestAs, type Fixture } from "./fixtures.ts";

type FormData400 = { errors: Record<string, string>; values: Record<string, string> };

let fixture: Fixture;
beforeAll(async () => {
  fixture = await createFixture();
});
afterAll(async () => destroyFixture(fixture));

async function postNewRelease(form: Record<string, string>) {
  return releaseNew.action({ request: requestAs(fixture, "engineer", "/releases/new", { form }), params: {}, context: {} } as never);
}

async function postNewTrack(form: Record<string, string>, releaseId = fixture.releaseId) {
  return trackNew.action({ request: requestAs(fixture, "engineer", `/releases/${releaseId}/tracks/new`, { form }), params: { releaseId }, context: {} } as never);
}

describe("release form", () => {
  it("answers 400 with an error beside each wrong field and keeps what was entered", async () => {
    const { status, body } = dataOf<FormData400>(await postNewRelease({ title: "   ", kind: "boxset", clientId: "", dueOn: "2027-02-30x" }));
    expect(status).toBe(400);
    expect(body.errors).toEqual({
      title: "Give the release a title",
      kind: "Choose single, EP or album",
      clientId: "Choose the client",
      dueOn: "Use a date like 2027-03-15",
    });
    expect(body.values).toMatchObject({ title: "   ", kind: "boxset", dueOn: "2027-02-30x" });
  });

  it("refuses a client of another studio", async () => {
    const [elsewhere] = await db("clients").select("id").where({ studio_id: fixture.otherStudioId });
    const { status, body } = dataOf<FormData400>(await postNewRelease({ title: `Mine ${fixture.tag}`, kind: "single", clientId: elsewhere.id }));
    expect(status).toBe(400);
    expect(body.errors).toEqual({ clientId: "Choose the client" });
    expect(body.values.title).toBe(`Mine ${fixture.tag}`);
    expect(await db("releases").where({ title: `Mine ${fixture.tag}` }).first()).toBeUndefined();
  });

  it("creates a valid release and redirects to it", async () => {
    const thrown = await postNewRelease({ title: `New EP ${fixture.tag}`, kind: "ep", clientId: fixture.clientId, status: "intake", dueOn: "2027-04-01" }).catch((e: unknown) => e);
    expect(thrown).toBeInstanceOf(Response);
    const row = await db("releases").first("id", "kind", "studio_id", db.raw(`to_char(due_on, 'YYYY-MM-DD') as due`)).where({ title: `New EP ${fixture.tag}` });
    expect(row).toMatchObject({ kind: "ep", studio_id: fixture.studioId, due: "2027-04-01" });
    expect((thrown as Response).headers.get("Location")).toBe(`/releases/${row.id}`);
  });

  it("keeps the entered values on a failed edit", async () => {
    const form = { title: "Edited", kind: "album", clientId: fixture.clientId, status: "finished" };
    const result = await releaseEdit.action({ request: requestAs(fixture, "owner", `/releases/${fixture.releaseId}/edit`, { form }), params: { releaseId: fixture.releaseId }, context: {} } as never);
    const { status, body } = dataOf<FormData400>(result);
    expect(status).toBe(400);
    expect(body.errors).toEqual({ status: "Choose a status" });
    expect(body.values).toMatchObject(form);
    expect((await db("releases").first("title").where({ id: fixture.releaseId })).title).not.toBe("Edited");
  });
});

describe("track form", () => {
  it("answers 400 for a missing title, a position out of range and a malformed ISRC", async () => {
    const { status, body } = dataOf<FormData400>(await postNewTrack({ title: "", position: "0", isrc: "GB-XYZ-27" }));
    expect(status).toBe(400);
    expect(body.errors).toEqual({
      title: "Give the track a title",
      position: "Positions start at 1",
      isrc: "ISRC with hyphens must read CC-XXX-YY-NNNNN (2, 3, 2 and 5 characters)",
    });
    expect(body.values).toEqual({ title: "", position: "0", isrc: "GB-XYZ-27" });
  });

  it("refuses a position another track holds, naming that track", async () => {
    const { status, body } = dataOf<FormData400>(await postNewTrack({ title: "Second thoughts", position: "1" }));
    expect(status).toBe(400);
    expect(body.errors.position).toBe(`Position 1 is “Fixture track ${fixture.tag}”; choose another`);
    expect(body.values.title).toBe("Second thoughts");
  });

  it("stores a valid track with its ISRC normalised", async () => {
    await expect(postNewTrack({ title: "Second thoughts", position: "2", isrc: "zz-tdm-27-00002" })).rejects.toBeInstanceOf(Response);
    const row = await db("tracks").first("position", "isrc").where({ release_id: fixture.releaseId, title: "Second thoughts" });
    expect(row).toEqual({ position: 2, isrc: "ZZTDM2700002" });
  });

  it("lets a track keep its own position on edit but not take another's", async () => {
    const params = { releaseId: fixture.releaseId, trackId: fixture.trackId };
    const path = `/releases/${params.releaseId}/tracks/${params.trackId}/edit`;
    const same = trackEdit.action({ request: requestAs(fixture, "engineer", path, { form: { title: "Renamed", position: "1" } }), params, context: {} } as never);
    await expect(same).rejects.toBeInstanceOf(Response);
    const clash = await trackEdit.action({ request: requestAs(fixture, "engineer", path, { form: { title: "Renamed", position: "2" } }), params, context: {} } as never);
    const { status, body } = dataOf<FormData400>(clash);
    expect(status).toBe(400);
    expect(body.errors.position).toMatch(/^Position 2 is/);
    expect((await db("tracks").first("title", "position").where({ id: fixture.trackId }))).toEqual({ title: "Renamed", position: 1 });
  });
});

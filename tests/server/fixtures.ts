// A studio of its own for each test file: owner, engineer, two clients with
// one member each, a release of the first client with a track, and a second
// studio's engineer. Everything is created with unique names and removed
// afterwards, so tests can share the database with others.
import { randomUUID } from "node:crypto";
import bcrypt from "bcryptjs";
import { db } from "../../app/lib/db.server.ts";
import { startSession } from "../../app/lib/session.server.ts";

export const FIXTURE_PASSWORD = "fixture-password-1";
// Cost 4 keeps fixtures fast; the app's own hashing (cost 10) is tested where it matters.
const fixtureHash = bcrypt.hashSync(FIXTURE_PASSWORD, 4);

export type Persona = "signedOut" | "otherClient" | "client" | "engineer" | "owner" | "otherStudio";
export const PERSONAS: Persona[] = ["signedOut", "otherClient", "client", "engineer", "owner", "otherStudio"];

export type Fixture = {
  tag: string;
  studioId: string;
  otherStudioId: string;
  clientId: string;
  otherClientId: string;
  releaseId: string;
  otherReleaseId: string;
  trackId: string;
  users: Record<Exclude<Persona, "signedOut">, { id: string; email: string; cookie: string }>;
};

async function makeUser(tag: string, role: string) {
  const email = `${role}-${tag}@fixture.test`;
  const [user] = await db("users").insert({ email, name: `${role} ${tag}`, password_hash: fixtureHash }).returning(["id", "email"]);
  return user as { id: string; email: string };
}

export async function cookieFor(userId: string, studioId: string): Promise<string> {
  // A real server-side session, as signing in makes.
  const setCookie = await startSession(userId, studioId);
  return setCookie.split(";")[0];
}

export async function createFixture(): Promise<Fixture> {
  const tag = randomUUID().slice(0, 8);
  const [studio] = await db("studios").insert({ name: `Fixture studio ${tag}` }).returning("id");
  const [otherStudio] = await db("studios").insert({ name: `Other studio ${tag}` }).returning("id");
  const [client, otherClient] = await db("clients")
    .insert([
      { studio_id: studio.id, name: `Artist ${tag}`, kind: "artist" },
      { studio_id: studio.id, name: `Label ${tag}`, kind: "label" },
    ])
    .returning("id");
  const [otherStudioClient] = await db("clients").insert({ studio_id: otherStudio.id, name: `Elsewhere ${tag}`, kind: "artist" }).returning("id");
  const owner = await makeUser(tag, "owner");
  const engineer = await makeUser(tag, "engineer");
  const clientUser = await makeUser(tag, "client");
  const otherClientUser = await makeUser(tag, "otherclient");
  const otherStudioUser = await makeUser(tag, "otherstudio");
  await db("memberships").insert([
    { user_id: owner.id, studio_id: studio.id, role: "owner" },
    { user_id: engineer.id, studio_id: studio.id, role: "engineer" },
    { user_id: clientUser.id, studio_id: studio.id, role: "client", client_id: client.id },
    { user_id: otherClientUser.id, studio_id: studio.id, role: "client", client_id: otherClient.id },
    { user_id: otherStudioUser.id, studio_id: otherStudio.id, role: "engineer" },
  ]);
  const [release, otherRelease] = await db("releases")
    .insert([
      { studio_id: studio.id, client_id: client.id, title: `Fixture EP ${tag}`, kind: "ep" },
      { studio_id: studio.id, client_id: otherClient.id, title: `Fixture single ${tag}`, kind: "single" },
    ])
    .returning("id");
  await db("releases").insert({ studio_id: otherStudio.id, client_id: otherStudioClient.id, title: `Elsewhere album ${tag}`, kind: "album" });
  const [track] = await db("tracks").insert({ release_id: release.id, position: 1, title: `Fixture track ${tag}` }).returning("id");
  const withCookie = async (user: { id: string; email: string }, studioId: string) => ({ ...user, cookie: await cookieFor(user.id, studioId) });
  return {
    tag,
    studioId: studio.id,
    otherStudioId: otherStudio.id,
    clientId: client.id,
    otherClientId: otherClient.id,
    releaseId: release.id,
    otherReleaseId: otherRelease.id,
    trackId: track.id,
    users: {
      owner: await withCookie(owner, studio.id),
      engineer: await withCookie(engineer, studio.id),
      client: await withCookie(clientUser, studio.id),
      otherClient: await withCookie(otherClientUser, studio.id),
      otherStudio: await withCookie(otherStudioUser, otherStudio.id),
    },
  };
}

export async function destroyFixture(fixture: Fixture | undefined): Promise<void> {
  if (!fixture) return;
  // Studios cascade to clients, memberships, releases, tracks and invitations; users go by their tag.
  await db("studios").whereIn("id", [fixture.studioId, fixture.otherStudioId]).delete();
  await db("users").whereLike("email", `%-${fixture.tag}@fixture.test`).delete();
}

/** A request as the browser would send it, with the persona's cookie. */
export function requestAs(fixture: Fixture, persona: Persona, path: string, init: { method?: string; form?: Record<string, string> } = {}): Request {
  const headers = new Headers();
  if (persona !== "signedOut") headers.set("Cookie", fixture.users[persona].cookie);
  const method = init.method ?? (init.form ? "POST" : "GET");
  const body = init.form ? new URLSearchParams(init.form) : undefined;
  if (body) headers.set("Content-Type", "application/x-www-form-urlencoded");
  return new Request(`http://tidemark.test${path}`, { method, headers, body });
}

// "refused": a 403 with a message, for a person who may see the record but not
// yet take this step (e.g. a client's final files before the invoice is paid).
export type Outcome = "allowed" | "404" | "sign-in" | "home" | "refused";

/** What a loader or action did, in the terms of the authorisation matrix. */
export async function outcomeOf(run: () => Promise<unknown>): Promise<Outcome> {
  try {
    const result = await run();
    if (result instanceof Response && result.status >= 300 && result.status < 400) return redirectOutcome(result);
    if (result instanceof Response && result.status === 403) return "refused";
    return "allowed";
  } catch (thrown) {
    if (thrown instanceof Response) {
      if (thrown.status === 404) return "404";
      if (thrown.status === 403) return "refused";
      if (thrown.status >= 300 && thrown.status < 400) return redirectOutcome(thrown);
    }
    throw thrown;
  }
}

function redirectOutcome(response: Response): Outcome {
  const location = response.headers.get("Location") ?? "";
  if (location === "/sign-in" || location.startsWith("/sign-in?")) return "sign-in";
  if (location === "/") return "home";
  // Any other redirect is a successful action (e.g. to the new release); the test names it.
  return "allowed";
}

/** The status and body of what an action returned with data(). */
export function dataOf<T = unknown>(result: unknown): { status: number; body: T } {
  const value = result as { type?: string; data?: T; init?: { status?: number } | null };
  if (value && value.type === "DataWithResponseInit") return { status: value.init?.status ?? 200, body: value.data as T };
  return { status: 200, body: result as T };
}

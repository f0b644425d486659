// The artists and labels a studio works for.
import { db } from "../lib/db.server.ts";
import { isUuid } from "../lib/ids.ts";

export type ClientKind = "artist" | "label";
export type Client = { id: string; name: string; kind: ClientKind };

export async function listClients(studioId: string): Promise<Client[]> {
  return db("clients").select("id", "name", "kind").where({ studio_id: studioId }).orderByRaw("lower(name)");
}

export async function clientInStudio(studioId: string, clientId: string): Promise<boolean> {
  if (!isUuid(clientId)) return false;
  return Boolean(await db("clients").first("id").where({ id: clientId, studio_id: studioId }));
}

export async function clientNameTaken(studioId: string, name: string): Promise<boolean> {
  return Boolean(await db("clients").first("id").where({ studio_id: studioId }).whereRaw("lower(name) = lower(?)", [name]));
}

export async function createClient(studioId: string, input: { name: string; kind: ClientKind }): Promise<string> {
  const [row] = await db("clients").insert({ studio_id: studioId, name: input.name, kind: input.kind }).returning<{ id: string }[]>("id");
  return row.id;
}

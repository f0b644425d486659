import { db } from "../lib/db.server.ts";

export async function renameStudio(studioId: string, name: string): Promise<void> {
  await db("studios").where({ id: studioId }).update({ name });
}

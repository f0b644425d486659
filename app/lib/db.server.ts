// The one Knex instance of the web process, configured by knexfile.ts.
import knex, { type Knex } from "knex";
import config from "../../knexfile.ts";

declare global {
  // Development reloads modules; keep one pool across reloads.
  var __tidemarkDb: Knex | undefined;
}

export const db: Knex = globalThis.__tidemarkDb ?? knex(config);
if (process.env.NODE_ENV !== "production") globalThis.__tidemarkDb = db;

import type { Knex } from "knex";

// One configuration; DATABASE_URL points it at the development, test or production database.
const config: Knex.Config = {
  client: "pg",
  connection: process.env.DATABASE_URL ?? "postgres://postgres@127.0.0.1:54329/tidemark",
  pool: { min: 0, max: Number(process.env.DATABASE_POOL_MAX ?? 10) },
  migrations: { directory: "./db/migrations", extension: "ts", loadExtensions: [".ts"] },
  seeds: { directory: "./db/seeds", extension: "ts", loadExtensions: [".ts"] },
};

export default config;

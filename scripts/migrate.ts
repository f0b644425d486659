// Migrates the database in DATABASE_URL; with --seed, seeds the demo when the database is empty.
import knex from "knex";
import config from "../knexfile.ts";

const db = knex(config);
try {
  const [batch, applied] = await db.migrate.latest();
  if (applied.length > 0) console.error(`[tidemark] migrations (batch ${batch}): ${applied.join(", ")}`);
  if (process.argv.includes("--seed")) {
    const hasStudios = await db.schema.hasTable("studios");
    const row = hasStudios ? await db("studios").count<{ count: string }[]>("* as count").first() : { count: "0" };
    if (Number(row?.count ?? 0) === 0) {
      console.error("[tidemark] seeding the demo data");
      await db.seed.run();
    }
  }
} catch (error) {
  console.error(`[tidemark] migration failed: ${(error as Error).message}`);
  process.exitCode = 1;
} finally {
  await db.destroy();
}

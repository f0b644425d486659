// The studio templates for the demo studio. Runs after 01_demo.ts; adds only
// the templates the studio does not have yet (by name), so running it twice
// changes nothing.
import type { Knex } from "knex";
import { CHAIN_TEMPLATES } from "../../app/lib/chain-templates.ts";
import { parseChain } from "../../dsp/chain/schema.ts";

export const DEMO_STUDIO_NAME = "Lantern Quay Mastering";

export async function seedTemplates(knex: Knex, studioId: string): Promise<number> {
  let added = 0;
  await knex.transaction(async (trx) => {
    for (const template of CHAIN_TEMPLATES) {
      const exists = await trx("chains").where({ studio_id: studioId, name: template.name }).whereNull("track_id").first("id");
      if (exists) continue;
      const parsed = parseChain(template.params);
      if (!parsed.ok) throw new Error(`template ${template.name} is not a valid chain`);
      const [chain] = await trx("chains").insert({ studio_id: studioId, track_id: null, name: template.name }).returning("id");
      await trx("chain_revisions").insert({ chain_id: chain.id, revision: 1, params: JSON.stringify(parsed.chain), author_id: null });
      added++;
    }
  });
  return added;
}

export async function seed(knex: Knex): Promise<void> {
  const studio = await knex("studios").where({ name: DEMO_STUDIO_NAME }).first("id");
  if (!studio) return;
  await seedTemplates(knex, studio.id);
}

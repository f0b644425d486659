// The loudness-target gain a chain needs on a mix, found once by a render's
// search over the whole mix and reused: a preview of any region then has the
// print's gain (previews are the print), and a second preview or the print
// does not search again. Keyed by mix version, chain revision (both
// immutable) and the target in LUFS the render aimed at.
import type { Knex } from "knex";

export async function up(knex: Knex): Promise<void> {
  await knex.raw(`
    CREATE TABLE target_gains (
      mix_id uuid NOT NULL REFERENCES mixes (id) ON DELETE CASCADE,
      chain_revision_id uuid NOT NULL REFERENCES chain_revisions (id) ON DELETE CASCADE,
      target_lufs double precision NOT NULL CHECK (target_lufs BETWEEN -70 AND 0),
      gain_db double precision NOT NULL CHECK (gain_db BETWEEN -36 AND 36),
      created_at timestamptz NOT NULL DEFAULT now(),
      PRIMARY KEY (mix_id, chain_revision_id, target_lufs)
    );
    CREATE INDEX target_gains_chain_revision_idx ON target_gains (chain_revision_id);
  `);
}

export async function down(knex: Knex): Promise<void> {
  await knex.raw(`DROP TABLE target_gains;`);
}

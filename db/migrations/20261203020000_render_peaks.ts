// A finished render's waveform peaks (dsp/render/waveform-peaks.ts), computed
// once by the worker and stored beside its analyses, so a player draws the
// waveform of a long master without decoding it whole. Renders made before
// this have none; the player then draws from the audio it decodes.
import type { Knex } from "knex";

export async function up(knex: Knex): Promise<void> {
  await knex.raw(`
    ALTER TABLE renders ADD COLUMN peaks jsonb
      CHECK (peaks IS NULL OR (jsonb_typeof(peaks -> 'min') = 'array' AND jsonb_typeof(peaks -> 'max') = 'array'));
  `);
}

export async function down(knex: Knex): Promise<void> {
  await knex.raw(`ALTER TABLE renders DROP COLUMN peaks;`);
}

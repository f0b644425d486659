// Reference tracks and the album's gaps. A reference is a WAV the studio
// compares its masters against (what the client loves): staff only, never
// delivered, never shown to clients. Its file and analysis are kept like a
// mix version's. The album's gaps (silence before each track, seconds) are
// stored with the release, keyed by track id, so reordering keeps each
// track's own gap.
import type { Knex } from "knex";

export async function up(knex: Knex): Promise<void> {
  await knex.raw(`
    CREATE TABLE reference_tracks (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      release_id uuid NOT NULL REFERENCES releases (id) ON DELETE CASCADE,
      original_name text NOT NULL CHECK (length(original_name) BETWEEN 1 AND 255),
      storage_key text NOT NULL UNIQUE,
      size_bytes bigint NOT NULL CHECK (size_bytes > 0),
      sample_rate_hz integer NOT NULL CHECK (sample_rate_hz > 0),
      channels smallint NOT NULL CHECK (channels BETWEEN 1 AND 8),
      bit_depth smallint NOT NULL CHECK (bit_depth IN (16, 24, 32, 64)),
      sample_format text NOT NULL CHECK (sample_format IN ('int', 'float')),
      frames bigint NOT NULL CHECK (frames >= 0),
      analysis jsonb,
      analysis_state text NOT NULL DEFAULT 'pending'
        CHECK (analysis_state IN ('pending', 'running', 'done', 'failed')),
      analysis_error text,
      analysis_job_id uuid,
      uploaded_by uuid REFERENCES users (id) ON DELETE SET NULL,
      created_at timestamptz NOT NULL DEFAULT now(),
      CHECK ((analysis_state = 'done') = (analysis IS NOT NULL))
    );
    CREATE INDEX reference_tracks_release_idx ON reference_tracks (release_id, created_at DESC);

    -- { "<track id>": seconds of silence before that track } (the first track's is not used).
    ALTER TABLE releases ADD COLUMN album_gaps jsonb NOT NULL DEFAULT '{}'::jsonb
      CHECK (jsonb_typeof(album_gaps) = 'object');
  `);
}

export async function down(knex: Knex): Promise<void> {
  await knex.raw(`
    ALTER TABLE releases DROP COLUMN IF EXISTS album_gaps;
    DROP TABLE IF EXISTS reference_tracks;
  `);
}

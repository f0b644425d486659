// The pipeline: versions of a track's mix, chains with immutable revisions,
// and renders (a mix version through a chain revision) with their state.
//
// Files are not in the database: mixes.storage_key and renders.output_key
// name objects in storage (app/lib/storage). A render's gain-reduction traces
// are stored there too (renders.traces_key, a JSON file): a 4-minute print
// sampled every 10 ms per stage and band is megabytes, more than a row that
// lists and polls should carry.
//
// The queue (pg-boss) keeps its own tables in the schema "pgboss", created by
// pg-boss itself; renders.job_id and mixes.analysis_job_id point into it
// without a foreign key, since pg-boss archives and deletes its rows.
import type { Knex } from "knex";

export async function up(knex: Knex): Promise<void> {
  await knex.raw(`
    CREATE TABLE mixes (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      track_id uuid NOT NULL REFERENCES tracks (id) ON DELETE CASCADE,
      -- v1, v2, …: a new upload is a new version, never an overwrite.
      version integer NOT NULL CHECK (version >= 1),
      original_name text NOT NULL CHECK (length(original_name) BETWEEN 1 AND 255),
      storage_key text NOT NULL UNIQUE,
      size_bytes bigint NOT NULL CHECK (size_bytes > 0),
      -- The format as read from the WAV header, not from the file's name.
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
      UNIQUE (track_id, version),
      CHECK ((analysis_state = 'done') = (analysis IS NOT NULL))
    );

    CREATE TABLE chains (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      studio_id uuid NOT NULL REFERENCES studios (id) ON DELETE CASCADE,
      -- NULL: a studio template, offered when a track's chain is started.
      track_id uuid REFERENCES tracks (id) ON DELETE CASCADE,
      name text NOT NULL CHECK (length(btrim(name)) BETWEEN 1 AND 120),
      created_at timestamptz NOT NULL DEFAULT now(),
      updated_at timestamptz NOT NULL DEFAULT now()
    );
    CREATE INDEX chains_studio_idx ON chains (studio_id, name) WHERE track_id IS NULL;
    CREATE INDEX chains_track_idx ON chains (track_id) WHERE track_id IS NOT NULL;

    CREATE TABLE chain_revisions (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      chain_id uuid NOT NULL REFERENCES chains (id) ON DELETE CASCADE,
      revision integer NOT NULL CHECK (revision >= 1),
      params jsonb NOT NULL,
      author_id uuid REFERENCES users (id) ON DELETE SET NULL,
      created_at timestamptz NOT NULL DEFAULT now(),
      UNIQUE (chain_id, revision)
    );

    -- Renders point at revisions so any render can be recalled exactly;
    -- a revision that changed afterwards would break that promise.
    -- (Setting author_id to NULL when its user is deleted stays allowed.)
    CREATE FUNCTION chain_revisions_immutable() RETURNS trigger AS $$
    BEGIN
      IF NEW.id IS DISTINCT FROM OLD.id OR NEW.chain_id IS DISTINCT FROM OLD.chain_id
         OR NEW.revision IS DISTINCT FROM OLD.revision OR NEW.params IS DISTINCT FROM OLD.params
         OR NEW.created_at IS DISTINCT FROM OLD.created_at
         OR (NEW.author_id IS DISTINCT FROM OLD.author_id AND NEW.author_id IS NOT NULL) THEN
        RAISE EXCEPTION 'chain revisions are immutable; save a new revision instead';
      END IF;
      RETURN NEW;
    END;
    $$ LANGUAGE plpgsql;
    CREATE TRIGGER chain_revisions_immutable BEFORE UPDATE ON chain_revisions
      FOR EACH ROW EXECUTE FUNCTION chain_revisions_immutable();

    CREATE TABLE renders (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      mix_id uuid NOT NULL REFERENCES mixes (id) ON DELETE CASCADE,
      -- Revisions go only with their chain (a studio or track deleted), and
      -- the renders made from them go too; NO ACTION here blocked that cascade.
      chain_revision_id uuid NOT NULL REFERENCES chain_revisions (id) ON DELETE CASCADE,
      kind text NOT NULL CHECK (kind IN ('preview', 'print')),
      -- Seconds into the mix; both NULL on a preview means "the loudest 30 s".
      region_start_s double precision CHECK (region_start_s >= 0),
      region_end_s double precision,
      target_lufs double precision CHECK (target_lufs BETWEEN -70 AND 0),
      state text NOT NULL DEFAULT 'queued'
        CHECK (state IN ('queued', 'running', 'done', 'failed', 'cancelled')),
      progress real NOT NULL DEFAULT 0 CHECK (progress BETWEEN 0 AND 1),
      error text,
      attempts integer NOT NULL DEFAULT 0 CHECK (attempts >= 0),
      queued_at timestamptz NOT NULL DEFAULT now(),
      started_at timestamptz,
      finished_at timestamptz,
      input_analysis jsonb,
      output_analysis jsonb,
      traces_key text,
      output_key text UNIQUE,
      output_size_bytes bigint,
      output_sample_rate_hz integer,
      output_channels smallint,
      output_bit_depth smallint,
      output_sample_format text CHECK (output_sample_format IN ('int', 'float')),
      job_id uuid,
      created_by uuid REFERENCES users (id) ON DELETE SET NULL,
      CHECK ((region_start_s IS NULL) = (region_end_s IS NULL)),
      CHECK (region_end_s > region_start_s),
      CHECK (kind = 'preview' OR region_start_s IS NULL),
      CHECK ((state = 'done') = (output_key IS NOT NULL))
    );
    CREATE INDEX renders_mix_idx ON renders (mix_id, queued_at DESC);
    CREATE INDEX renders_revision_idx ON renders (chain_revision_id);
    -- The sweeper looks only at unfinished renders.
    CREATE INDEX renders_unfinished_idx ON renders (job_id) WHERE state IN ('queued', 'running');
  `);
}

export async function down(knex: Knex): Promise<void> {
  await knex.raw(`
    DROP TABLE IF EXISTS renders;
    DROP TRIGGER IF EXISTS chain_revisions_immutable ON chain_revisions;
    DROP TABLE IF EXISTS chain_revisions;
    DROP FUNCTION IF EXISTS chain_revisions_immutable();
    DROP TABLE IF EXISTS chains;
    DROP TABLE IF EXISTS mixes;
  `);
}

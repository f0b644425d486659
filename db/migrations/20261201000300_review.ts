// Review: renders sent to the client, the client's verdicts on them, and
// comments pinned to a time. A track's review state (in progress, sent,
// changes asked, approved) is not stored: app/lib/review/state.ts derives it
// from these rows and from the track's mixes and renders, so no step of the
// history is ever overwritten.
//
// track_id is kept on every row (it follows from the render or mix) so a
// track's history is one indexed read and goes with the track when deleted;
// app/models/review.server.ts checks that the render is of that track.
import type { Knex } from "knex";

export async function up(knex: Knex): Promise<void> {
  await knex.raw(`
    CREATE TABLE review_requests (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      track_id uuid NOT NULL REFERENCES tracks (id) ON DELETE CASCADE,
      render_id uuid NOT NULL REFERENCES renders (id) ON DELETE CASCADE,
      message text CHECK (length(message) <= 4000),
      sent_by uuid REFERENCES users (id) ON DELETE SET NULL,
      created_at timestamptz NOT NULL DEFAULT now()
    );
    CREATE INDEX review_requests_track_idx ON review_requests (track_id, created_at);

    CREATE TABLE review_events (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      track_id uuid NOT NULL REFERENCES tracks (id) ON DELETE CASCADE,
      render_id uuid NOT NULL REFERENCES renders (id) ON DELETE CASCADE,
      kind text NOT NULL CHECK (kind IN ('approve', 'changes')),
      note text CHECK (length(note) <= 4000),
      user_id uuid REFERENCES users (id) ON DELETE SET NULL,
      created_at timestamptz NOT NULL DEFAULT now(),
      -- Asking for changes says which.
      CHECK (kind <> 'changes' OR length(btrim(note)) > 0)
    );
    CREATE INDEX review_events_track_idx ON review_events (track_id, created_at);

    CREATE TABLE comments (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      track_id uuid NOT NULL REFERENCES tracks (id) ON DELETE CASCADE,
      render_id uuid REFERENCES renders (id) ON DELETE CASCADE,
      mix_id uuid REFERENCES mixes (id) ON DELETE CASCADE,
      -- Seconds on the mix's time axis (a preview's own 0 s is its region's start),
      -- so comments on a preview and on a print of the same mix line up.
      time_s double precision CHECK (time_s >= 0),
      body text NOT NULL CHECK (length(btrim(body)) BETWEEN 1 AND 4000),
      author_id uuid REFERENCES users (id) ON DELETE SET NULL,
      parent_id uuid REFERENCES comments (id) ON DELETE CASCADE,
      resolved_at timestamptz,
      resolved_by uuid REFERENCES users (id) ON DELETE SET NULL,
      created_at timestamptz NOT NULL DEFAULT now(),
      CHECK (num_nonnulls(render_id, mix_id) = 1),
      -- A thread starts at a time; its replies take the thread's.
      CHECK (parent_id IS NOT NULL OR time_s IS NOT NULL),
      CHECK (resolved_at IS NOT NULL OR resolved_by IS NULL)
    );
    CREATE INDEX comments_render_idx ON comments (render_id, time_s) WHERE render_id IS NOT NULL;
    CREATE INDEX comments_mix_idx ON comments (mix_id, time_s) WHERE mix_id IS NOT NULL;
    CREATE INDEX comments_track_idx ON comments (track_id, created_at);
    CREATE INDEX comments_parent_idx ON comments (parent_id) WHERE parent_id IS NOT NULL;
  `);
}

export async function down(knex: Knex): Promise<void> {
  await knex.raw(`
    DROP TABLE IF EXISTS comments;
    DROP TABLE IF EXISTS review_events;
    DROP TABLE IF EXISTS review_requests;
  `);
}

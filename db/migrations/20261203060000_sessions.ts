// Server-side sessions: the cookie carries only a random id; the row says who
// it is, in which studio, and until when. Only a SHA-256 of the id is stored,
// so the table never holds a usable cookie. Ending a session is deleting it.
// Outbox e-mails that carry a secret (an invitation link) keep it sealed
// beside the body, which holds only a placeholder, until it is sent.
import type { Knex } from "knex";

export async function up(knex: Knex): Promise<void> {
  await knex.raw(`
    CREATE TABLE sessions (
      id_hash text PRIMARY KEY CHECK (length(id_hash) = 64),
      user_id uuid NOT NULL REFERENCES users (id) ON DELETE CASCADE,
      studio_id uuid NOT NULL REFERENCES studios (id) ON DELETE CASCADE,
      created_at timestamptz NOT NULL DEFAULT now(),
      last_seen_at timestamptz NOT NULL DEFAULT now(),
      expires_at timestamptz NOT NULL
    );
    CREATE INDEX sessions_user_idx ON sessions (user_id, studio_id);
    CREATE INDEX sessions_expires_idx ON sessions (expires_at);
    CREATE INDEX sign_in_attempts_pair_idx ON sign_in_attempts (email, address, created_at);
    ALTER TABLE outbox_emails ADD COLUMN secret_sealed text;
  `);
}

export async function down(knex: Knex): Promise<void> {
  await knex.raw(`
    ALTER TABLE outbox_emails DROP COLUMN IF EXISTS secret_sealed;
    DROP INDEX IF EXISTS sign_in_attempts_pair_idx;
    DROP TABLE IF EXISTS sessions;
  `);
}

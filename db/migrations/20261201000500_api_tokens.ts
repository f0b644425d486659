// Personal API tokens: a member of a studio acts through /api/ with the same
// rights as on the pages. Only a SHA-256 of the token is stored; the token
// itself is shown once, when it is made.
import type { Knex } from "knex";

export async function up(knex: Knex): Promise<void> {
  await knex.raw(`
    CREATE TABLE api_tokens (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      user_id uuid NOT NULL REFERENCES users (id) ON DELETE CASCADE,
      studio_id uuid NOT NULL REFERENCES studios (id) ON DELETE CASCADE,
      name text NOT NULL CHECK (length(btrim(name)) BETWEEN 1 AND 80),
      token_hash text NOT NULL UNIQUE CHECK (length(token_hash) = 64),
      created_at timestamptz NOT NULL DEFAULT now(),
      last_used_at timestamptz,
      revoked_at timestamptz
    );
    CREATE INDEX api_tokens_user_idx ON api_tokens (user_id, studio_id, created_at DESC);
  `);
}

export async function down(knex: Knex): Promise<void> {
  await knex.raw(`DROP TABLE IF EXISTS api_tokens;`);
}

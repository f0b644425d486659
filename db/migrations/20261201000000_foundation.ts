// The foundation: studios, people and their roles, clients, releases and
// tracks, invitations, and the sign-in attempts the slow-down counts.
// Ids are uuid (gen_random_uuid() is built into PostgreSQL 13+), so ids in
// links reveal nothing about how many rows exist.
import type { Knex } from "knex";

export async function up(knex: Knex): Promise<void> {
  await knex.raw(`
    CREATE TABLE studios (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      name text NOT NULL CHECK (length(btrim(name)) BETWEEN 1 AND 120),
      created_at timestamptz NOT NULL DEFAULT now()
    );

    CREATE TABLE users (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      email text NOT NULL CHECK (email LIKE '_%@_%' AND length(email) <= 254),
      name text NOT NULL CHECK (length(btrim(name)) BETWEEN 1 AND 120),
      password_hash text NOT NULL,
      created_at timestamptz NOT NULL DEFAULT now()
    );
    -- E-mail addresses are compared case-insensitively.
    CREATE UNIQUE INDEX users_email_lower_unique ON users (lower(email));

    CREATE TABLE clients (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      studio_id uuid NOT NULL REFERENCES studios (id) ON DELETE CASCADE,
      name text NOT NULL CHECK (length(btrim(name)) BETWEEN 1 AND 120),
      kind text NOT NULL CHECK (kind IN ('artist', 'label')),
      created_at timestamptz NOT NULL DEFAULT now(),
      -- Lets releases and memberships insist that their client is of the same studio.
      UNIQUE (id, studio_id)
    );
    CREATE UNIQUE INDEX clients_studio_name_unique ON clients (studio_id, lower(name));

    CREATE TABLE memberships (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      user_id uuid NOT NULL REFERENCES users (id) ON DELETE CASCADE,
      studio_id uuid NOT NULL REFERENCES studios (id) ON DELETE CASCADE,
      role text NOT NULL CHECK (role IN ('owner', 'engineer', 'client')),
      client_id uuid,
      created_at timestamptz NOT NULL DEFAULT now(),
      UNIQUE (user_id, studio_id),
      FOREIGN KEY (client_id, studio_id) REFERENCES clients (id, studio_id) ON DELETE CASCADE,
      -- A client member always belongs to one client; staff never do.
      CHECK ((role = 'client') = (client_id IS NOT NULL))
    );
    CREATE INDEX memberships_studio_idx ON memberships (studio_id, role);

    CREATE TABLE releases (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      studio_id uuid NOT NULL REFERENCES studios (id) ON DELETE CASCADE,
      client_id uuid NOT NULL,
      title text NOT NULL CHECK (length(btrim(title)) BETWEEN 1 AND 200),
      kind text NOT NULL CHECK (kind IN ('single', 'ep', 'album')),
      status text NOT NULL DEFAULT 'intake'
        CHECK (status IN ('intake', 'mastering', 'review', 'approved', 'delivered')),
      due_on date,
      created_at timestamptz NOT NULL DEFAULT now(),
      updated_at timestamptz NOT NULL DEFAULT now(),
      FOREIGN KEY (client_id, studio_id) REFERENCES clients (id, studio_id)
    );
    -- The dashboard lists a studio's releases, newest first, optionally by status;
    -- a client's view lists one client's releases.
    CREATE INDEX releases_studio_created_idx ON releases (studio_id, created_at DESC);
    CREATE INDEX releases_studio_status_idx ON releases (studio_id, status);
    CREATE INDEX releases_client_idx ON releases (client_id, created_at DESC);

    CREATE TABLE tracks (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      release_id uuid NOT NULL REFERENCES releases (id) ON DELETE CASCADE,
      position integer NOT NULL CHECK (position BETWEEN 1 AND 999),
      title text NOT NULL CHECK (length(btrim(title)) BETWEEN 1 AND 200),
      -- ISO 3901: CC-XXX-YY-NNNNN, stored without hyphens.
      isrc text CHECK (isrc ~ '^[A-Z]{2}[A-Z0-9]{3}[0-9]{7}$'),
      created_at timestamptz NOT NULL DEFAULT now(),
      updated_at timestamptz NOT NULL DEFAULT now(),
      -- Deferrable so a reorder can swap two positions inside one transaction.
      CONSTRAINT tracks_release_position_unique UNIQUE (release_id, position) DEFERRABLE INITIALLY IMMEDIATE
    );

    CREATE TABLE invitations (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      studio_id uuid NOT NULL REFERENCES studios (id) ON DELETE CASCADE,
      email text NOT NULL CHECK (email LIKE '_%@_%' AND length(email) <= 254),
      role text NOT NULL CHECK (role IN ('engineer', 'client')),
      client_id uuid,
      -- Only a SHA-256 of the token is kept; the token itself is in the link alone.
      token_hash text NOT NULL UNIQUE,
      invited_by uuid NOT NULL REFERENCES users (id) ON DELETE CASCADE,
      expires_at timestamptz NOT NULL,
      accepted_at timestamptz,
      created_at timestamptz NOT NULL DEFAULT now(),
      FOREIGN KEY (client_id, studio_id) REFERENCES clients (id, studio_id) ON DELETE CASCADE,
      CHECK ((role = 'client') = (client_id IS NOT NULL))
    );
    CREATE INDEX invitations_studio_idx ON invitations (studio_id, created_at DESC);

    -- Failed sign-ins, counted per e-mail and per address over the last minute.
    -- Kept in the database so the limit holds across restarts and several web processes.
    CREATE TABLE sign_in_attempts (
      id bigint GENERATED ALWAYS AS IDENTITY PRIMARY KEY,
      email text NOT NULL,
      address text,
      created_at timestamptz NOT NULL DEFAULT now()
    );
    CREATE INDEX sign_in_attempts_email_idx ON sign_in_attempts (email, created_at);
    CREATE INDEX sign_in_attempts_address_idx ON sign_in_attempts (address, created_at) WHERE address IS NOT NULL;
  `);
}

export async function down(knex: Knex): Promise<void> {
  await knex.raw(`
    DROP TABLE IF EXISTS sign_in_attempts;
    DROP TABLE IF EXISTS invitations;
    DROP TABLE IF EXISTS tracks;
    DROP TABLE IF EXISTS releases;
    DROP TABLE IF EXISTS memberships;
    DROP TABLE IF EXISTS clients;
    DROP TABLE IF EXISTS users;
    DROP TABLE IF EXISTS studios;
  `);
}

// Delivery and billing: a studio's rates and loudness reference levels, the
// formats a release is delivered in, the delivered files, and invoices with
// their lines.
//
// delivery_formats with release_id NULL are the studio's defaults; a release
// that has formats of its own uses only those. deliveries keep a copy of the
// format they were made to (format jsonb), so a delivered file stays
// describable after its format row is edited or deleted.
//
// Money is in whole cents (integers), never floating point.
import type { Knex } from "knex";

export async function up(knex: Knex): Promise<void> {
  await knex.raw(`
    CREATE TABLE studio_settings (
      studio_id uuid PRIMARY KEY REFERENCES studios (id) ON DELETE CASCADE,
      currency text NOT NULL DEFAULT 'EUR' CHECK (currency ~ '^[A-Z]{3}$'),
      track_rate_cents integer NOT NULL DEFAULT 0 CHECK (track_rate_cents >= 0),
      revision_rate_cents integer NOT NULL DEFAULT 0 CHECK (revision_rate_cents >= 0),
      -- Loudness levels that playback services normalise to change over time;
      -- they are settings the owner edits, not rules. [{ "name": text, "lufs": number }]
      normalisation_references jsonb NOT NULL DEFAULT '[]'
        CHECK (jsonb_typeof(normalisation_references) = 'array'),
      invoice_prefix text NOT NULL DEFAULT 'INV' CHECK (invoice_prefix ~ '^[A-Z0-9-]{1,12}$'),
      -- The next invoice number to hand out; numbers are given when an invoice is sent,
      -- so abandoned drafts leave no gaps.
      next_invoice_number integer NOT NULL DEFAULT 1 CHECK (next_invoice_number >= 1),
      updated_at timestamptz NOT NULL DEFAULT now()
    );

    CREATE TABLE delivery_formats (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      studio_id uuid NOT NULL REFERENCES studios (id) ON DELETE CASCADE,
      release_id uuid REFERENCES releases (id) ON DELETE CASCADE,
      name text NOT NULL CHECK (length(btrim(name)) BETWEEN 1 AND 80),
      sample_rate_hz integer NOT NULL CHECK (sample_rate_hz IN (44100, 48000, 88200, 96000, 176400, 192000)),
      bit_depth text NOT NULL CHECK (bit_depth IN ('16', '24', '32f')),
      dither text NOT NULL CHECK (dither IN ('tpdf', 'none')),
      ceiling_dbtp double precision NOT NULL CHECK (ceiling_dbtp BETWEEN -20 AND 0),
      target_lufs double precision CHECK (target_lufs BETWEEN -60 AND 0),
      position integer NOT NULL CHECK (position BETWEEN 1 AND 99),
      created_at timestamptz NOT NULL DEFAULT now()
    );
    -- Names become folder names in the release package, so they are unique per scope.
    CREATE UNIQUE INDEX delivery_formats_studio_name_unique ON delivery_formats (studio_id, lower(name)) WHERE release_id IS NULL;
    CREATE UNIQUE INDEX delivery_formats_release_name_unique ON delivery_formats (release_id, lower(name)) WHERE release_id IS NOT NULL;
    CREATE INDEX delivery_formats_studio_idx ON delivery_formats (studio_id, position) WHERE release_id IS NULL;
    CREATE INDEX delivery_formats_release_idx ON delivery_formats (release_id, position) WHERE release_id IS NOT NULL;

    CREATE TABLE deliveries (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      release_id uuid NOT NULL REFERENCES releases (id) ON DELETE CASCADE,
      track_id uuid NOT NULL REFERENCES tracks (id) ON DELETE CASCADE,
      format_id uuid REFERENCES delivery_formats (id) ON DELETE SET NULL,
      format jsonb NOT NULL,
      -- The print the file was made from.
      source_render_id uuid NOT NULL REFERENCES renders (id) ON DELETE CASCADE,
      state text NOT NULL DEFAULT 'queued' CHECK (state IN ('queued', 'running', 'done', 'failed')),
      storage_key text UNIQUE,
      size_bytes bigint CHECK (size_bytes > 0),
      -- { integratedLufs, loudnessRangeLu, truePeakDbtp, samplePeakDbfs, ... } of the delivered file.
      analysis jsonb,
      warnings jsonb NOT NULL DEFAULT '[]' CHECK (jsonb_typeof(warnings) = 'array'),
      error text,
      created_at timestamptz NOT NULL DEFAULT now(),
      finished_at timestamptz,
      CHECK ((state = 'done') = (storage_key IS NOT NULL)),
      CHECK (state <> 'done' OR analysis IS NOT NULL)
    );
    CREATE INDEX deliveries_release_idx ON deliveries (release_id, track_id, format_id, created_at DESC);

    CREATE TABLE invoices (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      studio_id uuid NOT NULL REFERENCES studios (id) ON DELETE CASCADE,
      release_id uuid NOT NULL REFERENCES releases (id) ON DELETE CASCADE,
      number text,
      currency text NOT NULL CHECK (currency ~ '^[A-Z]{3}$'),
      state text NOT NULL DEFAULT 'draft' CHECK (state IN ('draft', 'sent', 'paid', 'void')),
      total_cents integer NOT NULL DEFAULT 0 CHECK (total_cents >= 0),
      checkout_session_id text UNIQUE,
      sent_at timestamptz,
      paid_at timestamptz,
      voided_at timestamptz,
      created_at timestamptz NOT NULL DEFAULT now(),
      updated_at timestamptz NOT NULL DEFAULT now(),
      UNIQUE (studio_id, number),
      CHECK (state = 'draft' OR state = 'void' OR number IS NOT NULL),
      CHECK ((state = 'paid') = (paid_at IS NOT NULL)),
      CHECK (state NOT IN ('sent', 'paid') OR sent_at IS NOT NULL)
    );
    -- One live invoice per release; a voided one may be followed by a new one.
    CREATE UNIQUE INDEX invoices_release_live_unique ON invoices (release_id) WHERE state <> 'void';
    CREATE INDEX invoices_studio_idx ON invoices (studio_id, created_at DESC);

    CREATE TABLE invoice_lines (
      id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
      invoice_id uuid NOT NULL REFERENCES invoices (id) ON DELETE CASCADE,
      position integer NOT NULL CHECK (position >= 1),
      kind text NOT NULL CHECK (kind IN ('track', 'revision', 'other')),
      track_id uuid REFERENCES tracks (id) ON DELETE SET NULL,
      description text NOT NULL CHECK (length(btrim(description)) BETWEEN 1 AND 250),
      quantity integer NOT NULL CHECK (quantity >= 1),
      unit_cents integer NOT NULL CHECK (unit_cents >= 0),
      amount_cents integer NOT NULL CHECK (amount_cents >= 0),
      UNIQUE (invoice_id, position),
      CHECK (amount_cents = quantity * unit_cents)
    );
  `);
}

export async function down(knex: Knex): Promise<void> {
  await knex.raw(`
    DROP TABLE IF EXISTS invoice_lines;
    DROP TABLE IF EXISTS invoices;
    DROP TABLE IF EXISTS deliveries;
    DROP TABLE IF EXISTS delivery_formats;
    DROP TABLE IF EXISTS studio_settings;
  `);
}

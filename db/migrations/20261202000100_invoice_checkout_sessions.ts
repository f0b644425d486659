// Every payment page opened for an invoice, not only the last one: a client
// may open checkout in two tabs, or come back after a page expired, and the
// provider's completed-payment event for any of those sessions must still
// find its invoice (and mark it paid exactly once). A payment on a session of
// an invoice that is already paid is recorded on its row (paid_at) so the
// studio can see it and refund it.
import type { Knex } from "knex";

export async function up(knex: Knex): Promise<void> {
  await knex.raw(`
    CREATE TABLE invoice_checkout_sessions (
      session_id text PRIMARY KEY CHECK (length(session_id) BETWEEN 1 AND 255),
      invoice_id uuid NOT NULL REFERENCES invoices (id) ON DELETE CASCADE,
      -- What the page asked for; an invoice rebuilt since then does not reuse it.
      amount_cents integer NOT NULL CHECK (amount_cents >= 0),
      currency text NOT NULL CHECK (currency ~ '^[A-Z]{3}$'),
      created_at timestamptz NOT NULL DEFAULT now(),
      paid_at timestamptz
    );
    CREATE INDEX invoice_checkout_sessions_invoice_idx ON invoice_checkout_sessions (invoice_id, created_at DESC);

    INSERT INTO invoice_checkout_sessions (session_id, invoice_id, amount_cents, currency, created_at, paid_at)
      SELECT checkout_session_id, id, total_cents, currency, updated_at, paid_at FROM invoices WHERE checkout_session_id IS NOT NULL;
    ALTER TABLE invoices DROP COLUMN checkout_session_id;
  `);
}

export async function down(knex: Knex): Promise<void> {
  await knex.raw(`
    ALTER TABLE invoices ADD COLUMN checkout_session_id text UNIQUE;
    UPDATE invoices i SET checkout_session_id = (
      SELECT s.session_id FROM invoice_checkout_sessions s WHERE s.invoice_id = i.id
      ORDER BY (s.paid_at IS NOT NULL) DESC, s.created_at DESC LIMIT 1
    );
    DROP TABLE invoice_checkout_sessions;
  `);
}

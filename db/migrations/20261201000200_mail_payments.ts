// The mail outbox (every message is written here first, then delivered with
// retries) and the payment provider's events already handled (replays are
// recognised by the event id).
import type { Knex } from "knex";

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable("outbox_emails", (t) => {
    t.uuid("id").primary().defaultTo(knex.raw("gen_random_uuid()"));
    t.text("to_address").notNullable();
    t.text("subject").notNullable();
    t.text("text").notNullable();
    t.text("html");
    t.text("kind").notNullable();
    t.text("state").notNullable().defaultTo("queued");
    t.integer("attempts").notNullable().defaultTo(0);
    t.text("last_error");
    t.timestamp("next_attempt_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp("sent_at", { useTz: true });
    t.timestamp("created_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    // What the message is about. Plain columns, not foreign keys: the record of
    // a sent message stays even when what it mentioned is deleted.
    t.uuid("studio_id");
    t.uuid("user_id");
    t.uuid("release_id");
    t.uuid("invoice_id");
    t.check("?? in ('queued', 'sent', 'failed')", ["state"], "outbox_emails_state_check");
    t.check("?? >= 0", ["attempts"], "outbox_emails_attempts_check");
  });
  // The delivery loop only ever looks for queued messages that are due.
  await knex.raw("CREATE INDEX outbox_emails_due_idx ON outbox_emails (next_attempt_at) WHERE state = 'queued'");
  await knex.raw("CREATE INDEX outbox_emails_release_idx ON outbox_emails (release_id) WHERE release_id IS NOT NULL");

  await knex.schema.createTable("payment_events", (t) => {
    t.uuid("id").primary().defaultTo(knex.raw("gen_random_uuid()"));
    t.text("event_id").notNullable().unique();
    t.text("type").notNullable();
    t.timestamp("received_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.jsonb("payload").notNullable();
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTableIfExists("payment_events");
  await knex.schema.dropTableIfExists("outbox_emails");
}

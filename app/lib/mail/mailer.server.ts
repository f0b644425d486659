// The mail outbox. `queueEmail` only writes a row, so it can share the caller's
// transaction: a message exists exactly when the change it announces was
// committed. `deliverPending` sends due rows over SMTP; a failure leaves the row
// queued with a later next_attempt_at (exponential back-off), a permanent
// refusal (5xx) or too many attempts marks it failed. Rows are claimed with
// FOR UPDATE SKIP LOCKED and a lease, so several processes may deliver side by
// side without sending a message twice.
import { createCipheriv, createDecipheriv, createHash, randomBytes } from "node:crypto";
import type { Knex } from "knex";
import { z } from "zod";
import { env } from "../env.server.ts";
import { getMailTransport, mailFromEnv, type MailTransport } from "./transport.server.ts";

export const MAX_ATTEMPTS = 10;
/** How long a claimed row stays hidden from other deliverers while it is being sent. */
export const CLAIM_LEASE_MS = 5 * 60_000;

/** Wait before attempt n + 1 after n failed attempts: 30 s, 1 min, 2 min … capped at 1 h. */
export function retryDelayMs(failedAttempts: number): number {
  return Math.min(30_000 * 2 ** Math.max(0, failedAttempts - 1), 3_600_000);
}

const queueSchema = z.object({
  to: z.email(),
  subject: z.string().trim().min(1).max(300),
  text: z.string().min(1),
  html: z.string().nullish(),
  kind: z.string().min(1).max(60),
  studioId: z.uuid().nullish(),
  userId: z.uuid().nullish(),
  releaseId: z.uuid().nullish(),
  invoiceId: z.uuid().nullish(),
  /** Put where SECRET_PLACEHOLDER stands in text and html when sending; stored sealed, dropped once sent. */
  secret: z.string().min(1).max(500).nullish(),
});

/** Stands for the message's secret (e.g. an invitation token) in the stored body. */
export const SECRET_PLACEHOLDER = "[[tidemark-secret]]";

// AES-256-GCM with a key derived from SESSION_SECRET: the database alone
// does not give the secret away; the sealed copy is deleted once sent.
const sealKey = () => createHash("sha256").update(`tidemark-outbox-secret:${env.sessionSecret}`).digest();

export function sealSecret(secret: string): string {
  const iv = randomBytes(12);
  const cipher = createCipheriv("aes-256-gcm", sealKey(), iv);
  const sealed = Buffer.concat([cipher.update(secret, "utf8"), cipher.final()]);
  return [iv, cipher.getAuthTag(), sealed].map((b) => b.toString("base64url")).join(".");
}

export function unsealSecret(value: string): string {
  const [iv, tag, sealed] = value.split(".").map((part) => Buffer.from(part, "base64url"));
  const decipher = createDecipheriv("aes-256-gcm", sealKey(), iv);
  decipher.setAuthTag(tag);
  return Buffer.concat([decipher.update(sealed), decipher.final()]).toString("utf8");
}

export type QueueEmailInput = z.input<typeof queueSchema>;

export interface OutboxEmail {
  id: string;
  to_address: string;
  subject: string;
  text: string;
  html: string | null;
  kind: string;
  state: "queued" | "sent" | "failed";
  attempts: number;
  last_error: string | null;
  next_attempt_at: Date;
  sent_at: Date | null;
  created_at: Date;
  studio_id: string | null;
  user_id: string | null;
  release_id: string | null;
  invoice_id: string | null;
  secret_sealed: string | null;
}

/** Writes a message to the outbox; `db` may be a transaction. Returns the row's id. */
export async function queueEmail(db: Knex | Knex.Transaction, input: QueueEmailInput): Promise<string> {
  const m = queueSchema.parse(input);
  const [row] = await db("outbox_emails")
    .insert({
      to_address: m.to,
      subject: m.subject,
      text: m.text,
      html: m.html ?? null,
      kind: m.kind,
      studio_id: m.studioId ?? null,
      user_id: m.userId ?? null,
      release_id: m.releaseId ?? null,
      invoice_id: m.invoiceId ?? null,
      secret_sealed: m.secret ? sealSecret(m.secret) : null,
    })
    .returning<{ id: string }[]>("id");
  return row!.id;
}

export interface DeliverOptions {
  transport?: MailTransport;
  from?: string;
  /** The clock; tests move it forward to reach a retry time. */
  now?: Date;
  limit?: number;
  /** Only these outbox rows (e.g. "send this one now", or tests sharing a database). */
  ids?: string[];
}

export interface DeliverResult {
  sent: string[];
  retrying: string[];
  failed: string[];
}

function isPermanent(error: unknown) {
  const code = (error as { responseCode?: number }).responseCode;
  return typeof code === "number" && code >= 500 && code < 600;
}

function senderDomain(from: string) {
  return /@([^>\s]+)>?\s*$/.exec(from)?.[1] ?? "tidemark.localhost";
}

/** Sends the due messages once each; returns what happened to every claimed row. */
export async function deliverPending(db: Knex, options: DeliverOptions = {}): Promise<DeliverResult> {
  // Without a given clock the database's is used: rows get their next_attempt_at
  // from it, and a Node clock a microsecond behind would skip a fresh row.
  const at = (offsetMs: number) =>
    options.now ? new Date(options.now.getTime() + offsetMs) : db.raw("clock_timestamp() + ? * interval '1 millisecond'", [offsetMs]);
  const limit = options.limit ?? 50;
  const transport = options.transport ?? getMailTransport();
  const from = options.from ?? mailFromEnv();
  const result: DeliverResult = { sent: [], retrying: [], failed: [] };

  const due = db("outbox_emails")
    .select("id")
    .where("state", "queued")
    .andWhere("next_attempt_at", "<=", at(0))
    .orderBy("next_attempt_at")
    .limit(limit)
    .forUpdate()
    .skipLocked();
  if (options.ids) due.whereIn("id", options.ids);
  const claimed: OutboxEmail[] = await db("outbox_emails")
    .whereIn("id", due)
    .update({ attempts: db.raw("attempts + 1"), next_attempt_at: at(CLAIM_LEASE_MS) })
    .returning("*");

  for (const row of claimed) {
    try {
      const secret = row.secret_sealed ? unsealSecret(row.secret_sealed) : null;
      const reveal = (body: string) => (secret === null ? body : body.replaceAll(SECRET_PLACEHOLDER, secret));
      await transport.sendMail({
        from,
        to: row.to_address,
        subject: row.subject,
        text: reveal(row.text),
        ...(row.html ? { html: reveal(row.html) } : {}),
        // The outbox id as Message-ID lets a receiver (and our tests) tell a resend from a new message.
        messageId: `<${row.id}@${senderDomain(from)}>`,
        headers: { "X-Tidemark-Kind": row.kind },
      });
      await db("outbox_emails").where({ id: row.id }).update({ state: "sent", sent_at: db.fn.now(), last_error: null, secret_sealed: null });
      result.sent.push(row.id);
    } catch (error) {
      const message = String((error as Error).message ?? error).slice(0, 2000);
      if (isPermanent(error) || row.attempts >= MAX_ATTEMPTS) {
        await db("outbox_emails").where({ id: row.id }).update({ state: "failed", last_error: message, secret_sealed: null });
        result.failed.push(row.id);
      } else {
        await db("outbox_emails")
          .where({ id: row.id })
          .update({ last_error: message, next_attempt_at: at(retryDelayMs(row.attempts)) });
        result.retrying.push(row.id);
      }
    }
  }
  return result;
}

/**
 * Delivers the outbox every `intervalMs` in this process (web or worker).
 * Rounds never overlap; the returned stop() waits for a running round.
 */
export function startMailDelivery(db: Knex, options: Omit<DeliverOptions, "now"> & { intervalMs?: number; log?: (line: string) => void } = {}) {
  const { intervalMs: _interval, log: _log, ...deliverOptions } = options;
  const intervalMs = options.intervalMs ?? 10_000;
  const log = options.log ?? ((line: string) => console.error(`[mail] ${line}`));
  let running: Promise<void> | null = null;
  let stopped = false;

  const round = () => {
    if (running || stopped) return;
    running = deliverPending(db, deliverOptions)
      .then((r) => {
        if (r.retrying.length) log(`${r.retrying.length} message(s) will be retried`);
        if (r.failed.length) log(`${r.failed.length} message(s) failed for good: ${r.failed.join(", ")}`);
      })
      .catch((error: Error) => log(`delivery round failed: ${error.message}`))
      .finally(() => {
        running = null;
      });
  };
  round();
  const timer = setInterval(round, intervalMs);
  timer.unref();
  return {
    async stop() {
      stopped = true;
      clearInterval(timer);
      await running;
    },
  };
}

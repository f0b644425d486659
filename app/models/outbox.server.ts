// The studio's mail outbox as the owner sees it, and (in development and
// tests, where FAKE_SMTP_API points at the fake SMTP server) what the fake holds.
import { db } from "../lib/db.server.ts";

export type OutboxRow = {
  id: string;
  to: string;
  subject: string;
  kind: string;
  state: "queued" | "sent" | "failed";
  attempts: number;
  lastError: string | null;
  createdAt: Date;
  sentAt: Date | null;
};

export async function listOutbox(studioId: string, limit = 200): Promise<OutboxRow[]> {
  const rows = await db("outbox_emails")
    .where({ studio_id: studioId })
    .orderBy([{ column: "created_at", order: "desc" }, { column: "id" }])
    .limit(limit)
    .select("id", "to_address", "subject", "kind", "state", "attempts", "last_error", "created_at", "sent_at");
  return rows.map((r: Record<string, any>) => ({
    id: r.id,
    to: r.to_address,
    subject: r.subject,
    kind: r.kind,
    state: r.state,
    attempts: r.attempts,
    lastError: r.last_error,
    createdAt: r.created_at,
    sentAt: r.sent_at,
  }));
}

/** True where mail goes to the local fake SMTP server (development and tests), which the outbox page can show. */
export function fakeSmtpInUse(env: Record<string, string | undefined> = process.env): boolean {
  return Boolean(env.FAKE_SMTP_API);
}

export type FakeInboxMessage = { id: string; to: string[]; subject: string; receivedAt: string; text: string };

/** The fake SMTP server's messages for these addresses, newest first; null when no fake is configured. */
export async function fakeInbox(addresses: Set<string>, env: Record<string, string | undefined> = process.env): Promise<{ messages: FakeInboxMessage[]; error: string | null } | null> {
  if (!fakeSmtpInUse(env)) return null;
  const api = env.FAKE_SMTP_API!;
  try {
    const response = await fetch(`${api.replace(/\/+$/, "")}/messages`, { signal: AbortSignal.timeout(3000) });
    if (!response.ok) return { messages: [], error: `The fake answered ${response.status}.` };
    const all = (await response.json()) as FakeInboxMessage[];
    // Only this studio's mail: the fake is shared by every studio on the machine.
    const mine = all.filter((m) => m.to.some((a) => addresses.has(a.toLowerCase())));
    return { messages: mine.reverse().map((m) => ({ id: m.id, to: m.to, subject: m.subject, receivedAt: m.receivedAt, text: m.text })), error: null };
  } catch (error) {
    return { messages: [], error: `The fake could not be reached: ${(error as Error).message}` };
  }
}

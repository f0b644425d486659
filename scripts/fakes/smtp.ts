// A local SMTP server for development and tests. It accepts every message on
// loopback (no TLS, authentication optional), keeps it in memory and in a JSONL
// file, and shows what it received through a small JSON HTTP API:
//   GET /messages          every kept message (oldest first); ?to=address filters
//   GET /messages/:id      one message
//   DELETE /messages       forget them all
// A recipient whose local part is "bounce" is refused with 550, so the mailer's
// handling of permanent failures can be exercised.
// Run as a script: FAKE_PORT (SMTP; the API listens on FAKE_PORT + 1), FAKE_MODE.
import { appendFileSync, existsSync, mkdirSync, readFileSync, writeFileSync } from "node:fs";
import { createServer, type IncomingMessage, type ServerResponse, type Server } from "node:http";
import type { AddressInfo } from "node:net";
import path from "node:path";
import { randomUUID } from "node:crypto";
import { fileURLToPath } from "node:url";
import { SMTPServer } from "smtp-server";
import { simpleParser, type AddressObject } from "mailparser";

export interface FakeMessage {
  id: string;
  messageId: string | null;
  from: string;
  to: string[];
  /** Recipients of the SMTP envelope (includes Bcc). */
  envelopeTo: string[];
  subject: string;
  text: string;
  html: string | null;
  date: string;
  receivedAt: string;
}

export interface SmtpFakeOptions {
  /** SMTP port; 0 picks a free one. */
  port?: number;
  /** HTTP API port; defaults to port + 1, or a free one when port is 0. */
  apiPort?: number;
  host?: string;
  /** JSONL file the messages are appended to and reloaded from; null keeps them in memory only. */
  dataFile?: string | null;
}

export interface SmtpFake {
  smtpPort: number;
  apiPort: number;
  smtpUrl: string;
  apiUrl: string;
  messages(): FakeMessage[];
  close(): Promise<void>;
}

function addresses(field: AddressObject | AddressObject[] | undefined): string[] {
  if (!field) return [];
  const list = Array.isArray(field) ? field : [field];
  return list.flatMap((group) => group.value.map((a) => a.address ?? "")).filter(Boolean);
}

function loadMessages(file: string | null): FakeMessage[] {
  if (!file || !existsSync(file)) return [];
  const kept: FakeMessage[] = [];
  for (const line of readFileSync(file, "utf8").split("\n")) {
    if (!line.trim()) continue;
    try {
      kept.push(JSON.parse(line) as FakeMessage);
    } catch {
      // A line cut short by a crash is skipped rather than losing the whole file.
    }
  }
  return kept;
}

function sendJson(res: ServerResponse, status: number, body: unknown) {
  // No keep-alive: a client's pooled socket would outlive a restart of the fake and fail its next request.
  res.writeHead(status, { "content-type": "application/json; charset=utf-8", connection: "close" });
  res.end(JSON.stringify(body));
}

function listen(server: { listen: (port: number, host: string, cb: () => void) => unknown; once: (e: "error", cb: (err: Error) => void) => unknown }, port: number, host: string) {
  return new Promise<void>((resolve, reject) => {
    server.once("error", reject);
    server.listen(port, host, () => resolve());
  });
}

export async function startSmtpFake(options: SmtpFakeOptions = {}): Promise<SmtpFake> {
  const host = options.host ?? "127.0.0.1";
  const dataFile = options.dataFile ?? null;
  if (dataFile) mkdirSync(path.dirname(dataFile), { recursive: true });
  const messages = loadMessages(dataFile);

  const smtp = new SMTPServer({
    authOptional: true,
    allowInsecureAuth: true,
    // Advertising STARTTLS would make clients try to upgrade to a certificate they cannot trust.
    disabledCommands: ["STARTTLS"],
    logger: false,
    size: 25 * 1024 * 1024,
    // Tests stop and start the fake; a client left hanging must not hold that up.
    closeTimeout: 1000,
    onAuth(auth, _session, callback) {
      callback(null, { user: auth.username ?? "local" });
    },
    onRcptTo(address, _session, callback) {
      if (address.address.split("@")[0]?.toLowerCase() === "bounce") {
        const error = new Error("mailbox unavailable") as Error & { responseCode: number };
        error.responseCode = 550;
        callback(error);
        return;
      }
      callback();
    },
    onData(stream, session, callback) {
      simpleParser(stream)
        .then((parsed) => {
          const message: FakeMessage = {
            id: randomUUID(),
            messageId: parsed.messageId ?? null,
            from: parsed.from?.text ?? (session.envelope.mailFrom ? session.envelope.mailFrom.address : ""),
            to: addresses(parsed.to),
            envelopeTo: session.envelope.rcptTo.map((r) => r.address),
            subject: parsed.subject ?? "",
            text: parsed.text ?? "",
            html: typeof parsed.html === "string" ? parsed.html : null,
            date: (parsed.date ?? new Date()).toISOString(),
            receivedAt: new Date().toISOString(),
          };
          messages.push(message);
          if (dataFile) appendFileSync(dataFile, `${JSON.stringify(message)}\n`);
          callback();
        })
        .catch((error: Error) => callback(error));
    },
  });

  const api: Server = createServer((req: IncomingMessage, res: ServerResponse) => {
    const url = new URL(req.url ?? "/", "http://fake");
    const match = /^\/messages(?:\/([^/]+))?\/?$/.exec(url.pathname);
    if (!match) return sendJson(res, 404, { error: "not found" });
    const id = match[1] ? decodeURIComponent(match[1]) : null;
    if (req.method === "GET" && !id) {
      // ?to=address narrows the list, so a browser test can find the mail it caused.
      const to = url.searchParams.get("to")?.toLowerCase();
      const list = to ? messages.filter((m) => [...m.to, ...m.envelopeTo].some((a) => a.toLowerCase() === to)) : messages;
      return sendJson(res, 200, list);
    }
    if (req.method === "GET" && id) {
      const message = messages.find((m) => m.id === id);
      return message ? sendJson(res, 200, message) : sendJson(res, 404, { error: "no such message" });
    }
    if (req.method === "DELETE" && !id) {
      messages.length = 0;
      if (dataFile) writeFileSync(dataFile, "");
      return sendJson(res, 200, { deleted: true });
    }
    return sendJson(res, 405, { error: "method not allowed" });
  });

  await listen(smtp.server, options.port ?? 0, host);
  const smtpPort = (smtp.server.address() as AddressInfo).port;
  const wantedApiPort = options.apiPort ?? (options.port ? options.port + 1 : 0);
  try {
    await listen(api, wantedApiPort, host);
  } catch (error) {
    await new Promise<void>((resolve) => smtp.close(() => resolve()));
    throw error;
  }
  const apiPort = (api.address() as AddressInfo).port;

  return {
    smtpPort,
    apiPort,
    smtpUrl: `smtp://${host}:${smtpPort}`,
    apiUrl: `http://${host}:${apiPort}`,
    messages: () => [...messages],
    async close() {
      api.closeAllConnections();
      await Promise.all([
        new Promise<void>((resolve) => api.close(() => resolve())),
        new Promise<void>((resolve) => smtp.close(() => resolve())),
      ]);
    },
  };
}

const isScript = process.argv[1] !== undefined && path.resolve(process.argv[1]) === fileURLToPath(import.meta.url);
if (isScript) {
  const mode = process.env.FAKE_MODE ?? "dev";
  const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "..", "..");
  const fake = await startSmtpFake({
    port: Number(process.env.FAKE_PORT ?? 2525),
    dataFile: path.join(root, ".data", `fake-smtp-${mode}.jsonl`),
  });
  console.log(`[fake smtp] ready: SMTP ${fake.smtpUrl}, messages at ${fake.apiUrl}/messages (${fake.messages().length} kept)`);
  const stop = () => void fake.close().then(() => process.exit(0));
  process.on("SIGTERM", stop);
  process.on("SIGINT", stop);
}

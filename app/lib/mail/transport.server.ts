// The SMTP connection of the mailer, configured from the environment:
//   SMTP_URL        smtp://host:587 (STARTTLS when offered) or smtps://host:465;
//                   may carry user:password. Development and tests default to the local fake.
//   SMTP_USER, SMTP_PASSWORD  credentials kept out of the URL (no escaping needed)
//   SMTP_REQUIRE_TLS=1        refuse to send unless STARTTLS succeeds
//   SMTP_TIMEOUT_MS           connect/greeting/socket timeout (default 15000)
//   MAIL_FROM       the sender, e.g. "Harbour Room Mastering <studio@example.org>"
import nodemailer from "nodemailer";

export type MailTransport = ReturnType<typeof nodemailer.createTransport>;

type Env = Record<string, string | undefined>;

const isProduction = (env: Env) => env.NODE_ENV === "production";

export function smtpUrlFromEnv(env: Env = process.env): string {
  if (env.SMTP_URL) return env.SMTP_URL;
  if (isProduction(env)) throw new Error("SMTP_URL must be set in production");
  return "smtp://127.0.0.1:2525";
}

export function mailFromEnv(env: Env = process.env): string {
  if (env.MAIL_FROM) return env.MAIL_FROM;
  if (isProduction(env)) throw new Error("MAIL_FROM must be set in production");
  return "Tidemark <studio@tidemark.localhost>";
}

export function createMailTransport(url: string = smtpUrlFromEnv(), env: Env = process.env): MailTransport {
  const timeoutMs = Number(env.SMTP_TIMEOUT_MS ?? 15_000);
  return nodemailer.createTransport({
    url,
    ...(env.SMTP_USER ? { auth: { user: env.SMTP_USER, pass: env.SMTP_PASSWORD ?? "" } } : {}),
    requireTLS: env.SMTP_REQUIRE_TLS === "1",
    // An unreachable server should fail one delivery round quickly, not block it for minutes.
    connectionTimeout: timeoutMs,
    greetingTimeout: timeoutMs,
    socketTimeout: timeoutMs * 2,
  });
}

let shared: MailTransport | null = null;

/** The process's one transport, made on first use so importing this module needs no environment. */
export function getMailTransport(): MailTransport {
  shared ??= createMailTransport();
  return shared;
}

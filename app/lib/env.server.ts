// The environment, parsed once at start-up. Only what the server needs;
// nothing here reaches the browser.
import { z } from "zod";

const DEV_SESSION_SECRET = "tidemark-development-secret-do-not-use-in-production";

const schema = z.object({
  NODE_ENV: z.enum(["development", "test", "production"]).default("development"),
  SESSION_SECRET: z.string().min(16, "SESSION_SECRET must be at least 16 characters").optional(),
  // Lets the production build run over plain http on loopback for the browser tests.
  TIDEMARK_INSECURE_COOKIES: z.enum(["0", "1"]).optional(),
  // A session ends after this many hours without a request, and after this many days whatever happens.
  TIDEMARK_SESSION_IDLE_HOURS: z.coerce.number().int().min(1).max(24 * 90).default(72),
  TIDEMARK_SESSION_MAX_DAYS: z.coerce.number().int().min(1).max(365).default(30),
  // Requests a minute per API token's member (a burst of as many); 0 turns the limit off.
  TIDEMARK_API_RATE_PER_MINUTE: z.coerce.number().int().min(0).max(1_000_000).default(600),
});

export type Env = {
  nodeEnv: "development" | "test" | "production";
  sessionSecret: string;
  secureCookies: boolean;
  sessionIdleHours: number;
  sessionMaxDays: number;
  apiRatePerMinute: number;
};

/** Parses an environment; throws where production would be unsafe. Exported for tests. */
export function parseEnv(source: Record<string, string | undefined>, warn: (message: string) => void = console.warn): Env {
  const parsed = schema.safeParse(source);
  if (!parsed.success) {
    throw new Error(`Tidemark's environment is not valid: ${parsed.error.issues.map((i) => `${i.path.join(".")}: ${i.message}`).join("; ")}`);
  }
  const values = parsed.data;
  let sessionSecret = values.SESSION_SECRET;
  if (!sessionSecret) {
    if (values.NODE_ENV === "production") {
      throw new Error("SESSION_SECRET is not set: Tidemark refuses to start in production without it");
    }
    warn("[tidemark] SESSION_SECRET is not set; using the development default (never do this in production)");
    sessionSecret = DEV_SESSION_SECRET;
  }
  return {
    nodeEnv: values.NODE_ENV,
    sessionSecret,
    secureCookies: values.NODE_ENV === "production" && values.TIDEMARK_INSECURE_COOKIES !== "1",
    sessionIdleHours: values.TIDEMARK_SESSION_IDLE_HOURS,
    sessionMaxDays: values.TIDEMARK_SESSION_MAX_DAYS,
    apiRatePerMinute: values.TIDEMARK_API_RATE_PER_MINUTE,
  };
}

export const env = parseEnv(process.env);

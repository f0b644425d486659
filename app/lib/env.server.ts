// The environment, parsed once at start-up. Only what the server needs;
// nothing here reaches the browser.
import { z } from "zod";

const DEV_SESSION_SECRET = "tidemark-development-secret-do-not-use-in-production";

const schema = z.object({
  NODE_ENV: z.enum(["development", "test", "production"]).default("development"),
  SESSION_SECRET: z.string().min(16, "SESSION_SECRET must be at least 16 characters").optional(),
  // Lets the production build run over plain http on loopback for the browser tests.
  TIDEMARK_INSECURE_COOKIES: z.enum(["0", "1"]).optional(),
  // Trust the first X-Forwarded-For hop as the client's address (behind a proxy only).
  TIDEMARK_TRUST_PROXY: z.enum(["0", "1"]).optional(),
  // Requests a minute per API token's member (a burst of as many); 0 turns the limit off.
  TIDEMARK_API_RATE_PER_MINUTE: z.coerce.number().int().min(0).max(1_000_000).default(600),
});

export type Env = {
  nodeEnv: "development" | "test" | "production";
  sessionSecret: string;
  secureCookies: boolean;
  trustProxy: boolean;
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
    trustProxy: values.TIDEMARK_TRUST_PROXY === "1",
    apiRatePerMinute: values.TIDEMARK_API_RATE_PER_MINUTE,
  };
}

export const env = parseEnv(process.env);

import { describe, expect, it, vi } from "vitest";
import { parseEnv } from "../../app/lib/env.server.ts";

describe("parseEnv", () => {
  it("refuses to start in production without SESSION_SECRET", () => {
    expect(() => parseEnv({ NODE_ENV: "production" })).toThrow(/SESSION_SECRET is not set/);
  });

  it("uses the development default with a warning outside production", () => {
    const warn = vi.fn();
    const env = parseEnv({ NODE_ENV: "development" }, warn);
    expect(env.sessionSecret.length).toBeGreaterThanOrEqual(16);
    expect(warn).toHaveBeenCalledOnce();
    expect(warn.mock.calls[0][0]).toMatch(/SESSION_SECRET/);
  });

  it("sets secure cookies in production unless TIDEMARK_INSECURE_COOKIES=1", () => {
    const secret = "a-secret-of-enough-length";
    expect(parseEnv({ NODE_ENV: "production", SESSION_SECRET: secret }).secureCookies).toBe(true);
    expect(parseEnv({ NODE_ENV: "production", SESSION_SECRET: secret, TIDEMARK_INSECURE_COOKIES: "1" }).secureCookies).toBe(false);
    expect(parseEnv({ NODE_ENV: "development", SESSION_SECRET: secret }).secureCookies).toBe(false);
  });

  it("rejects a short secret and an unknown NODE_ENV", () => {
    expect(() => parseEnv({ NODE_ENV: "production", SESSION_SECRET: "short" })).toThrow(/at least 16/);
    expect(() => parseEnv({ NODE_ENV: "staging", SESSION_SECRET: "a-secret-of-enough-length" })).toThrow(/NODE_ENV/);
  });
});

// The API's token bucket: a burst up to capacity, then one request per
// 60/perMinute seconds, with a Retry-After that says when the next one fits.
import { describe, expect, it } from "vitest";
import { RateLimiter } from "../../app/lib/rate-limit.ts";

describe("RateLimiter", () => {
  it("allows a burst of `capacity`, then refuses until a token has refilled", () => {
    let now = 0;
    const limiter = new RateLimiter(60, 3, () => now); // one per second, burst of 3
    expect([1, 2, 3].map(() => limiter.take("a").ok)).toEqual([true, true, true]);
    const refused = limiter.take("a");
    expect(refused).toEqual({ ok: false, retryAfterS: 1 });
    now += 999;
    expect(limiter.take("a").ok).toBe(false);
    now += 2;
    expect(limiter.take("a").ok).toBe(true);
  });

  it("keeps keys apart, and never refills above capacity", () => {
    let now = 0;
    const limiter = new RateLimiter(120, 2, () => now);
    limiter.take("a");
    limiter.take("a");
    expect(limiter.take("a").ok).toBe(false);
    expect(limiter.take("b").ok).toBe(true);
    now += 60_000; // a minute idle refills to 2, not 120
    expect([limiter.take("a").ok, limiter.take("a").ok, limiter.take("a").ok]).toEqual([true, true, false]);
  });

  it("says how long to wait at a slow rate", () => {
    const limiter = new RateLimiter(2, 1, () => 0); // one per 30 s
    limiter.take("k");
    expect(limiter.take("k")).toEqual({ ok: false, retryAfterS: 30 });
  });

  it("is off at a rate of 0", () => {
    const limiter = new RateLimiter(0, 0, () => 0);
    expect(Array.from({ length: 50 }, () => limiter.take("k").ok).every(Boolean)).toBe(true);
  });
});

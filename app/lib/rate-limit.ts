// A token bucket per key, in this process's memory: `capacity` requests at
// once, refilled at `perMinute`. One web process serves Tidemark, so memory is
// the right place; behind several processes each would keep its own bucket.

export type RateDecision = { ok: true } | { ok: false; retryAfterS: number };

export class RateLimiter {
  private readonly buckets = new Map<string, { tokens: number; atMs: number }>();
  private lastSweepMs = -Infinity;

  constructor(
    readonly perMinute: number,
    readonly capacity: number = perMinute,
    private readonly nowMs: () => number = Date.now,
  ) {}

  take(key: string): RateDecision {
    if (this.perMinute <= 0) return { ok: true };
    const now = this.nowMs();
    const refillPerMs = this.perMinute / 60_000;
    const bucket = this.buckets.get(key) ?? { tokens: this.capacity, atMs: now };
    bucket.tokens = Math.min(this.capacity, bucket.tokens + (now - bucket.atMs) * refillPerMs);
    bucket.atMs = now;
    this.buckets.set(key, bucket);
    // A sweep costs a pass over every bucket: at most once a minute, and only when there are many.
    if (this.buckets.size > 10_000 && now - this.lastSweepMs >= 60_000) {
      this.lastSweepMs = now;
      this.forgetFull(now);
    }
    if (bucket.tokens >= 1) {
      bucket.tokens -= 1;
      return { ok: true };
    }
    return { ok: false, retryAfterS: Math.max(1, Math.ceil((1 - bucket.tokens) / refillPerMs / 1000)) };
  }

  /** Buckets that have refilled completely carry no information; drop them. */
  private forgetFull(now: number): void {
    const refillPerMs = this.perMinute / 60_000;
    for (const [key, b] of this.buckets) if (b.tokens + (now - b.atMs) * refillPerMs >= this.capacity) this.buckets.delete(key);
  }
}

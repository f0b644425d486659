// fastLog2 / fastExp2 against the runtime's Math.log2 / 2 ** y (IEEE double,
// correctly rounded to within an ulp or so), over the ranges the compressors
// use and beyond, on a seeded spread of values plus the table edges.
import { describe, expect, it } from "vitest";
import { createRng } from "./testing/signals.ts";
import { fastExp2, fastLog2 } from "./fast-math.ts";

describe("fastLog2 (reference: Math.log2)", () => {
  it("absolute error below 4e-13 for 2^-64 ≤ x < 2^64 (the series remainder, 2.6e-13) and 5e-13 from 2^-1022 to 2^1023; exact at powers of two", () => {
    const rng = createRng(3);
    let worstWide = 0;
    for (let i = 0; i < 200_000; i++) {
      const x = 2 ** (rng() * 2044 - 1021) * (1 + rng());
      worstWide = Math.max(worstWide, Math.abs(fastLog2(x) - Math.log2(x)));
    }
    expect(worstWide).toBeLessThan(5e-13);
    let worst = 0;
    for (let i = 0; i < 200_000; i++) {
      const x = 2 ** (rng() * 128 - 64);
      worst = Math.max(worst, Math.abs(fastLog2(x) - Math.log2(x)));
    }
    // Table edges: just below and above each mantissa step.
    for (let j = 0; j <= 128; j++) {
      for (const x of [1 + j / 128, (1 + j / 128) * (1 - 2 ** -52), (1 + j / 128) * (1 + 2 ** -52)]) {
        worst = Math.max(worst, Math.abs(fastLog2(x) - Math.log2(x)));
      }
    }
    expect(worst).toBeLessThan(4e-13);
    for (const e of [-1022, -100, -1, 0, 1, 100, 1023]) expect(fastLog2(2 ** e)).toBe(e);
  });

  it("+0 and subnormal numbers give finite values in [−1027, −1022] (a silent detector stays far below any threshold)", () => {
    const rng = createRng(6);
    for (const x of [0, 5e-324, 1e-310, ...Array.from({ length: 1000 }, () => rng() * 2 ** -1022)]) {
      const v = fastLog2(x);
      expect(v).toBeGreaterThanOrEqual(-1027);
      expect(v).toBeLessThanOrEqual(-1022);
    }
  });

  it("a power ratio in dB (10·log10) stays within 1e-12 dB", () => {
    const rng = createRng(4);
    for (let i = 0; i < 10_000; i++) {
      const p = 10 ** (-rng() * 15);
      expect(Math.abs(10 * Math.log10(2) * fastLog2(p) - 10 * Math.log10(p))).toBeLessThan(1e-12);
    }
  });
});

describe("fastExp2 (reference: 2 ** y)", () => {
  it("relative error below 1e-14 for |y| ≤ 1000, exact at integers", () => {
    const rng = createRng(5);
    let worst = 0;
    for (let i = 0; i < 200_000; i++) {
      const y = (rng() * 2 - 1) * (i % 2 ? 1000 : 10);
      worst = Math.max(worst, Math.abs(fastExp2(y) / 2 ** y - 1));
    }
    // Step edges: y just below and above each 1/64 step.
    for (let j = -128; j <= 128; j++) {
      for (const y of [j / 64, j / 64 - 1e-15, j / 64 + 1e-15]) worst = Math.max(worst, Math.abs(fastExp2(y) / 2 ** y - 1));
    }
    expect(worst).toBeLessThan(1e-14);
    for (const n of [-1000, -20, -1, 0, 1, 20, 1000]) expect(fastExp2(n)).toBe(2 ** n);
  });

  it("clamps beyond ±1000 instead of producing 0, Infinity or garbage", () => {
    expect(fastExp2(5000)).toBe(2 ** 1000);
    expect(fastExp2(-5000)).toBe(2 ** -1000);
  });
});

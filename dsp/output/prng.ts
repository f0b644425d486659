// Seeded pseudo-random numbers (xoshiro128**, Blackman & Vigna), so dithered
// renders are deterministic. 32-bit state words via Math.imul.

export class Prng {
  private a: number;
  private b: number;
  private c: number;
  private d: number;

  constructor(seed: number) {
    // splitmix32 spreads the seed over the four state words.
    let s = seed >>> 0;
    const next = (): number => {
      s = (s + 0x9e3779b9) >>> 0;
      let z = s;
      z = Math.imul(z ^ (z >>> 16), 0x85ebca6b);
      z = Math.imul(z ^ (z >>> 13), 0xc2b2ae35);
      return (z ^ (z >>> 16)) >>> 0;
    };
    this.a = next();
    this.b = next();
    this.c = next();
    this.d = next() | 1;
  }

  /** Uniform in [0, 1) with 32 random bits. */
  next(): number {
    const result = Math.imul(rotl(Math.imul(this.b, 5), 7), 9) >>> 0;
    const t = this.b << 9;
    this.c ^= this.a;
    this.d ^= this.b;
    this.b ^= this.c;
    this.a ^= this.d;
    this.c ^= t;
    this.d = rotl(this.d, 11);
    return result / 4294967296;
  }

  /**
   * out[i] = next() − next() for i < frames: triangular (TPDF) values in
   * (−1, 1), the same sequence as calling next() twice per value, with the
   * state in locals for the loop (V8 keeps object fields in memory).
   */
  fillTpdf(out: Float64Array, frames: number): void {
    let a = this.a, b = this.b, c = this.c, d = this.d;
    for (let i = 0; i < frames; i++) {
      const r1 = Math.imul(rotl(Math.imul(b, 5), 7), 9) >>> 0;
      let t = b << 9;
      c ^= a; d ^= b; b ^= c; a ^= d; c ^= t; d = (d << 11) | (d >>> 21);
      const r2 = Math.imul(rotl(Math.imul(b, 5), 7), 9) >>> 0;
      t = b << 9;
      c ^= a; d ^= b; b ^= c; a ^= d; c ^= t; d = (d << 11) | (d >>> 21);
      out[i] = (r1 - r2) * 2.3283064365386963e-10; // 2^-32, exact
    }
    this.a = a; this.b = b; this.c = c; this.d = d;
  }
}

/** Advances a generator as `draws` calls of next() would (in blocks through fillTpdf, two draws a value). */
export function skipDraws(prng: Prng, draws: number): void {
  const scratch = new Float64Array(4096);
  let pairs = Math.floor(draws / 2);
  while (pairs > 0) {
    const n = Math.min(pairs, scratch.length);
    prng.fillTpdf(scratch, n);
    pairs -= n;
  }
  if (draws % 2 === 1) prng.next();
}

function rotl(x: number, k: number): number {
  return (x << k) | (x >>> (32 - k));
}

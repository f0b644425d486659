// In-place complex FFT (iterative radix-2, decimation in time) on separate
// real and imaginary arrays. Twiddles and the bit-reversal order are tables
// built once per size; transform() allocates nothing.

export class Fft {
  readonly size: number;
  private readonly cos: Float64Array;
  private readonly sin: Float64Array;
  private readonly swaps: Uint32Array; // pairs (i, j), i < j, to exchange for bit reversal

  constructor(size: number) {
    if (!Number.isInteger(Math.log2(size)) || size < 4) throw new RangeError(`FFT size must be a power of two ≥ 4, got ${size}`);
    this.size = size;
    const half = size / 2;
    this.cos = new Float64Array(half);
    this.sin = new Float64Array(half);
    for (let k = 0; k < half; k++) {
      this.cos[k] = Math.cos((2 * Math.PI * k) / size);
      this.sin[k] = -Math.sin((2 * Math.PI * k) / size);
    }
    const bits = Math.log2(size);
    const pairs: number[] = [];
    for (let i = 0; i < size; i++) {
      let r = 0;
      for (let b = 0, v = i; b < bits; b++, v >>= 1) r = (r << 1) | (v & 1);
      if (i < r) pairs.push(i, r);
    }
    this.swaps = Uint32Array.from(pairs);
  }

  /** X[k] = Σ x[n] e^(−2πikn/N), in place. */
  transform(re: Float64Array, im: Float64Array): void {
    const n = this.size;
    const swaps = this.swaps;
    for (let p = 0; p < swaps.length; p += 2) {
      const i = swaps[p], j = swaps[p + 1];
      const tr = re[i]; re[i] = re[j]; re[j] = tr;
      const ti = im[i]; im[i] = im[j]; im[j] = ti;
    }
    // First two stages together as radix-4 butterflies with trivial twiddles (1, −i).
    for (let i = 0; i < n; i += 4) {
      const ar = re[i], ai = im[i], br = re[i + 1], bi = im[i + 1];
      const cr = re[i + 2], ci = im[i + 2], dr = re[i + 3], di = im[i + 3];
      const s0r = ar + br, s0i = ai + bi, d0r = ar - br, d0i = ai - bi;
      const s1r = cr + dr, s1i = ci + di, d1r = cr - dr, d1i = ci - di;
      re[i] = s0r + s1r; im[i] = s0i + s1i;
      re[i + 2] = s0r - s1r; im[i + 2] = s0i - s1i;
      // (d1r + i d1i) × (−i) = d1i − i d1r
      re[i + 1] = d0r + d1i; im[i + 1] = d0i - d1r;
      re[i + 3] = d0r - d1i; im[i + 3] = d0i + d1r;
    }
    const cos = this.cos, sin = this.sin;
    // Remaining stages block by block, so each pass walks memory in order.
    for (let len = 8; len <= n; len <<= 1) {
      const halfLen = len >> 1;
      const step = n / len;
      for (let start = 0; start < n; start += len) {
        for (let k = 0, t = 0; k < halfLen; k++, t += step) {
          const i = start + k, j = i + halfLen;
          const wr = cos[t], wi = sin[t];
          const xr = re[j], xi = im[j];
          const tr = wr * xr - wi * xi;
          const ti = wr * xi + wi * xr;
          const ur = re[i], ui = im[i];
          re[i] = ur + tr; im[i] = ui + ti;
          re[j] = ur - tr; im[j] = ui - ti;
        }
      }
    }
  }
}

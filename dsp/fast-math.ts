// Base-2 logarithm and exponential for per-frame level and gain maths (the
// compressors run one of each per frame and band). Math.log / Math.exp are
// calls into the runtime; these are a table lookup plus a short polynomial
// that V8 inlines, about a third of the cost, with errors far below
// anything audible (checked in fast-math.test.ts):
//   fastLog2: absolute error below 5e-13 (1.5e-12 dB as a power level) for
//             every positive normal number
//   fastExp2: relative error below 1e-14 for |y| ≤ 1000 (clamped beyond)
// Both are plain IEEE arithmetic, so results are the same on every run.

// log2: x = 2^e · (1 + j/256) · (1 + r) with the exponent e read from the
// float's bits, j from the top 8 mantissa bits, 0 ≤ r < 1/256, and
// ln(1 + r) from its Taylor series to r⁴ (remainder below r⁵/5 ≈ 2e-13).
const bits = new Float64Array(1);
const words = new Int32Array(bits.buffer);
const HIGH_WORD = new Uint8Array(new Uint16Array([1]).buffer)[0] === 1 ? 1 : 0;
const MANTISSA_STEPS = 256;
/** 2^−(k − 1023) for every biased exponent k: scales x into [1, 2). */
const INV_POW2 = Float64Array.from({ length: 2048 }, (_, k) => 2 ** -(k - 1023));
const INV_STEP = Float64Array.from({ length: MANTISSA_STEPS }, (_, j) => 1 / (1 + j / MANTISSA_STEPS));
const LOG2_STEP = Float64Array.from({ length: MANTISSA_STEPS }, (_, j) => Math.log2(1 + j / MANTISSA_STEPS));
const INV_LN2 = 1 / Math.LN2;

/**
 * log2(x) for positive normal x (≥ 2^−1022). +0 and subnormal numbers give
 * finite values between −1027 and −1022 (good enough for a level: far below
 * any threshold); negative numbers, −0 and NaN give NaN.
 */
export function fastLog2(x: number): number {
  bits[0] = x;
  const high = words[HIGH_WORD];
  const k = high >>> 20;
  const j = (high >>> 12) & (MANTISSA_STEPS - 1);
  const r = x * INV_POW2[k] * INV_STEP[j] - 1;
  const ln1p = r * (1 + r * (-1 / 2 + r * (1 / 3 - r * (1 / 4))));
  return k - 1023 + LOG2_STEP[j] + ln1p * INV_LN2;
}

// exp2: y·64 = n + f with n an integer and 0 ≤ f < 1 (y·64 is exact: a power
// of two), 2^y = 2^(n >> 6) · 2^((n & 63)/64) · e^(f·ln2/64), the last from
// its Taylor series to the 5th power (remainder below 2e-15).
const EXP_STEPS = 64;
/** 2^(k − 1024) */
const POW2 = Float64Array.from({ length: 2048 }, (_, k) => 2 ** (k - 1024));
const EXP2_STEP = Float64Array.from({ length: EXP_STEPS }, (_, j) => 2 ** (j / EXP_STEPS));
const LN2_PER_STEP = Math.LN2 / EXP_STEPS;
const FLOOR_OFFSET = 65536; // keeps y·64 + offset positive so `| 0` floors it

/** 2^y; y is clamped to [−1000, 1000]. */
export function fastExp2(y: number): number {
  const t = (y > 1000 ? 1000 : y < -1000 ? -1000 : y) * EXP_STEPS;
  // `| 0` truncates; with the offset that is floor(t) (or floor(t) + 1 when the
  // offset sum rounds up, leaving f a hair below 0, which the series handles).
  const n = ((t + FLOOR_OFFSET) | 0) - FLOOR_OFFSET;
  const f = (t - n) * LN2_PER_STEP;
  const e = 1 + f * (1 + f * (1 / 2 + f * (1 / 6 + f * (1 / 24 + f * (1 / 120)))));
  return POW2[(n >> 6) + 1024] * EXP2_STEP[n & (EXP_STEPS - 1)] * e;
}

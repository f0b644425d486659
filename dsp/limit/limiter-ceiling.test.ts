// The true-peak ceiling under four meters: our BS.1770-4 meter (4×/2×),
// ebur128-wasm (libebur128's BS.1770 true peak), our 8× reconstruction
// (reconstruct-peak.ts) and sox's very-high-quality resampler at 8×fs read by
// `sox stats` (sox-reference.ts), at 44.1, 48 and 96 kHz.
// Material: snare- and hat-like noise bursts, band-limited to 0.45·fs as a
// converter's decimation filter leaves recorded sound; sines at 0.45·fs; the
// limiter's own test signals. Full-band digital noise (content up to fs/2)
// is checked by the meters that reconstruct the whole band; sox's
// reconstruction, which cuts between 0.465 and 0.49·fs, reads such material
// higher (see docs/decisions/2026-12-02-reconstructed-peak-ceiling.md).
import { describe, expect, it } from "vitest";
import { bandLimited, createGaussian, createRng } from "../../bench/signals.ts";
import { referenceTruePeakDbtp } from "../loudness/ebur128-reference.ts";
import { LoudnessMeter } from "../loudness/meter.ts";
import { hasSox, soxReconstructedPeakDb } from "../loudness/sox-reference.ts";
import { CeilingPeakDetector } from "./ceiling-detector.ts";
import { Limiter } from "./limiter.ts";
import { limiterSignals } from "./limiter.test.ts";

const CEILING_DB = -1;
const TOLERANCE_DB = 0.1;

/** Noise bursts: every periodS a burst with a attackMs rise and decayMs fall; tonal body (Hz) optional. */
function bursts(fs: number, seed: number, periodS: number, decayMs: number, bodyHz: number, highTilt: boolean, fullBand: boolean): Float64Array[] {
  const n = Math.round(1.5 * fs);
  return [0, 1].map((c) => {
    const g = createGaussian(seed + c), rnd = createRng(seed + 10 + c);
    let x: Float64Array = new Float64Array(n);
    let level = 0, prev = 0;
    for (let i = 0; i < n; i++) {
      const t = (i % Math.round(periodS * fs)) / fs;
      if (t === 0) level = 0.5 + rnd();
      const env = level * Math.min(1, t / 0.0005) * Math.exp(-t / (decayMs / 1000));
      const v = g();
      x[i] = env * (highTilt ? v - prev : v) * 0.4 + (bodyHz > 0 ? env * 0.6 * Math.sin(2 * Math.PI * bodyHz * t) : 0);
      prev = v;
    }
    if (!fullBand) x = bandLimited(x);
    return x;
  });
}

function sine045(fs: number): Float64Array[] {
  const n = fs, fade = 0.01 * fs;
  const x = new Float64Array(n).map((_, i) => 3 * Math.sin(2 * Math.PI * 0.45 * i + 0.3) * Math.min(1, i / fade, (n - 1 - i) / fade));
  return [x, x.map((v) => -v)];
}

/** The limiter as the render runs it: latency flushed with silence and dropped, so the output is the input's length and alignment. */
function limit(fs: number, x: Float64Array[], inputGainDb: number, lookaheadMs: number): Float64Array[] {
  const block = 480;
  const lim = new Limiter(fs, 2, { inputGainDb, ceilingDbtp: CEILING_DB, lookaheadMs, releaseMs: 60, truePeak: true }, block, new CeilingPeakDetector(fs, 2, block));
  const n = x[0].length, total = n + lim.latencyFrames;
  const buf = x.map((c) => {
    const b = new Float64Array(total + block);
    b.set(c);
    return b;
  });
  for (let off = 0; off < total; off += block) lim.process(buf.map((b) => b.subarray(off, off + block)), block);
  return buf.map((b) => b.slice(lim.latencyFrames, lim.latencyFrames + n));
}

function readings(fs: number, y: Float64Array[]) {
  const meter = new LoudnessMeter(fs, 2, { truePeak: true });
  meter.process(y, y[0].length);
  const r = meter.result();
  return {
    ours: r.truePeakDbtp,
    reconstructed: r.reconstructedPeakDb,
    wasm: referenceTruePeakDbtp(fs, y.map((c) => Float32Array.from(c))),
    sox: hasSox ? soxReconstructedPeakDb(fs, y) : NaN,
  };
}

describe("true-peak limiter: the ceiling under four meters (ours, ebur128-wasm, our 8× reconstruction, sox rate -v at 8×fs)", () => {
  if (!hasSox) console.warn("sox is not installed: the sox readings are skipped (npm test installs sox)");
  for (const fs of [44100, 48000, 96000]) {
    const cases: Array<[string, Float64Array[], number]> = [
      ["snare-like bursts (band-limited noise and a 190 Hz body)", bursts(fs, 11, 0.25, 60, 190, false, false), 8],
      ["hat-like bursts (band-limited, tilted up)", bursts(fs, 21, 0.125, 20, 0, true, false), 10],
      ["sine at 0.45·fs", sine045(fs), 6],
    ];
    for (const [name, x, gainDb] of cases) {
      it(`${fs} Hz, ${name}: every meter at or under the ceiling within ${TOLERANCE_DB} dB`, () => {
        const r = readings(fs, limit(fs, x, gainDb, 1.5));
        expect(r.reconstructed).toBeLessThanOrEqual(CEILING_DB + 1e-9);
        expect(r.ours).toBeLessThanOrEqual(CEILING_DB + 1e-9);
        expect(r.wasm).toBeLessThanOrEqual(CEILING_DB + TOLERANCE_DB);
        if (hasSox) expect(r.sox).toBeLessThanOrEqual(CEILING_DB + TOLERANCE_DB);
        // Not needlessly low: within 0.2 dB under the ceiling on our 8× reading.
        expect(r.reconstructed).toBeGreaterThan(CEILING_DB - 0.2);
      });
    }
    it(`${fs} Hz, full-band noise bursts: our meters and ebur128-wasm at or under the ceiling`, () => {
      const r = readings(fs, limit(fs, bursts(fs, 31, 0.25, 40, 0, false, true), 8, 1.5));
      expect(r.reconstructed).toBeLessThanOrEqual(CEILING_DB + 1e-9);
      expect(r.ours).toBeLessThanOrEqual(CEILING_DB + 1e-9);
      expect(r.wasm).toBeLessThanOrEqual(CEILING_DB + TOLERANCE_DB);
    });
  }
  for (const [name, x] of Object.entries(limiterSignals())) {
    it(`48000 Hz, the limiter's test signal "${name}" (+0 dB input gain, lookahead 3 ms)`, () => {
      const r = readings(48000, limit(48000, x, 0, 3));
      expect(r.reconstructed).toBeLessThanOrEqual(CEILING_DB + 1e-9);
      expect(r.ours).toBeLessThanOrEqual(CEILING_DB + 1e-9);
      expect(r.wasm).toBeLessThanOrEqual(CEILING_DB + TOLERANCE_DB);
    });
  }
});

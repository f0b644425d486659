// Dynamic resonance taming (chain stage "resonance"): a short-time Fourier
// transform with overlap-add; narrow peaks that stand more than
// thresholdDb above the spectrum's smoothed envelope are pulled down, bin
// by bin, only while they sound. Design and sources:
// docs/decisions/2026-12-02-resonance-stage.md.
//   frame: N = the largest power of two ≤ 48 ms (2048 at 44.1/48 kHz),
//     hop N/2, periodic √Hann analysis and synthesis windows: their product
//     is a Hann window, whose shifts by N/2 sum to exactly 1 (the
//     perfect-reconstruction condition), so unit gains give back the input.
//   channels: linked; two channels share one complex FFT (left real, right
//     imaginary) and the same real gains, which keep them apart.
//   detection, per bin inside the focus range: power summed over the
//     channels and five neighbouring bins, followed in time with attackMs
//     / releaseMs, in dB; the envelope is the mean level (dB) of the flanks
//     from a sixth to half an octave either side, the bin's own third of an
//     octave left out as a guard band, so a peak narrower than that does not
//     lift its own reference; cut = level − envelope − thresholdDb, at most
//     maxCutDb, smoothed across three bins.
//   blend: g = 1 − blend·(1 − cut gain); listen "removed": 1 − g, so the
//     two listen modes sum to the delayed input.
// Latency: N frames (under 50 ms at every rate).

import FFT from "fft.js";
import { fastExp2, fastLog2 } from "../fast-math.ts";
import type { GainReductionSource, Planar, Processor } from "../processor.ts";

export interface ResonanceSettings {
  lowHz: number;
  highHz: number;
  thresholdDb: number;
  maxCutDb: number;
  attackMs: number;
  releaseMs: number;
  blend: number;
  listen: "output" | "removed";
}

/** The longest frame whose latency stays under 50 ms: the largest power of two ≤ 0.048·sampleRate. */
export function fftSizeFor(sampleRate: number): number {
  return 2 ** Math.floor(Math.log2(0.048 * sampleRate));
}

/** IEC 61260-1 base-2 third-octave mid-band frequencies, 25 Hz to 20 kHz (1000·2^(n/3)). */
export const THIRD_OCTAVE_CENTRES_HZ: readonly number[] = Array.from({ length: 30 }, (_, i) => 1000 * 2 ** ((i - 16) / 3));

/**
 * The deepest cut (dB, ≥ 0) in each third-octave band (edges fm·2^(±1/6))
 * of a per-bin cut (cutDb[k] at k·binHz). Pure; for the live desk's curve
 * (ResonanceTamer.bandCutsDb). Checked in resonance.test.ts ("band cuts").
 */
export function thirdOctaveCutsDb(cutDb: ArrayLike<number>, binHz: number, out: Float64Array, centresHz: readonly number[] = THIRD_OCTAVE_CENTRES_HZ): void {
  for (let b = 0; b < centresHz.length && b < out.length; b++) {
    const lo = Math.max(0, Math.ceil((centresHz[b] * 2 ** (-1 / 6)) / binHz));
    const hi = Math.min(cutDb.length - 1, Math.floor((centresHz[b] * 2 ** (1 / 6)) / binHz));
    let deepest = 0;
    for (let k = lo; k <= hi; k++) if (cutDb[k] > deepest) deepest = cutDb[k];
    out[b] = deepest;
  }
}

const DB_PER_OCTAVE_POWER = 10 * Math.log10(2); // 10·log10(p) = this · log2(p)
const LOG2_PER_DB_AMPLITUDE = -Math.log2(10) / 20; // 10^(−c/20) = 2^(this · c)

export class ResonanceTamer implements Processor, GainReductionSource {
  readonly latencyFrames: number;
  readonly traceNames = ["cut"] as const;
  readonly fftSize: number;
  readonly binHz: number;
  private readonly hop: number;
  private readonly pairs: number;
  private readonly fft: InstanceType<typeof FFT>;
  private readonly window: Float64Array; // √Hann, periodic
  private readonly synthesis: Float64Array; // the window over N (the inverse transform's scale)
  private readonly fifo: Float64Array[]; // per channel, the last N inputs
  private readonly acc: Float64Array[]; // per channel, the overlap-add sum
  private readonly outQueue: Float64Array[]; // per channel, the hop of finished output
  private readonly frame: Float64Array; // interleaved complex, one pair
  private readonly spectra: Float64Array[]; // per pair
  private readonly back: Float64Array;
  private pos: number;
  // Detection, over bins [detLo, detHi]; cuts over [kLo, kHi].
  private readonly kLo: number;
  private readonly kHi: number;
  private readonly detLo: number;
  private readonly detHi: number;
  // Per bin k: the lower flank is [flankLo, guardLo), the upper (guardHi, flankHi].
  private readonly flankLo: Int32Array;
  private readonly guardLo: Int32Array;
  private readonly guardHi: Int32Array;
  private readonly flankHi: Int32Array;
  private readonly power: Float64Array; // this frame's power per bin
  private readonly follow: Float64Array; // followed power per bin
  private readonly levelDb: Float64Array;
  private readonly prefix: Float64Array;
  private readonly rawCut: Float64Array;
  private readonly smoothCut: Float64Array; // the cut per bin before blend (dB)
  private readonly cutOut: Float64Array;
  private readonly gain: Float64Array; // the spectral gain per bin (0..N/2)
  private attackCoeff: number;
  private releaseCoeff: number;
  private thresholdDb: number;
  private maxCutDb: number;
  private blend: number;
  private removed: boolean;
  private frameMaxCutDb = 0;
  private heldCutDb = 0;

  constructor(sampleRate: number, readonly channels: number, settings: ResonanceSettings, maxBlockFrames: number) {
    void maxBlockFrames; // the frame buffers are sized by the FFT, not the block
    const n = fftSizeFor(sampleRate);
    this.fftSize = n;
    this.hop = n / 2;
    this.binHz = sampleRate / n;
    this.latencyFrames = n;
    this.pairs = Math.ceil(channels / 2);
    this.fft = new FFT(n);
    this.window = Float64Array.from({ length: n }, (_, i) => Math.sin((Math.PI * i) / n));
    this.synthesis = this.window.map((w) => w / n);
    this.fifo = Array.from({ length: channels }, () => new Float64Array(n));
    this.acc = Array.from({ length: channels }, () => new Float64Array(n));
    this.outQueue = Array.from({ length: channels }, () => new Float64Array(this.hop));
    this.frame = new Float64Array(2 * n);
    this.spectra = Array.from({ length: this.pairs }, () => new Float64Array(2 * n));
    this.back = new Float64Array(2 * n);
    this.pos = n - this.hop;

    const half = n / 2;
    this.kLo = Math.min(half - 1, Math.max(1, Math.ceil(settings.lowHz / this.binHz)));
    this.kHi = Math.max(this.kLo - 1, Math.min(half - 1, Math.floor(settings.highHz / this.binHz)));
    const sixth = 2 ** (1 / 6), halfOctave = Math.SQRT2;
    this.detLo = Math.max(1, Math.floor(this.kLo / halfOctave) - 1);
    this.detHi = Math.min(half - 1, Math.ceil(Math.max(this.kLo, this.kHi) * halfOctave) + 1);
    this.flankLo = new Int32Array(half + 1);
    this.guardLo = new Int32Array(half + 1);
    this.guardHi = new Int32Array(half + 1);
    this.flankHi = new Int32Array(half + 1);
    for (let k = this.kLo; k <= this.kHi; k++) {
      // At least one bin in each flank and a one-bin guard, however low k is.
      this.guardLo[k] = Math.max(this.detLo + 1, Math.min(k - 1, Math.floor(k / sixth)));
      this.flankLo[k] = Math.max(this.detLo, Math.min(this.guardLo[k] - 1, Math.floor(k / halfOctave)));
      this.guardHi[k] = Math.min(this.detHi - 1, Math.max(k + 1, Math.ceil(k * sixth)));
      this.flankHi[k] = Math.min(this.detHi, Math.max(this.guardHi[k] + 1, Math.ceil(k * halfOctave)));
    }
    this.power = new Float64Array(half + 1);
    this.follow = new Float64Array(half + 1);
    this.levelDb = new Float64Array(half + 1);
    this.prefix = new Float64Array(half + 2);
    this.rawCut = new Float64Array(half + 1);
    this.smoothCut = new Float64Array(half + 1);
    this.cutOut = new Float64Array(half + 1);
    this.gain = new Float64Array(half + 1).fill(1);

    this.attackCoeff = this.releaseCoeff = this.thresholdDb = this.maxCutDb = this.blend = 0;
    this.removed = false;
    this.setSettings(sampleRate, settings);
    this.resetGains();
  }

  /**
   * Live change (the desk) of everything but the focus range, which sizes the
   * bin tables: detector times, threshold, depth, blend and listen take effect
   * at the next hop, with the gains' own smoothing; allocates nothing.
   */
  setSettings(sampleRate: number, settings: ResonanceSettings): void {
    const hopS = this.hop / sampleRate;
    this.attackCoeff = Math.exp(-hopS / Math.max(1e-6, settings.attackMs / 1000));
    this.releaseCoeff = Math.exp(-hopS / Math.max(1e-6, settings.releaseMs / 1000));
    this.thresholdDb = settings.thresholdDb;
    this.maxCutDb = Math.max(0, settings.maxCutDb);
    this.blend = Math.min(1, Math.max(0, settings.blend));
    this.removed = settings.listen === "removed";
  }

  reset(): void {
    for (const a of this.fifo) a.fill(0);
    for (const a of this.acc) a.fill(0);
    for (const a of this.outQueue) a.fill(0);
    this.follow.fill(0);
    this.smoothCut.fill(0);
    this.pos = this.fftSize - this.hop;
    this.frameMaxCutDb = 0;
    this.heldCutDb = 0;
    this.resetGains();
  }

  private resetGains(): void {
    // "removed" passes nothing where nothing is cut.
    this.gain.fill(this.removed ? 0 : 1);
  }

  process(channels: Planar, frames: number): void {
    const n = this.fftSize, lead = n - this.hop;
    let done = 0;
    while (done < frames) {
      const take = Math.min(frames - done, n - this.pos);
      const q = this.pos - lead;
      for (let c = 0; c < this.channels; c++) {
        const io = channels[c], fifo = this.fifo[c], out = this.outQueue[c];
        for (let i = 0; i < take; i++) {
          fifo[this.pos + i] = io[done + i];
          io[done + i] = out[q + i];
        }
      }
      this.pos += take;
      done += take;
      if (this.pos === n) {
        this.processFrame();
        this.pos = lead;
      }
    }
  }

  /** GainReductionSource: the deepest cut of any frame since the last call (the current one included). */
  takeGainReductionDb(out: Float64Array): void {
    out[0] = Math.max(this.heldCutDb, this.frameMaxCutDb);
    this.heldCutDb = 0;
  }

  /** The cut now applied per bin (dB, ≥ 0, blend included; bin k at k·binHz). A view into the stage's memory, valid until the next call. */
  get cutDb(): Float64Array {
    const out = this.cutOut;
    for (let k = 0; k < out.length; k++) out[k] = this.appliedDb(this.smoothCut[k]);
    return out;
  }

  /** The deepest cut now applied in each third-octave band (THIRD_OCTAVE_CENTRES_HZ), for the live desk. */
  bandCutsDb(out: Float64Array): void {
    thirdOctaveCutsDb(this.cutDb, this.binHz, out);
  }

  /** The applied cut (dB) of a cut c before blend: −20·log10(1 − blend·(1 − 10^(−c/20))). */
  private appliedDb(c: number): number {
    return c === 0 ? 0 : -20 * Math.log10(1 - this.blend * (1 - 10 ** (-c / 20)));
  }

  private processFrame(): void {
    const n = this.fftSize, hop = this.hop, w = this.window, frame = this.frame;
    // Analysis: channel pairs into one complex FFT each.
    for (let p = 0; p < this.pairs; p++) {
      const a = this.fifo[2 * p], b = 2 * p + 1 < this.channels ? this.fifo[2 * p + 1] : null;
      for (let i = 0; i < n; i++) {
        frame[2 * i] = w[i] * a[i];
        frame[2 * i + 1] = b ? w[i] * b[i] : 0;
      }
      this.fft.transform(this.spectra[p], frame);
    }
    this.detect();
    // Gains, then synthesis. The inverse transform is the forward one of the
    // conjugate: x = conj(FFT(conj(X)))/N; the conjugate is taken here, the
    // 1/N and the sign of the imaginary (right) part go into the window.
    const g = this.gain, half = n / 2;
    for (let p = 0; p < this.pairs; p++) {
      const z = this.spectra[p];
      if (this.removed) {
        z[0] = 0; z[1] = 0; z[n] = 0; z[n + 1] = 0;
        for (let k = 1; k < half; k++) {
          const gk = g[k], m = n - k;
          z[2 * k] *= gk; z[2 * k + 1] *= -gk; z[2 * m] *= gk; z[2 * m + 1] *= -gk;
        }
      } else {
        for (let k = 1; k < 2 * n; k += 2) z[k] = -z[k];
        for (let k = this.kLo; k <= this.kHi; k++) {
          const gk = g[k], m = n - k;
          z[2 * k] *= gk; z[2 * k + 1] *= gk; z[2 * m] *= gk; z[2 * m + 1] *= gk;
        }
      }
      this.fft.transform(this.back, z);
      const back = this.back, ws = this.synthesis;
      const a = this.acc[2 * p], b = 2 * p + 1 < this.channels ? this.acc[2 * p + 1] : null;
      for (let i = 0; i < n; i++) a[i] += ws[i] * back[2 * i];
      if (b) for (let i = 0; i < n; i++) b[i] -= ws[i] * back[2 * i + 1];
    }
    // The oldest hop is final; shift the input and the sum by a hop.
    for (let c = 0; c < this.channels; c++) {
      const a = this.acc[c];
      this.outQueue[c].set(a.subarray(0, hop));
      a.copyWithin(0, hop);
      a.fill(0, n - hop);
      this.fifo[c].copyWithin(0, hop);
    }
  }

  private detect(): void {
    const n = this.fftSize, lo = this.detLo, hi = this.detHi;
    const follow = this.follow, level = this.levelDb, prefix = this.prefix;
    const scale = 1 / (2 * this.channels);
    const att = this.attackCoeff, rel = this.releaseCoeff;
    // Power per bin, summed over channels: for a packed pair Z = L + jR,
    // |L_k|² + |R_k|² = (|Z_k|² + |Z_{N−k}|²) / 2. Five bins (weights 1 2 3 2 1),
    // then followed in time.
    const power = this.power, top = n / 2;
    for (let k = Math.max(1, lo - 2); k <= Math.min(top, hi + 2); k++) power[k] = this.binPower(k, n) * scale;
    for (let k = lo; k <= hi; k++) {
      const km2 = k - 2 >= 1 ? k - 2 : 1, km1 = k - 1 >= 1 ? k - 1 : 1, kp1 = k + 1 <= top ? k + 1 : top, kp2 = k + 2 <= top ? k + 2 : top;
      const p = (power[km2] + 2 * power[km1] + 3 * power[k] + 2 * power[kp1] + power[kp2]) * (1 / 9) + 1e-30;
      const f = follow[k];
      follow[k] = p > f ? att * f + (1 - att) * p : rel * f + (1 - rel) * p;
      level[k] = DB_PER_OCTAVE_POWER * fastLog2(follow[k] + 1e-30);
    }
    // Envelope: the mean level (dB) of the two flanks, from a sixth to half
    // an octave either side; the bin's own third of an octave is left out
    // (a guard band, as in a cell-averaging CFAR detector), so a peak up to
    // that wide does not lift its own reference.
    prefix[lo] = 0;
    for (let k = lo; k <= hi; k++) prefix[k + 1] = prefix[k] + level[k];
    const kLo = this.kLo, kHi = this.kHi, fl = this.flankLo, gl = this.guardLo, gh = this.guardHi, fh = this.flankHi;
    const th = this.thresholdDb, maxCut = this.maxCutDb, raw = this.rawCut;
    for (let k = kLo; k <= kHi; k++) {
      const below = (prefix[gl[k]] - prefix[fl[k]]) / (gl[k] - fl[k]);
      const above = (prefix[fh[k] + 1] - prefix[gh[k] + 1]) / (fh[k] - gh[k]);
      const e = 0.5 * (below + above);
      const excess = level[k] - e - th;
      raw[k] = excess <= 0 ? 0 : excess < maxCut ? excess : maxCut;
    }
    // Smoothed across three bins (the edges of the range taper into 0), then gains.
    const blend = this.blend, removed = this.removed, g = this.gain, smooth = this.smoothCut;
    let deepest = 0;
    for (let k = kLo; k <= kHi; k++) {
      const left = k > kLo ? raw[k - 1] : 0, right = k < kHi ? raw[k + 1] : 0;
      const c = 0.25 * left + 0.5 * raw[k] + 0.25 * right;
      smooth[k] = c;
      if (c > deepest) deepest = c;
      const applied = 1 - blend * (1 - fastExp2(LOG2_PER_DB_AMPLITUDE * c));
      g[k] = removed ? 1 - applied : applied;
    }
    this.heldCutDb = Math.max(this.heldCutDb, this.frameMaxCutDb);
    this.frameMaxCutDb = this.appliedDb(deepest);
  }

  private binPower(k: number, n: number): number {
    let s = 0;
    const m = (n - k) % n;
    for (let p = 0; p < this.pairs; p++) {
      const z = this.spectra[p];
      s += z[2 * k] * z[2 * k] + z[2 * k + 1] * z[2 * k + 1] + z[2 * m] * z[2 * m] + z[2 * m + 1] * z[2 * m + 1];
    }
    return s;
  }
}

// True-peak detection in the manner of ITU-R BS.1770-4 Annex 2: oversample by
// polyphase FIR interpolation and take the largest absolute value.
//
// The filter (our own design, same structure as the Annex 2 example of 4
// phases × 12 taps): 4× with 12 taps per phase below 96 kHz, 2× with 24 taps
// per phase at 96 kHz and above (same cost, flatter to a higher fraction of
// Nyquist); a Kaiser-windowed sinc (β = 6) with its cutoff at the input
// Nyquist frequency, L·T + 1 taps. Its zeros fall on every L-th tap, so phase 0 is
// the input sample itself (true peak is never below the sample peak) and only
// L − 1 phases are computed. Each phase is normalised to unity gain at DC.
// Measured response of the interpolated phases at 48 kHz: within ±0.01 dB
// to 16 kHz, −0.33 dB at 18 kHz, −1.9 dB at 20 kHz (BS.1770-4 expects some
// under-reading close to Nyquist). At 96 kHz (2×, 24 taps) sines up to
// 44 kHz read within 0.07 dB.

const KAISER_BETA = 6;
/** Frames per chunk for the "cannot exceed the current maximum" shortcut in process(). */
const CHUNK_FRAMES = 32;

function besselI0(x: number): number {
  let sum = 1;
  let term = 1;
  for (let k = 1; k < 60; k++) {
    term *= (x / (2 * k)) ** 2;
    sum += term;
    if (term < 1e-17 * sum) break;
  }
  return sum;
}

export function oversamplingFactor(sampleRate: number): number {
  return sampleRate < 96000 ? 4 : 2;
}

export function tapsPerPhase(factor: number): number {
  return factor === 4 ? 12 : 24;
}

/** Coefficients of phases 1..L−1, each tapsPerPhase(L) long; tap k multiplies x[n − k]. */
export function designTruePeakPhases(factor: number): Float64Array[] {
  const TAPS_PER_PHASE = tapsPerPhase(factor);
  const taps = factor * TAPS_PER_PHASE + 1;
  const centre = (taps - 1) / 2;
  const h = new Float64Array(taps);
  for (let n = 0; n < taps; n++) {
    const t = (n - centre) / factor;
    const sinc = t === 0 ? 1 : Math.sin(Math.PI * t) / (Math.PI * t);
    const r = (n - centre) / centre;
    h[n] = (sinc * besselI0(KAISER_BETA * Math.sqrt(Math.max(0, 1 - r * r)))) / besselI0(KAISER_BETA);
  }
  const phases: Float64Array[] = [];
  for (let p = 1; p < factor; p++) {
    const c = new Float64Array(TAPS_PER_PHASE);
    let sum = 0;
    for (let k = 0; k < TAPS_PER_PHASE; k++) sum += c[k] = h[p + factor * k];
    for (let k = 0; k < TAPS_PER_PHASE; k++) c[k] /= sum;
    phases.push(c);
  }
  // Phase L − p is phase p time-reversed; make it so to the last bit, which the 4× fast path relies on.
  for (let p = 1; p < factor / 2; p++) phases[factor - p - 1] = phases[p - 1].slice().reverse();
  return phases;
}

export class TruePeakDetector {
  /** outPeak[i] of processPerFrame describes input frame i − latencyFrames and the points after it. */
  readonly latencyFrames: number;
  readonly factor: number;
  private readonly taps: number;
  private readonly history: number; // frames of the past a phase reads
  private max = 0;
  private readonly phases: Float64Array[];
  private readonly boundGain: number; // largest Σ|h| over the phases
  private readonly hist: Float64Array[]; // `history` frames of the past, then the block
  private readonly maxBlockFrames: number;

  constructor(sampleRate: number, channels: number, maxBlockFrames: number) {
    this.factor = oversamplingFactor(sampleRate);
    this.taps = tapsPerPhase(this.factor);
    this.history = this.taps - 1;
    this.latencyFrames = this.taps / 2;
    this.phases = designTruePeakPhases(this.factor);
    this.boundGain = Math.max(1, ...this.phases.map((c) => c.reduce((s, v) => s + Math.abs(v), 0)));
    this.maxBlockFrames = maxBlockFrames;
    this.hist = Array.from({ length: channels }, () => new Float64Array(this.history + maxBlockFrames));
  }

  /** Largest absolute value (linear) of the oversampled signal over all channels so far. */
  get maxAbs(): number {
    return this.max;
  }

  reset(): void {
    this.max = 0;
    for (const h of this.hist) h.fill(0);
  }

  // Keeps the last `history` frames of this block at the front for the next block.
  private keepTail(frames: number): void {
    for (const h of this.hist) h.copyWithin(0, frames, frames + this.history);
  }

  /** Updates maxAbs with `frames` frames of `channels` (not modified). */
  process(channels: Float64Array[], frames: number): void {
    this.loadBlock(channels, frames);
    let max = this.max;
    const bound = this.boundGain;
    const HISTORY = this.history;
    for (let ch = 0; ch < this.hist.length; ch++) {
      const h = this.hist[ch];
      for (let start = 0; start < frames; start += CHUNK_FRAMES) {
        const end = Math.min(frames, start + CHUNK_FRAMES);
        // Largest input the chunk's interpolation can see; it also covers phase 0 (the samples).
        let local = 0;
        for (let j = start; j < end + HISTORY; j++) {
          const a = h[j] < 0 ? -h[j] : h[j];
          if (a > local) local = a;
        }
        if (local > max) max = local;
        if (local * bound <= max) continue; // no interpolated point here can exceed the maximum
        if (this.factor === 4) {
          const v = interpolatedMax4x(h, this.phases[0], this.phases[1], start, end);
          if (v > max) max = v;
          continue;
        }
        for (let p = 0; p < this.phases.length; p++) {
          const c = this.phases[p];
          const v = c.length === 24 ? interpolatedMaxSymmetric24(h, c, start, end) : interpolatedMax(h, c, start, end, HISTORY);
          if (v > max) max = v;
        }
      }
    }
    this.max = max;
    this.keepTail(frames);
  }

  /**
   * For each input frame i: the largest |x| over channels of the interpolated
   * points of frame i − latencyFrames (phase 0 = that sample, then the points
   * after it). State carries between blocks. Also updates maxAbs.
   */
  processPerFrame(channels: Float64Array[], frames: number, outPeak: Float64Array): void {
    this.loadBlock(channels, frames);
    outPeak.fill(0, 0, frames);
    const HISTORY = this.history;
    const centre = this.latencyFrames;
    for (let ch = 0; ch < this.hist.length; ch++) {
      const h = this.hist[ch];
      // Phase 0 of frame i − latency is the sample x[i − latency], at index i + history − latency.
      for (let i = 0, j = HISTORY - centre; i < frames; i++, j++) {
        const a = h[j] < 0 ? -h[j] : h[j];
        if (a > outPeak[i]) outPeak[i] = a;
      }
      if (this.factor === 4) perFrame4x(h, this.phases[0], this.phases[1], frames, outPeak);
      else for (let p = 0; p < this.phases.length; p++) phaseAbsMax(h, this.phases[p], frames, HISTORY, outPeak);
    }
    let max = this.max;
    for (let i = 0; i < frames; i++) if (outPeak[i] > max) max = outPeak[i];
    this.max = max;
    this.keepTail(frames);
  }

  private loadBlock(channels: Float64Array[], frames: number): void {
    if (frames > this.maxBlockFrames) throw new RangeError(`block of ${frames} frames exceeds maxBlockFrames ${this.maxBlockFrames}`);
    for (let ch = 0; ch < this.hist.length; ch++) this.hist[ch].set(channels[ch].subarray(0, frames), this.history);
  }
}

/** max |y| of one phase over frames [start, end) of a history buffer (x[n] at index n + history). */
function interpolatedMax(h: Float64Array, c: Float64Array, start: number, end: number, history: number): number {
  const T = c.length;
  let m = 0;
  for (let n = start; n < end; n++) {
    const b = n + history;
    let y = 0;
    for (let k = 0; k < T; k++) y += c[k] * h[b - k];
    const a = y < 0 ? -y : y;
    if (a > m) m = a;
  }
  return m;
}

/**
 * The 4× case, all three phases in one pass over 12 loaded samples: phase 3 is
 * phase 1 reversed and phase 2 is symmetric (both exact by construction).
 */
function interpolatedMax4x(h: Float64Array, p1: Float64Array, p2: Float64Array, start: number, end: number): number {
  const a0 = p1[0], a1 = p1[1], a2 = p1[2], a3 = p1[3], a4 = p1[4], a5 = p1[5];
  const a6 = p1[6], a7 = p1[7], a8 = p1[8], a9 = p1[9], a10 = p1[10], a11 = p1[11];
  const c0 = p2[0], c1 = p2[1], c2 = p2[2], c3 = p2[3], c4 = p2[4], c5 = p2[5];
  let m = 0;
  for (let n = start; n < end; n++) {
    // x[n − k] is at h[n + 11 − k]
    const x0 = h[n + 11], x1 = h[n + 10], x2 = h[n + 9], x3 = h[n + 8], x4 = h[n + 7], x5 = h[n + 6];
    const x6 = h[n + 5], x7 = h[n + 4], x8 = h[n + 3], x9 = h[n + 2], x10 = h[n + 1], x11 = h[n];
    const y1 = a0 * x0 + a1 * x1 + a2 * x2 + a3 * x3 + a4 * x4 + a5 * x5 + a6 * x6 + a7 * x7 + a8 * x8 + a9 * x9 + a10 * x10 + a11 * x11;
    const y3 = a11 * x0 + a10 * x1 + a9 * x2 + a8 * x3 + a7 * x4 + a6 * x5 + a5 * x6 + a4 * x7 + a3 * x8 + a2 * x9 + a1 * x10 + a0 * x11;
    const y2 = c0 * (x0 + x11) + c1 * (x1 + x10) + c2 * (x2 + x9) + c3 * (x3 + x8) + c4 * (x4 + x7) + c5 * (x5 + x6);
    const b1 = y1 < 0 ? -y1 : y1;
    const b2 = y2 < 0 ? -y2 : y2;
    const b3 = y3 < 0 ? -y3 : y3;
    if (b1 > m) m = b1;
    if (b2 > m) m = b2;
    if (b3 > m) m = b3;
  }
  return m;
}

/** The 2× case: its one phase is a half-sample delay with symmetric taps (c[k] = c[23 − k]), so 12 multiplies. */
function interpolatedMaxSymmetric24(h: Float64Array, c: Float64Array, start: number, end: number): number {
  const c0 = c[0], c1 = c[1], c2 = c[2], c3 = c[3], c4 = c[4], c5 = c[5];
  const c6 = c[6], c7 = c[7], c8 = c[8], c9 = c[9], c10 = c[10], c11 = c[11];
  let m = 0;
  for (let n = start; n < end; n++) {
    // x[n − k] is at h[n + 23 − k]
    const y =
      c0 * (h[n + 23] + h[n]) + c1 * (h[n + 22] + h[n + 1]) + c2 * (h[n + 21] + h[n + 2]) +
      c3 * (h[n + 20] + h[n + 3]) + c4 * (h[n + 19] + h[n + 4]) + c5 * (h[n + 18] + h[n + 5]) +
      c6 * (h[n + 17] + h[n + 6]) + c7 * (h[n + 16] + h[n + 7]) + c8 * (h[n + 15] + h[n + 8]) +
      c9 * (h[n + 14] + h[n + 9]) + c10 * (h[n + 13] + h[n + 10]) + c11 * (h[n + 12] + h[n + 11]);
    const a = y < 0 ? -y : y;
    if (a > m) m = a;
  }
  return m;
}

/** out[n] = max(out[n], |y[n]|) for one phase over frames [0, frames). */
function phaseAbsMax(h: Float64Array, c: Float64Array, frames: number, history: number, out: Float64Array): void {
  if (c.length === 12) {
    const c0 = c[0], c1 = c[1], c2 = c[2], c3 = c[3], c4 = c[4], c5 = c[5];
    const c6 = c[6], c7 = c[7], c8 = c[8], c9 = c[9], c10 = c[10], c11 = c[11];
    for (let n = 0; n < frames; n++) {
      const y =
        c0 * h[n + 11] + c1 * h[n + 10] + c2 * h[n + 9] + c3 * h[n + 8] + c4 * h[n + 7] + c5 * h[n + 6] +
        c6 * h[n + 5] + c7 * h[n + 4] + c8 * h[n + 3] + c9 * h[n + 2] + c10 * h[n + 1] + c11 * h[n];
      const a = y < 0 ? -y : y;
      if (a > out[n]) out[n] = a;
    }
    return;
  }
  const T = c.length;
  for (let n = 0; n < frames; n++) {
    const b = n + history;
    let y = 0;
    for (let k = 0; k < T; k++) y += c[k] * h[b - k];
    const a = y < 0 ? -y : y;
    if (a > out[n]) out[n] = a;
  }
}

/** out[n] = max(out[n], |y1|, |y2|, |y3|): the 4× phases of frame n in one pass (see interpolatedMax4x). */
function perFrame4x(h: Float64Array, p1: Float64Array, p2: Float64Array, frames: number, out: Float64Array): void {
  const a0 = p1[0], a1 = p1[1], a2 = p1[2], a3 = p1[3], a4 = p1[4], a5 = p1[5];
  const a6 = p1[6], a7 = p1[7], a8 = p1[8], a9 = p1[9], a10 = p1[10], a11 = p1[11];
  const c0 = p2[0], c1 = p2[1], c2 = p2[2], c3 = p2[3], c4 = p2[4], c5 = p2[5];
  for (let n = 0; n < frames; n++) {
    const x0 = h[n + 11], x1 = h[n + 10], x2 = h[n + 9], x3 = h[n + 8], x4 = h[n + 7], x5 = h[n + 6];
    const x6 = h[n + 5], x7 = h[n + 4], x8 = h[n + 3], x9 = h[n + 2], x10 = h[n + 1], x11 = h[n];
    const y1 = a0 * x0 + a1 * x1 + a2 * x2 + a3 * x3 + a4 * x4 + a5 * x5 + a6 * x6 + a7 * x7 + a8 * x8 + a9 * x9 + a10 * x10 + a11 * x11;
    const y3 = a11 * x0 + a10 * x1 + a9 * x2 + a8 * x3 + a7 * x4 + a6 * x5 + a5 * x6 + a4 * x7 + a3 * x8 + a2 * x9 + a1 * x10 + a0 * x11;
    const y2 = c0 * (x0 + x11) + c1 * (x1 + x10) + c2 * (x2 + x9) + c3 * (x3 + x8) + c4 * (x4 + x7) + c5 * (x5 + x6);
    let m = out[n];
    const b1 = y1 < 0 ? -y1 : y1;
    const b2 = y2 < 0 ? -y2 : y2;
    const b3 = y3 < 0 ? -y3 : y3;
    if (b1 > m) m = b1;
    if (b2 > m) m = b2;
    if (b3 > m) m = b3;
    out[n] = m;
  }
}

// Reconstructed peak: the waveform between samples as a band-limited
// reconstruction sees it, on an 8× grid, from a filter flat to 0.45·fs at
// every sample rate. The limiter's true-peak detector, and the analysis's
// `reconstructedPeakDb` beside the BS.1770-4 true peak (true-peak.ts, whose
// short 4× filter droops near Nyquist: −1.9 dB at 20 kHz at 48 kHz, and whose
// 4× grid misses up to 0.69 dB between its points near fs/2).
//
// Structure: three linear-phase half-band interpolators in cascade (2×, 4×,
// 8×), each a Kaiser-windowed sinc whose even taps are zero, so every stage
// keeps the samples it has and computes only the points between them (with
// symmetric taps folded: one multiply per pair). Taps per side and β chosen
// by search for ≤ 0.01 dB ripple up to 0.45·fs and ≥ 59 dB image rejection
// (images of content ≤ 0.45·fs); the cascade as a whole: within ±0.02 dB to
// 0.45·fs (test: reconstruct-peak.test.ts). Cost per frame and channel:
// 18 + 2·4 + 4·2 = 34 multiplies for 7 new points (a direct 8× polyphase
// filter of this flatness would take about 7 × 36).
//
// The 8× grid still misses the crest between its points by up to
// 1 − cos(π·f/(8·fs)): 0.14 dB for a pure tone at 0.45·fs, 0.03 dB at
// 0.2·fs; a reconstruction meter on an 8× grid (sox's `rate -v` at 8×fs)
// reads the same points, a 4× or 2× one a subset of them.

const STAGES: ReadonlyArray<{ tapsPerSide: number; beta: number }> = [
  { tapsPerSide: 18, beta: 5.75 }, // 2×: passband 0.45·fs, images from 0.55·fs
  { tapsPerSide: 4, beta: 8 }, // 4×: passband 0.45·fs of a 2·fs stream
  { tapsPerSide: 2, beta: 6.25 }, // 8×
];

/** Frames after a frame that its points depend on (and the detector's delay). */
export const RECONSTRUCT_LATENCY_FRAMES = 20;
/** Frames before it (the history kept between blocks is this plus the latency). */
const LOOKBACK_FRAMES = 19;
const HISTORY = LOOKBACK_FRAMES + RECONSTRUCT_LATENCY_FRAMES;
const CHUNK_FRAMES = 32;
const UNTESTED_CHUNKS = 3;

function besselI0(x: number): number {
  let sum = 1, term = 1;
  for (let k = 1; k < 60; k++) {
    term *= (x / (2 * k)) ** 2;
    sum += term;
    if (term < 1e-17 * sum) break;
  }
  return sum;
}

/**
 * Odd taps of a half-band interpolator, one side: c[k] multiplies the two
 * samples (2k + 1)/2 input periods before and after the new point. Their
 * sum over both sides is exactly 1 (unity gain at DC).
 */
export function designHalfBand(tapsPerSide: number, beta: number): Float64Array {
  const c = new Float64Array(tapsPerSide);
  const halfLength = 2 * tapsPerSide + 1;
  for (let k = 0; k < tapsPerSide; k++) {
    const t = (2 * k + 1) / 2;
    const r = (2 * k + 1) / halfLength;
    c[k] = (Math.sin(Math.PI * t) / (Math.PI * t)) * (besselI0(beta * Math.sqrt(1 - r * r)) / besselI0(beta));
  }
  const sum = 2 * c.reduce((s, v) => s + v, 0);
  for (let k = 0; k < tapsPerSide; k++) c[k] /= sum;
  return c;
}

export const RECONSTRUCT_STAGES = STAGES.map((s) => designHalfBand(s.tapsPerSide, s.beta));

/**
 * Gain of the 8× cascade at freqHz for an input at sampleRate, as the points
 * between the samples see it (1 = flat): the product of each stage's
 * response at its own rate.
 */
export function reconstructResponse(freqHz: number, sampleRate: number): number {
  let h = 1;
  let rate = sampleRate;
  for (const c of RECONSTRUCT_STAGES) {
    let s = 0;
    for (let k = 0; k < c.length; k++) s += 2 * c[k] * Math.cos((2 * Math.PI * freqHz * (2 * k + 1)) / (2 * rate));
    h *= 0.5 * (1 + s);
    rate *= 2;
  }
  return h;
}

export class ReconstructedPeakDetector {
  /** outPeak[i] of processPerFrame describes input frame i − latencyFrames and the 7 points after it. */
  readonly latencyFrames = RECONSTRUCT_LATENCY_FRAMES;
  private max = 0;
  private readonly hist: Float64Array[]; // HISTORY frames of the past, then the block
  private readonly half: Float64Array; // points at m + ½ for the block (one channel at a time)
  private readonly maxBlockFrames: number;
  private readonly boundGain: number;
  private readonly scratch: Float64Array;

  constructor(readonly sampleRate: number, channels: number, maxBlockFrames: number) {
    this.maxBlockFrames = maxBlockFrames;
    // +1: halfPoints' last iteration of an odd range reads one frame past the block.
    this.hist = Array.from({ length: channels }, () => new Float64Array(HISTORY + maxBlockFrames + 1));
    this.half = new Float64Array(maxBlockFrames + 5);
    this.scratch = new Float64Array(Math.max(CHUNK_FRAMES, maxBlockFrames));
    this.boundGain = cascadeAbsSum() * (1 + 1e-9);
  }

  /** Largest absolute value (linear) of the reconstructed points over all channels so far. */
  get maxAbs(): number {
    return this.max;
  }

  reset(): void {
    this.max = 0;
    for (const h of this.hist) h.fill(0);
  }

  /** Forgets the maximum so far, keeping the history (a pre-rolled meter starting its region). */
  resetMax(): void {
    this.max = 0;
  }

  /** A copy with the same history and maximum (to read the end of a stream without ending it). */
  snapshot(): ReconstructedPeakDetector {
    const copy = new ReconstructedPeakDetector(this.sampleRate, this.hist.length, Math.max(RECONSTRUCT_LATENCY_FRAMES, 1));
    for (let ch = 0; ch < this.hist.length; ch++) copy.hist[ch].set(this.hist[ch].subarray(0, HISTORY));
    copy.max = this.max;
    return copy;
  }

  /** Updates maxAbs; chunks whose points cannot beat the maximum so far are skipped. */
  process(channels: Float64Array[], frames: number): void {
    this.load(channels, frames);
    let max = this.max;
    const out = this.scratch;
    let untested = 0;
    for (let start = 0; start < frames; start += CHUNK_FRAMES) {
      const end = Math.min(frames, start + CHUNK_FRAMES);
      if (untested > 0) untested--;
      else {
        if (this.inputBound(start, end) <= max) continue;
        untested = UNTESTED_CHUNKS;
      }
      this.framePeaks(start, end, out);
      for (let i = start; i < end; i++) if (out[i] > max) max = out[i];
    }
    this.max = max;
    this.keepTail(frames);
  }

  /**
   * For each input frame i: the largest |x| over channels of frame
   * i − latencyFrames and its 7 reconstructed points after it. With
   * exactAbove > 0, a chunk whose points provably stay at or under it gets
   * that bound instead (between the true value and exactAbove); maxAbs then
   * counts only the frames computed exactly. Same contract as
   * TruePeakDetector.processPerFrame.
   */
  processPerFrame(channels: Float64Array[], frames: number, outPeak: Float64Array, exactAbove = 0): void {
    this.load(channels, frames);
    let max = this.max;
    let untested = 0;
    for (let start = 0; start < frames; start += CHUNK_FRAMES) {
      const end = Math.min(frames, start + CHUNK_FRAMES);
      if (exactAbove > 0) {
        if (untested > 0) untested--;
        else {
          const b = this.inputBound(start, end);
          if (b <= exactAbove) {
            outPeak.fill(b, start, end);
            continue;
          }
          untested = UNTESTED_CHUNKS;
        }
      }
      this.framePeaks(start, end, outPeak);
      for (let i = start; i < end; i++) if (outPeak[i] > max) max = outPeak[i];
    }
    this.max = max;
    this.keepTail(frames);
  }

  // Σ|h| times the largest input any point of frames [start, end) is made of.
  private inputBound(start: number, end: number): number {
    let local = 0;
    for (const h of this.hist) {
      for (let j = start; j < end + HISTORY; j++) {
        const a = Math.abs(h[j]);
        if (a > local) local = a;
      }
    }
    return local * this.boundGain;
  }

  private load(channels: Float64Array[], frames: number): void {
    if (frames > this.maxBlockFrames) throw new RangeError(`block of ${frames} frames exceeds maxBlockFrames ${this.maxBlockFrames}`);
    for (let ch = 0; ch < this.hist.length; ch++) this.hist[ch].set(channels[ch].subarray(0, frames), HISTORY);
  }

  private keepTail(frames: number): void {
    for (const h of this.hist) h.copyWithin(0, frames, frames + HISTORY);
  }

  // out[i] for i in [start, end): max over channels (overwrites, then accumulates).
  private framePeaks(start: number, end: number, out: Float64Array): void {
    for (let ch = 0; ch < this.hist.length; ch++) {
      const x = this.hist[ch];
      halfPoints(x, this.half, start, end);
      quarterAndEighthPeaks(x, this.half, start, end, out, ch > 0);
    }
  }
}

// Index maps, for output frame i (input frame n = i − latency within the
// block): x[n + d] is hist[i + 19 + d]; the ½ point of n + e is half[i + 2 + e];
// the ¼ and ¾ points of n + e are q1/q3[i + 1 + e] (q1 for e = 0, 1; q3 for e = −1, 0).

/** For output frames [start, end): half[u] = the point at m + ½, m ↔ hist[u + 17], for u in [start, end + 4); taps reach hist[u .. u + 35]. */
function halfPoints(x: Float64Array, half: Float64Array, start: number, frameEnd: number): void {
  const end = frameEnd + 4;
  const c = RECONSTRUCT_STAGES[0];
  const c0 = c[0], c1 = c[1], c2 = c[2], c3 = c[3], c4 = c[4], c5 = c[5], c6 = c[6], c7 = c[7], c8 = c[8];
  const c9 = c[9], c10 = c[10], c11 = c[11], c12 = c[12], c13 = c[13], c14 = c[14], c15 = c[15], c16 = c[16], c17 = c[17];
  // Two points per iteration share 35 of their 36 reads (reads are most of V8's cost here); the last
  // iteration of an odd range writes one point past it, which the array has room for.
  for (let u = start; u < end; u += 2) {
    const x0 = x[u + 0], x1 = x[u + 1], x2 = x[u + 2], x3 = x[u + 3], x4 = x[u + 4], x5 = x[u + 5], x6 = x[u + 6], x7 = x[u + 7], x8 = x[u + 8], x9 = x[u + 9], x10 = x[u + 10], x11 = x[u + 11], x12 = x[u + 12], x13 = x[u + 13], x14 = x[u + 14], x15 = x[u + 15], x16 = x[u + 16], x17 = x[u + 17], x18 = x[u + 18], x19 = x[u + 19], x20 = x[u + 20], x21 = x[u + 21], x22 = x[u + 22], x23 = x[u + 23], x24 = x[u + 24], x25 = x[u + 25], x26 = x[u + 26], x27 = x[u + 27], x28 = x[u + 28], x29 = x[u + 29], x30 = x[u + 30], x31 = x[u + 31], x32 = x[u + 32], x33 = x[u + 33], x34 = x[u + 34], x35 = x[u + 35], x36 = x[u + 36];
    half[u] = (c0 * (x17 + x18) + c1 * (x16 + x19) + c2 * (x15 + x20)) + (c3 * (x14 + x21) + c4 * (x13 + x22) + c5 * (x12 + x23)) + (c6 * (x11 + x24) + c7 * (x10 + x25) + c8 * (x9 + x26)) + (c9 * (x8 + x27) + c10 * (x7 + x28) + c11 * (x6 + x29)) + (c12 * (x5 + x30) + c13 * (x4 + x31) + c14 * (x3 + x32)) + (c15 * (x2 + x33) + c16 * (x1 + x34) + c17 * (x0 + x35));
    half[u + 1] = (c0 * (x18 + x19) + c1 * (x17 + x20) + c2 * (x16 + x21)) + (c3 * (x15 + x22) + c4 * (x14 + x23) + c5 * (x13 + x24)) + (c6 * (x12 + x25) + c7 * (x11 + x26) + c8 * (x10 + x27)) + (c9 * (x9 + x28) + c10 * (x8 + x29) + c11 * (x7 + x30)) + (c12 * (x6 + x31) + c13 * (x5 + x32) + c14 * (x4 + x33)) + (c15 * (x3 + x34) + c16 * (x2 + x35) + c17 * (x1 + x36));
  }
}

/**
 * out[i] for frames [start, end) (the max with what is there, with
 * accumulate) = max |·| of x[n], its ¼, ½, ¾ points and the four ⅛ points
 * between, n ↔ hist[i + 19]. The ¼ and ¾ points (4× stage) and the ⅛ points
 * (8× stage) in one loop: the ½ points, samples and ¼/¾ points it needs roll
 * through locals, so a frame reads two new values (a ½ point and a sample).
 */
function quarterAndEighthPeaks(x: Float64Array, half: Float64Array, start: number, end: number, out: Float64Array, accumulate: boolean): void {
  const q = RECONSTRUCT_STAGES[1];
  const c0 = q[0], c1 = q[1], c2 = q[2], c3 = q[3];
  const e = RECONSTRUCT_STAGES[2];
  const e0 = e[0], e1 = e[1];
  const abs = Math.abs;
  // On the 2× stream, m + ¼ lies between x[m] and h(m + ½), m + ¾ between h(m + ½) and x[m + 1].
  // Rolling state for frame i: h(n − 1 + ½) .. h(n + 2 + ½) are hA..hD, x[n − 1] .. x[n + 3] are xA..xE.
  let hA = half[start + 1], hB = half[start + 2], hC = half[start + 3];
  let xA = x[start + 18], xB = x[start + 19], xC = x[start + 20], xD = x[start + 21];
  // The ¼ point of n and the ¾ point of n − 1, as the previous iteration would have left them.
  const hm2 = half[start];
  let qa = c0 * (xB + hB) + c1 * (hA + xC) + c2 * (xA + hC) + c3 * (hm2 + xD);
  let qbPrev = c0 * (hA + xB) + c1 * (xA + hB) + c2 * (hm2 + xC) + c3 * (x[start + 17] + hC);
  for (let i = start; i < end; i++) {
    const hD = half[i + 4], xE = x[i + 22];
    // ¾ point of n (needs h(n − ½) .. h(n + 2½)) and ¼ point of n + 1 (needs h(n − ½) .. h(n + 2½)).
    const qb = c0 * (hB + xC) + c1 * (xB + hC) + c2 * (hA + xD) + c3 * (xA + hD);
    const qaNext = c0 * (xC + hC) + c1 * (hB + xD) + c2 * (xB + hD) + c3 * (hA + xE);
    const x0 = xB, x1 = xC, h = hB, a = qa, b = qb;
    const p1 = e0 * (x0 + a) + e1 * (qbPrev + h);
    const p3 = e0 * (a + h) + e1 * (x0 + b);
    const p5 = e0 * (h + b) + e1 * (a + x1);
    const p7 = e0 * (b + x1) + e1 * (h + qaNext);
    // Branch-free maxima: max(|p|, |q|) = (|p + q| + |p − q|) / 2, raised by a few ulps (as in true-peak.ts).
    const m01 = abs(x0 + p1) + abs(x0 - p1);
    const m23 = abs(a + p3) + abs(a - p3);
    const m45 = abs(h + p5) + abs(h - p5);
    const m67 = abs(b + p7) + abs(b - p7);
    const m03 = abs(m01 + m23) + abs(m01 - m23);
    const m47 = abs(m45 + m67) + abs(m45 - m67);
    let m = 0.125 * (abs(m03 + m47) + abs(m03 - m47)) * OVER_READ;
    if (accumulate) {
      const o = out[i];
      m = 0.5 * (abs(m + o) + abs(m - o)) * OVER_READ;
    }
    out[i] = m;
    qbPrev = qb;
    qa = qaNext;
    hA = hB;
    hB = hC;
    hC = hD;
    xA = xB;
    xB = xC;
    xC = xD;
    xD = xE;
  }
}

const OVER_READ = 1 + 2 ** -48;

/**
 * The 8 points of the frame at x[n] (x[n], then n + ⅛ … n + ⅞), written
 * plainly from the three stages' definitions: the reference the fused
 * kernels are tested against, and the source of the skip bound. Reads
 * x[n − 19 .. n + 20].
 */
export function referencePoints(x: Float64Array, n: number): number[] {
  const [s1, s2, s3] = RECONSTRUCT_STAGES;
  const halfAt = (m: number) => {
    let v = 0;
    for (let k = 0; k < s1.length; k++) v += s1[k] * (x[m - k] + x[m + 1 + k]);
    return v;
  };
  // The 2× stream around n: z[2m] = x[m], z[2m + 1] = h(m + ½).
  const z = (j: number) => (j % 2 === 0 ? x[j / 2] : halfAt((j - 1) / 2));
  const quarterAt = (q: number) => {
    let v = 0;
    for (let k = 0; k < s2.length; k++) v += s2[k] * (z(q - k) + z(q + 1 + k));
    return v;
  };
  // The 4× stream: w[2q] = z[q], w[2q + 1] = the point between z[q] and z[q + 1].
  const w = (r: number) => (r % 2 === 0 ? z(r / 2) : quarterAt((r - 1) / 2));
  const eighthAt = (r: number) => {
    let v = 0;
    for (let k = 0; k < s3.length; k++) v += s3[k] * (w(r - k) + w(r + 1 + k));
    return v;
  };
  const points: number[] = [];
  for (let j = 0; j < 8; j++) points.push(j % 2 === 0 ? w(4 * n + j / 2) : eighthAt(4 * n + (j - 1) / 2));
  return points;
}

/** Largest Σ|h| over the 8 points of a frame, from impulses through referencePoints. */
function cascadeAbsSum(): number {
  const n = LOOKBACK_FRAMES, x = new Float64Array(HISTORY + 1);
  const sums = new Float64Array(8);
  for (let j = 0; j < x.length; j++) {
    x.fill(0);
    x[j] = 1;
    const p = referencePoints(x, n);
    for (let k = 0; k < 8; k++) sums[k] += Math.abs(p[k]);
  }
  return Math.max(...sums);
}

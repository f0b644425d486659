// Loudness meter after ITU-R BS.1770-4 and EBU R 128 (EBU Tech 3341 for
// momentary/short-term/integrated, Tech 3342 for loudness range).
//
// Streaming: the K-weighted power is summed per grid step (default 10 ms);
// momentary (400 ms) and short-term (3 s) loudness are sums of the last grid
// steps; gating blocks are kept as one number per 100 ms (400 ms blocks with
// 75 % overlap for the integrated loudness, 3 s blocks at 10 Hz for the
// range). Sums run in the file's sample order, so block size never changes
// the result. Channel weights: 1.0 for left, right and mono.

import { kWeightingCoeffs } from "./k-weighting.ts";
import { ReconstructedPeakDetector } from "./reconstruct-peak.ts";
import { TruePeakDetector } from "./true-peak.ts";
import { type ThirdOctaveBand, ThirdOctaveAnalyzer } from "../spectrum/third-octave.ts";

export interface LoudnessAnalysis {
  integratedLufs: number;
  loudnessRangeLu: number;
  /** NaN when the meter was built with truePeak: false. */
  truePeakDbtp: number;
  /** Peak of the waveform reconstructed on an 8× grid, flat to 0.45·fs (reconstruct-peak.ts); NaN with truePeak: false. */
  reconstructedPeakDb: number;
  samplePeakDbfs: number;
  maxMomentaryLufs: number;
  maxShortTermLufs: number;
  /** Σ LR / sqrt(ΣL² ΣR²) over the whole input; 1 for mono, 0 when a channel is silent. */
  correlation: number;
  gridMs: number;
  /** Short-term loudness at the end of each grid step (window padded with silence before the start); -Infinity where silent. */
  shortTermLufs: number[];
  /** Long-term third-octave spectrum (25 Hz – 20 kHz); present when the meter was built with spectrum: true. */
  thirdOctave?: ThirdOctaveBand[];
}

export interface MeterOptions {
  /** Measure true peak (4×/2× oversampling); default true. */
  truePeak?: boolean;
  /** Step of the short-term curve in ms; must divide 100 ms into whole frames. Default 10. */
  gridMs?: number;
  /** Keep the short-term curve and the gating blocks for result(); default true. Live meters (the listening desk) that run for hours turn it off and read momentaryLufs / shortTermLufs. */
  history?: boolean;
  /** Measure the third-octave spectrum in the same pass (`dsp/spectrum/third-octave.ts`); default false. */
  spectrum?: boolean;
}

const LOUDNESS_OFFSET_DB = -0.691;
const ABSOLUTE_GATE_LUFS = -70;
const INTEGRATED_RELATIVE_GATE_LU = -10;
const RANGE_RELATIVE_GATE_LU = -20;
const RANGE_LOW_PERCENTILE = 0.1;
const RANGE_HIGH_PERCENTILE = 0.95;
const TRUE_PEAK_CHUNK_FRAMES = 8192;
// K-weighting state below this (about −400 dB) is flushed at grid steps so silence never turns subnormal.
const FLUSH_BELOW = 1e-20;

const powerToLufs = (power: number): number => LOUDNESS_OFFSET_DB + 10 * Math.log10(power);
const lufsToPower = (lufs: number): number => Math.pow(10, (lufs - LOUDNESS_OFFSET_DB) / 10);

/** A growable list of numbers without per-item allocation. */
class NumberList {
  data = new Float64Array(1024);
  length = 0;
  push(v: number): void {
    if (this.length === this.data.length) {
      const next = new Float64Array(this.data.length * 2);
      next.set(this.data);
      this.data = next;
    }
    this.data[this.length++] = v;
  }
  clear(): void {
    this.length = 0;
  }
  view(): Float64Array {
    return this.data.subarray(0, this.length);
  }
}

/** Integrated loudness of gating-block powers: −70 LUFS absolute gate, then a relative gate. */
export function gatedLoudness(blockPowers: Float64Array, relativeGateLu: number): { lufs: number; gatePower: number } {
  const absPower = lufsToPower(ABSOLUTE_GATE_LUFS);
  let sum = 0;
  let n = 0;
  for (const p of blockPowers) if (p > absPower) { sum += p; n++; }
  if (n === 0) return { lufs: -Infinity, gatePower: Infinity };
  const relPower = lufsToPower(powerToLufs(sum / n) + relativeGateLu);
  const gatePower = Math.max(absPower, relPower);
  sum = 0;
  n = 0;
  for (const p of blockPowers) if (p > gatePower) { sum += p; n++; }
  return { lufs: n === 0 ? -Infinity : powerToLufs(sum / n), gatePower };
}

/** EBU Tech 3342 loudness range from short-term powers at 10 Hz. */
export function loudnessRange(shortTermPowers: Float64Array): number {
  const { gatePower } = gatedLoudness(shortTermPowers, RANGE_RELATIVE_GATE_LU);
  const kept: number[] = [];
  for (const p of shortTermPowers) if (p > gatePower) kept.push(powerToLufs(p));
  if (kept.length < 2) return 0;
  kept.sort((a, b) => a - b);
  const at = (q: number) => kept[Math.round((kept.length - 1) * q)];
  return at(RANGE_HIGH_PERCENTILE) - at(RANGE_LOW_PERCENTILE);
}

export class LoudnessMeter {
  readonly sampleRate: number;
  readonly channels: number;
  readonly gridMs: number;
  private readonly gridFrames: number;
  private readonly stepsPer100Ms: number;
  private readonly momentarySteps: number;
  private readonly shortTermSteps: number;
  private readonly coeffs: Float64Array; // shelf b0 b1 b2 a1 a2, high-pass b0 b1 b2 a1 a2
  private readonly state: Float64Array; // per channel: shelf s1 s2, high-pass s1 s2
  private readonly stepEnergy: Float64Array; // per channel, current grid step
  private readonly weights: Float64Array;
  private readonly ring: Float64Array; // weighted energy of the last shortTermSteps grid steps
  private readonly truePeak: TruePeakDetector | null;
  private readonly reconstructed: ReconstructedPeakDetector | null;
  private readonly tpChunk: Float64Array[];
  private readonly spectrum: ThirdOctaveAnalyzer | null;
  private readonly tail: Float64Array[]; // silence after the end, for the reconstruction's last points
  private stepFill = 0;
  private stepCount = 0;
  private samplePeak = 0;
  private sumLL = 0;
  private sumRR = 0;
  private sumLR = 0;
  private maxMomentaryPower = 0;
  private maxShortTermPower = 0;
  private readonly momentaryBlocks = new NumberList();
  private readonly shortTermBlocks = new NumberList();
  private readonly shortTermCurve: number[] = [];
  private readonly history: boolean;
  private lastMomentaryPower = 0;
  private lastShortTermPower = 0;

  constructor(sampleRate: number, channels: number, options: MeterOptions = {}) {
    if (!(channels === 1 || channels === 2)) throw new RangeError(`the meter takes 1 or 2 channels, got ${channels}`);
    const gridMs = options.gridMs ?? 10;
    const gridFrames = (sampleRate * gridMs) / 1000;
    if (!(gridMs > 0) || 100 % gridMs !== 0 || !Number.isInteger(gridFrames)) {
      throw new RangeError(`gridMs ${gridMs} must divide 100 ms into whole frames at ${sampleRate} Hz`);
    }
    this.sampleRate = sampleRate;
    this.channels = channels;
    this.gridMs = gridMs;
    this.gridFrames = gridFrames;
    this.stepsPer100Ms = 100 / gridMs;
    this.momentarySteps = 400 / gridMs;
    this.shortTermSteps = 3000 / gridMs;
    const [shelf, hp] = kWeightingCoeffs(sampleRate);
    this.coeffs = Float64Array.from([shelf.b0, shelf.b1, shelf.b2, shelf.a1, shelf.a2, hp.b0, hp.b1, hp.b2, hp.a1, hp.a2]);
    this.state = new Float64Array(4 * channels);
    this.stepEnergy = new Float64Array(channels);
    this.weights = new Float64Array(channels).fill(1);
    this.ring = new Float64Array(this.shortTermSteps);
    const wantTruePeak = options.truePeak ?? true;
    this.truePeak = wantTruePeak ? new TruePeakDetector(sampleRate, channels, TRUE_PEAK_CHUNK_FRAMES) : null;
    this.reconstructed = wantTruePeak ? new ReconstructedPeakDetector(sampleRate, channels, TRUE_PEAK_CHUNK_FRAMES) : null;
    this.tail = wantTruePeak ? Array.from({ length: channels }, () => new Float64Array(this.reconstructed!.latencyFrames)) : [];
    this.tpChunk = [];
    this.history = options.history ?? true;
    this.spectrum = options.spectrum ? new ThirdOctaveAnalyzer(sampleRate, channels) : null;
  }

  /** Momentary loudness (400 ms) at the last completed grid step; -Infinity when silent. */
  get momentaryLufs(): number {
    return powerToLufs(this.lastMomentaryPower);
  }

  /** Short-term loudness (3 s) at the last completed grid step; -Infinity when silent. */
  get shortTermLufs(): number {
    return powerToLufs(this.lastShortTermPower);
  }

  /** Grid steps completed since the start (or the last reset). */
  get steps(): number {
    return this.stepCount;
  }

  reset(): void {
    this.state.fill(0);
    this.stepEnergy.fill(0);
    this.ring.fill(0);
    this.truePeak?.reset();
    this.spectrum?.reset();
    this.reconstructed?.reset();
    this.stepFill = 0;
    this.stepCount = 0;
    this.samplePeak = 0;
    this.sumLL = this.sumRR = this.sumLR = 0;
    this.maxMomentaryPower = this.maxShortTermPower = 0;
    this.lastMomentaryPower = this.lastShortTermPower = 0;
    this.momentaryBlocks.clear();
    this.shortTermBlocks.clear();
    this.shortTermCurve.length = 0;
  }

  /**
   * Starts the measurement over while keeping the filters, the windows and the
   * step grid where the audio so far left them: after a pre-roll, the region's
   * figures (peaks, loudness, range, the short-term curve) as a meter that ran
   * from the file's start sees them over that stretch. Gating blocks ending
   * after this point still reach back into the pre-roll, as the whole-file
   * meter's do.
   */
  restartTotals(): void {
    this.truePeak?.resetMax();
    this.reconstructed?.resetMax();
    this.samplePeak = 0;
    this.sumLL = this.sumRR = this.sumLR = 0;
    this.maxMomentaryPower = this.maxShortTermPower = 0;
    this.momentaryBlocks.clear();
    this.shortTermBlocks.clear();
    this.shortTermCurve.length = 0;
  }

  /** Measures `frames` frames of `channels` (not modified). */
  process(channels: Float64Array[], frames: number): void {
    if (channels.length < this.channels) throw new RangeError(`need ${this.channels} channel buffers, got ${channels.length}`);
    if (this.truePeak) {
      for (let start = 0; start < frames; start += TRUE_PEAK_CHUNK_FRAMES) {
        const n = Math.min(TRUE_PEAK_CHUNK_FRAMES, frames - start);
        for (let ch = 0; ch < this.channels; ch++) this.tpChunk[ch] = channels[ch].subarray(start, start + n);
        this.truePeak.process(this.tpChunk, n);
        this.reconstructed!.process(this.tpChunk, n);
      }
    }
    this.spectrum?.process(channels, frames);
    let pos = 0;
    while (pos < frames) {
      const n = Math.min(frames - pos, this.gridFrames - this.stepFill);
      if (this.channels === 2) this.weighStereo(channels[0], channels[1], pos, pos + n);
      else this.weigh(channels[0], 0, pos, pos + n);
      this.stepFill += n;
      pos += n;
      if (this.stepFill === this.gridFrames) this.completeStep();
    }
  }

  // Both K-weighting stages (transposed direct form II), the squared sum and the sample peak in one pass.
  private weigh(x: Float64Array, ch: number, start: number, end: number): void {
    const c = this.coeffs;
    const b0 = c[0], b1 = c[1], b2 = c[2], a1 = c[3], a2 = c[4];
    const d0 = c[5], d1 = c[6], d2 = c[7], e1 = c[8], e2 = c[9];
    const st = this.state;
    const o = 4 * ch;
    let s1 = st[o], s2 = st[o + 1], t1 = st[o + 2], t2 = st[o + 3];
    let energy = this.stepEnergy[ch];
    let peak = this.samplePeak;
    for (let i = start; i < end; i++) {
      const v = x[i];
      const y = b0 * v + s1;
      s1 = b1 * v - a1 * y + s2;
      s2 = b2 * v - a2 * y;
      const z = d0 * y + t1;
      t1 = d1 * y - e1 * z + t2;
      t2 = d2 * y - e2 * z;
      energy += z * z;
      const a = v < 0 ? -v : v;
      if (a > peak) peak = a;
    }
    st[o] = s1;
    st[o + 1] = s2;
    st[o + 2] = t1;
    st[o + 3] = t2;
    this.stepEnergy[ch] = energy;
    this.samplePeak = peak;
  }

  // weigh() for both channels in one loop, with the correlation sums: two
  // independent filter chains per iteration, so each waits less on its own
  // previous sample (the recursions are latency-bound).
  private weighStereo(l: Float64Array, r: Float64Array, start: number, end: number): void {
    const c = this.coeffs;
    const b0 = c[0], b1 = c[1], b2 = c[2], a1 = c[3], a2 = c[4];
    const d0 = c[5], d1 = c[6], d2 = c[7], e1 = c[8], e2 = c[9];
    const st = this.state;
    let s1 = st[0], s2 = st[1], t1 = st[2], t2 = st[3];
    let u1 = st[4], u2 = st[5], w1 = st[6], w2 = st[7];
    let energyL = this.stepEnergy[0], energyR = this.stepEnergy[1];
    let peak = this.samplePeak;
    let ll = this.sumLL, rr = this.sumRR, lr = this.sumLR;
    for (let i = start; i < end; i++) {
      const v = l[i];
      const y = b0 * v + s1;
      s1 = b1 * v - a1 * y + s2;
      s2 = b2 * v - a2 * y;
      const z = d0 * y + t1;
      t1 = d1 * y - e1 * z + t2;
      t2 = d2 * y - e2 * z;
      energyL += z * z;
      const q = r[i];
      const yr = b0 * q + u1;
      u1 = b1 * q - a1 * yr + u2;
      u2 = b2 * q - a2 * yr;
      const zr = d0 * yr + w1;
      w1 = d1 * yr - e1 * zr + w2;
      w2 = d2 * yr - e2 * zr;
      energyR += zr * zr;
      ll += v * v;
      rr += q * q;
      lr += v * q;
      const a = Math.abs(v), b = Math.abs(q);
      if (a > peak) peak = a;
      if (b > peak) peak = b;
    }
    st[0] = s1;
    st[1] = s2;
    st[2] = t1;
    st[3] = t2;
    st[4] = u1;
    st[5] = u2;
    st[6] = w1;
    st[7] = w2;
    this.stepEnergy[0] = energyL;
    this.stepEnergy[1] = energyR;
    this.samplePeak = peak;
    this.sumLL = ll;
    this.sumRR = rr;
    this.sumLR = lr;
  }

  private completeStep(): void {
    let energy = 0;
    for (let ch = 0; ch < this.channels; ch++) {
      energy += this.weights[ch] * this.stepEnergy[ch];
      this.stepEnergy[ch] = 0;
      const o = 4 * ch;
      const st = this.state;
      if (Math.abs(st[o]) < FLUSH_BELOW && Math.abs(st[o + 1]) < FLUSH_BELOW) st[o] = st[o + 1] = 0;
      if (Math.abs(st[o + 2]) < FLUSH_BELOW && Math.abs(st[o + 3]) < FLUSH_BELOW) st[o + 2] = st[o + 3] = 0;
    }
    const ringLen = this.shortTermSteps, ring = this.ring;
    const newest = this.stepCount % ringLen;
    ring[newest] = energy;
    this.stepCount++;
    this.stepFill = 0;

    // Sums recomputed in a fixed order, newest first (not running sums), so no drift builds up over hours.
    let shortSum = 0;
    let momentarySum = 0;
    const filled = Math.min(this.stepCount, ringLen), momentarySteps = Math.min(filled, this.momentarySteps);
    for (let k = 0, idx = newest; k < filled; k++, idx = idx === 0 ? ringLen - 1 : idx - 1) {
      const e = ring[idx];
      shortSum += e;
      if (k < momentarySteps) momentarySum += e;
    }
    const momentaryPower = momentarySum / (this.momentarySteps * this.gridFrames);
    const shortTermPower = shortSum / (ringLen * this.gridFrames);
    if (momentaryPower > this.maxMomentaryPower) this.maxMomentaryPower = momentaryPower;
    if (shortTermPower > this.maxShortTermPower) this.maxShortTermPower = shortTermPower;
    this.lastMomentaryPower = momentaryPower;
    this.lastShortTermPower = shortTermPower;
    if (!this.history) return;
    this.shortTermCurve.push(powerToLufs(shortTermPower));
    if (this.stepCount % this.stepsPer100Ms === 0) {
      const tenths = this.stepCount / this.stepsPer100Ms;
      if (tenths >= 4) this.momentaryBlocks.push(momentaryPower);
      if (tenths >= 30) this.shortTermBlocks.push(shortTermPower);
    }
  }

  result(): LoudnessAnalysis {
    const tp = this.truePeak ? Math.max(this.truePeak.maxAbs, this.samplePeak) : NaN;
    let reconstructed = NaN;
    if (this.reconstructed) {
      // The last frames' points need the frames after them: read them as the file followed by silence, on a copy.
      const probe = this.reconstructed.snapshot();
      probe.process(this.tail, this.reconstructed.latencyFrames);
      reconstructed = Math.max(probe.maxAbs, this.samplePeak);
    }
    let correlation = 1;
    if (this.channels === 2) {
      const denom = Math.sqrt(this.sumLL * this.sumRR);
      correlation = denom > 0 ? Math.max(-1, Math.min(1, this.sumLR / denom)) : 0;
    }
    return {
      integratedLufs: gatedLoudness(this.momentaryBlocks.view(), INTEGRATED_RELATIVE_GATE_LU).lufs,
      loudnessRangeLu: loudnessRange(this.shortTermBlocks.view()),
      truePeakDbtp: this.truePeak ? 20 * Math.log10(tp) : NaN,
      reconstructedPeakDb: 20 * Math.log10(reconstructed),
      samplePeakDbfs: 20 * Math.log10(this.samplePeak),
      maxMomentaryLufs: powerToLufs(this.maxMomentaryPower),
      maxShortTermLufs: powerToLufs(this.maxShortTermPower),
      correlation,
      gridMs: this.gridMs,
      shortTermLufs: this.shortTermCurve.slice(),
      ...(this.spectrum ? { thirdOctave: this.spectrum.result() } : {}),
    };
  }
}

// Multiband compressor: the all-pass-compensated Linkwitz-Riley band
// splitter (1–4 crossovers), one RMS compressor per band, bands summed.
// Per band `bypass` (band passes uncompressed) and `solo` (when any band is
// soloed only the soloed bands are summed, for listening).
// Each band's compressor computes its gain per frame; one summing pass then
// takes two bands at a time (out = b₀·g₀ + b₁·g₁, then out += b₂·g₂ + b₃·g₃),
// or all four bands of both channels at once (the usual case), instead of
// clearing the output and adding each band in a pass of its own.

import { BandSplitter } from "../filters/crossover.ts";
import type { GainReductionSource, Planar, Processor } from "../processor.ts";
import { Compressor, type CompressorSettings } from "./compressor.ts";

export interface MultibandBandSettings extends CompressorSettings {
  bypass?: boolean;
  solo?: boolean;
}

export interface MultibandSettings {
  crossoversHz: number[];
  bands: MultibandBandSettings[];
}

export class MultibandCompressor implements Processor, GainReductionSource {
  readonly latencyFrames = 0;
  readonly traceNames: readonly string[];
  private readonly splitter: BandSplitter;
  private readonly compressors: (Compressor | null)[];
  private readonly audible: boolean[];
  private readonly one = new Float64Array(1);
  private readonly scratch: Float64Array;
  /** gains[b]: band b's gain per frame (all 1 for a bypassed band). */
  private readonly gains: Float64Array[];
  /** The audible bands' indices, in order (the first `audibleCount` entries). */
  private readonly order: Int32Array;

  constructor(sampleRate: number, readonly channels: number, settings: MultibandSettings, maxBlockFrames: number) {
    if (settings.bands.length !== settings.crossoversHz.length + 1) {
      throw new RangeError(`${settings.crossoversHz.length} crossovers need ${settings.crossoversHz.length + 1} bands, got ${settings.bands.length}`);
    }
    this.splitter = new BandSplitter(sampleRate, channels, settings.crossoversHz, maxBlockFrames);
    this.compressors = settings.bands.map((b) => (b.bypass ? null : new Compressor(sampleRate, channels, b, maxBlockFrames)));
    const anySolo = settings.bands.some((b) => b.solo);
    this.audible = settings.bands.map((b) => !anySolo || !!b.solo);
    this.traceNames = settings.bands.map((_, i) => `band${i + 1}`);
    this.scratch = new Float64Array(maxBlockFrames);
    this.gains = settings.bands.map(() => new Float64Array(maxBlockFrames).fill(1));
    this.order = new Int32Array(settings.bands.length);
  }

  reset(): void {
    this.splitter.reset();
    for (const c of this.compressors) c?.reset();
  }

  process(channels: Planar, frames: number): void {
    this.splitter.split(channels, frames);
    const bands = this.splitter.bands;
    let audibleCount = 0;
    for (let b = 0; b < bands.length; b++) {
      const comp = this.compressors[b];
      if (this.audible[b]) {
        comp?.gain(bands[b], frames, this.gains[b]);
        this.order[audibleCount++] = b;
      } else comp?.detect(bands[b], frames, this.scratch); // a muted (not soloed) band keeps a meaningful trace
    }
    const o = this.order, g = this.gains;
    if (audibleCount === 4 && this.channels === 2) {
      // The usual case in one pass: both channels share the gain reads.
      sumFourStereo(channels, bands[o[0]], g[o[0]], bands[o[1]], g[o[1]], bands[o[2]], g[o[2]], bands[o[3]], g[o[3]], frames);
      return;
    }
    for (let c = 0; c < this.channels; c++) {
      const out = channels[c];
      if (audibleCount === 0) {
        out.fill(0, 0, frames);
        continue;
      }
      let k = 0;
      for (; k + 1 < audibleCount; k += 2) {
        const p = this.order[k], q = this.order[k + 1];
        sumPair(out, bands[p][c], this.gains[p], bands[q][c], this.gains[q], frames, k > 0);
      }
      if (k < audibleCount) {
        const p = this.order[k];
        sumOne(out, bands[p][c], this.gains[p], frames, k > 0);
      }
    }
  }

  takeGainReductionDb(out: Float64Array): void {
    for (let b = 0; b < this.compressors.length; b++) {
      const comp = this.compressors[b];
      if (comp) {
        comp.takeGainReductionDb(this.one);
        out[b] = this.one[0];
      } else out[b] = 0;
    }
  }
}

/** out[c] = a[c]·g + b[c]·h + c[c]·u + d[c]·v for two channels */
function sumFourStereo(
  out: Float64Array[],
  a: Float64Array[], g: Float64Array, b: Float64Array[], h: Float64Array,
  c: Float64Array[], u: Float64Array, d: Float64Array[], v: Float64Array,
  frames: number,
): void {
  const ol = out[0], or = out[1], al = a[0], ar = a[1], bl = b[0], br = b[1], cl = c[0], cr = c[1], dl = d[0], dr = d[1];
  for (let i = 0; i < frames; i++) {
    const gi = g[i], hi = h[i], ui = u[i], vi = v[i];
    ol[i] = al[i] * gi + bl[i] * hi + (cl[i] * ui + dl[i] * vi);
    or[i] = ar[i] * gi + br[i] * hi + (cr[i] * ui + dr[i] * vi);
  }
}

/** out = (out +) x·g + y·h */
function sumPair(out: Float64Array, x: Float64Array, g: Float64Array, y: Float64Array, h: Float64Array, frames: number, add: boolean): void {
  if (add) for (let i = 0; i < frames; i++) out[i] += x[i] * g[i] + y[i] * h[i];
  else for (let i = 0; i < frames; i++) out[i] = x[i] * g[i] + y[i] * h[i];
}

/** out = (out +) x·g */
function sumOne(out: Float64Array, x: Float64Array, g: Float64Array, frames: number, add: boolean): void {
  if (add) for (let i = 0; i < frames; i++) out[i] += x[i] * g[i];
  else for (let i = 0; i < frames; i++) out[i] = x[i] * g[i];
}

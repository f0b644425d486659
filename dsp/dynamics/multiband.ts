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
  /** Four stereo bands, all compressed on the control-rate path with one step: see sumFourStereoInterpolated. */
  private fusedControl: boolean;
  /** Live settings (the listening desk): each band's compressor, kept while the band is bypassed. */
  private readonly held: (Compressor | null)[];
  private readonly sampleRate: number;
  private readonly maxBlockFrames: number;

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
    const k0 = this.compressors[0]?.controlFrames ?? 1;
    this.fusedControl = channels === 2 && settings.bands.length === 4 && !anySolo && k0 > 1 && this.compressors.every((c) => c !== null && c.controlFrames === k0);
    this.held = this.compressors.slice();
    this.sampleRate = sampleRate;
    this.maxBlockFrames = maxBlockFrames;
  }

  /**
   * Live settings change (the listening desk): each band's compressor
   * settings (as Compressor.setSettings) and its bypass and solo flags,
   * keeping the splitter's and the compressors' state; the output is then
   * what a new stage with these settings makes from the same state. A band
   * bypassed keeps its compressor aside (resumed as it was when it comes
   * back). Crossovers, the band count and what a compressor fixes at
   * construction (compressorLiveChangeable) need a new stage.
   */
  setSettings(settings: MultibandSettings): void {
    const anySolo = settings.bands.some((b) => b.solo);
    settings.bands.forEach((band, b) => {
      this.audible[b] = !anySolo || !!band.solo;
      if (band.bypass) {
        if (this.compressors[b]) this.held[b] = this.compressors[b];
        this.compressors[b] = null;
        this.gains[b].fill(1);
        return;
      }
      let comp = this.compressors[b] ?? this.held[b];
      if (!comp) comp = this.held[b] = new Compressor(this.sampleRate, this.channels, band, this.maxBlockFrames);
      comp.setSettings(this.sampleRate, band);
      this.compressors[b] = comp;
    });
    const k0 = this.compressors[0]?.controlFrames ?? 1;
    this.fusedControl = this.channels === 2 && settings.bands.length === 4 && !anySolo && k0 > 1 && this.compressors.every((c) => c !== null && c.controlFrames === k0);
  }

  reset(): void {
    this.splitter.reset();
    for (const c of this.compressors) c?.reset();
  }

  process(channels: Planar, frames: number): void {
    this.splitter.split(channels, frames);
    const bands = this.splitter.bands;
    if (this.fusedControl) {
      // The usual case: four stereo bands on the control-rate path, their
      // gains interpolated inside the summing loop (no gain arrays).
      const comps = this.compressors as Compressor[]; // none is null here (fusedControl)
      for (let k = 0; k < 4; k++) comps[k].beginControl(bands[k], frames);
      sumFourStereoInterpolated(channels, bands, comps[0], comps[1], comps[2], comps[3], frames);
      for (const comp of comps) comp.endControl(frames);
      return;
    }
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

/**
 * sumFourStereo with each band's gain interpolated from its compressor's
 * control values on the way, group by group, with the arithmetic of
 * Compressor.gain() (so the result is the same to the bit as gain() into
 * arrays, then sumFourStereo). The four compressors share their control
 * step and phase: they were made together and see the same frames.
 */
function sumFourStereoInterpolated(out: Float64Array[], bands: Float64Array[][], a: Compressor, b: Compressor, c: Compressor, d: Compressor, frames: number): void {
  const ol = out[0], or = out[1];
  const al = bands[0][0], ar = bands[0][1], bl = bands[1][0], br = bands[1][1];
  const cl = bands[2][0], cr = bands[2][1], dl = bands[3][0], dr = bands[3][1];
  const va = a.controlGains, vb = b.controlGains, vc = c.controlGains, vd = d.controlGains;
  const k = a.controlFrames, step = 1 / k;
  let pa = a.controlPrevGain, ca = a.controlCurGain, pb = b.controlPrevGain, cb = b.controlCurGain;
  let pc = c.controlPrevGain, cc = c.controlCurGain, pd = d.controlPrevGain, cd = d.controlCurGain;
  let p = a.controlPhase, i = 0, j = 0;
  while (i < frames) {
    const da = (ca - pa) * step, db = (cb - pb) * step, dc = (cc - pc) * step, dd = (cd - pd) * step;
    const n = Math.min(k - p, frames - i);
    for (let t = 1; t <= n; t++) {
      const q = p + t, f = i + t - 1;
      const gi = pa + da * q, hi = pb + db * q, ui = pc + dc * q, vi = pd + dd * q;
      ol[f] = al[f] * gi + bl[f] * hi + (cl[f] * ui + dl[f] * vi);
      or[f] = ar[f] * gi + br[f] * hi + (cr[f] * ui + dr[f] * vi);
    }
    i += n;
    p += n;
    if (p === k) {
      p = 0;
      pa = ca; ca = va[j];
      pb = cb; cb = vb[j];
      pc = cc; cc = vc[j];
      pd = cd; cd = vd[j];
      j++;
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

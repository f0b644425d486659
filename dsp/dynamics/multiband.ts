// Multiband compressor: the all-pass-compensated Linkwitz-Riley band
// splitter (1–4 crossovers), one RMS compressor per band, bands summed.
// Per band `bypass` (band passes uncompressed) and `solo` (when any band is
// soloed only the soloed bands are summed, for listening).

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
  }

  reset(): void {
    this.splitter.reset();
    for (const c of this.compressors) c?.reset();
  }

  process(channels: Planar, frames: number): void {
    this.splitter.split(channels, frames);
    for (let c = 0; c < this.channels; c++) channels[c].fill(0, 0, frames);
    const bands = this.splitter.bands;
    for (let b = 0; b < bands.length; b++) {
      const comp = this.compressors[b];
      if (this.audible[b]) {
        if (comp) comp.processAdd(bands[b], channels, frames);
        else {
          for (let c = 0; c < this.channels; c++) {
            const out = channels[c], band = bands[b][c];
            for (let i = 0; i < frames; i++) out[i] += band[i];
          }
        }
        // A muted (not soloed) band still runs its detector so its trace stays meaningful.
      } else comp?.detect(bands[b], frames, this.scratch);
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

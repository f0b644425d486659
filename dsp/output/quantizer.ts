// Output word length: optional TPDF dither, then rounding to the integer
// grid and clipping, so the float samples already hold exactly what the
// writer stores (the writer's own rounding is then a no-op) and the output
// meter measures the delivered values. 32-bit float output passes through.
// Scale: full scale ±1.0 ↔ ±2^(bits−1), LSB = 2^(1−bits) (1/32768 at 16 bits),
// clipped to [−2^(bits−1), 2^(bits−1) − 1] like the WAV writer.
// TPDF: the sum of two independent uniform values in [−½, ½) LSB. With
// rounding the total error has variance LSB²/12 + 2·LSB²/12 = LSB²/4, so its
// RMS is LSB/2 (analytic; −96.33 dBFS at 16 bits re a full-scale amplitude of 1).
// One generator per channel keeps the output independent of the block size.

import type { Planar, Processor } from "../processor.ts";
import { Prng, skipDraws } from "./prng.ts";

export type OutputBitDepth = 16 | 24 | "32f";

export const DITHER_SEED = 0x7d3a11;

export class Quantizer implements Processor {
  readonly latencyFrames = 0;
  private readonly scale: number;
  private readonly generators: Prng[];
  // The block's dither values; grown once to the largest block seen.
  private noise = new Float64Array(0);

  constructor(channels: number, readonly bitDepth: OutputBitDepth, readonly dither: "tpdf" | "none", readonly seed = DITHER_SEED) {
    this.scale = bitDepth === "32f" ? 0 : 2 ** (bitDepth - 1);
    this.generators = Array.from({ length: channels }, (_, c) => new Prng(seed + 7919 * c));
  }

  reset(): void {
    this.generators.splice(0, this.generators.length, ...this.generators.map((_, c) => new Prng(this.seed + 7919 * c)));
  }

  /** Advances the dither as if `frames` frames had been processed (a render that starts later in the stream: a pre-rolled preview). */
  skipFrames(frames: number): void {
    if (this.scale === 0 || this.dither !== "tpdf") return;
    for (const g of this.generators) skipDraws(g, 2 * frames);
  }

  process(channels: Planar, frames: number): void {
    if (this.scale === 0) return;
    const scale = this.scale, inv = 1 / scale, hi = scale - 1, lo = -scale;
    const tpdf = this.dither === "tpdf";
    if (tpdf && this.noise.length < frames) this.noise = new Float64Array(frames);
    const noise = this.noise;
    for (let c = 0; c < channels.length; c++) {
      const x = channels[c];
      if (tpdf) this.generators[c].fillTpdf(noise, frames);
      for (let i = 0; i < frames; i++) {
        let v = x[i] * scale;
        if (tpdf) v += noise[i];
        // floor(v + ½) is Math.round for every v here (|v| < 2^31; they part only at
        // 0.49999999999999994 and in the sign of zero) and has no data-dependent
        // branch: V8's Math.round mispredicts on noisy fractions, at twice the cost.
        let q = Math.floor(v + 0.5);
        if (q > hi) q = hi;
        else if (q < lo) q = lo;
        x[i] = q * inv;
      }
    }
  }
}

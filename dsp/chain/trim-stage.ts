// Trim stage: a plain gain.

import type { Planar, Processor } from "../processor.ts";
import { dbToLinear } from "../units.ts";

export class TrimStage implements Processor {
  readonly latencyFrames = 0;
  private gain: number;

  constructor(gainDb: number) {
    this.gain = dbToLinear(gainDb);
  }

  setGainDb(gainDb: number): void {
    this.gain = dbToLinear(gainDb);
  }

  reset(): void {}

  process(channels: Planar, frames: number): void {
    const g = this.gain;
    if (g === 1) return;
    for (const x of channels) for (let i = 0; i < frames; i++) x[i] *= g;
  }
}

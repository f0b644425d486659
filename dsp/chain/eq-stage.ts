// EQ stage: RBJ-cookbook biquads in series, each on stereo (both channels),
// mid, side, left or right. Mid/side bands convert around the band
// (M = (L+R)/2, S = (L−R)/2, the matrix of dsp/filters/mid-side.ts) and back,
// in the band's own loop. On mono input, stereo/mid/left bands act on the
// one channel; side and right bands have nothing to act on and are skipped.
// Each band is one pass over the block with both channels in one loop
// (PairedBiquad), which costs about half of one loop per channel.

import { designBiquad } from "../filters/biquad-design.ts";
import { PairedBiquad } from "../filters/paired-biquad.ts";
import type { Planar, Processor } from "../processor.ts";
import type { EqBand } from "./schema.ts";

interface BandRunner {
  filter: PairedBiquad;
  channel: EqBand["channel"];
}

export class EqStage implements Processor {
  readonly latencyFrames = 0;
  private readonly runners: BandRunner[];

  constructor(sampleRate: number, readonly channels: number, bands: EqBand[]) {
    this.runners = [];
    for (const band of bands) {
      if (band.freqHz >= sampleRate / 2) throw new RangeError(`EQ frequency ${band.freqHz} Hz is at or above half the sample rate (${sampleRate / 2} Hz)`);
      if (channels === 1 && (band.channel === "side" || band.channel === "right")) continue;
      const coeffs = designBiquad(band.shape, { freqHz: band.freqHz, q: band.q, gainDb: band.gainDb }, sampleRate);
      const perChannel = band.channel === "stereo" ? channels : 1;
      this.runners.push({ filter: new PairedBiquad(coeffs, perChannel), channel: channels === 1 ? "stereo" : band.channel });
    }
  }

  /**
   * Live change of the bands' frequency, gain and Q (the listening desk),
   * keeping the filter state. The band list, shapes and channels are the
   * constructor's (a change of those needs a new stage).
   */
  setBands(sampleRate: number, bands: EqBand[]): void {
    let r = 0;
    for (const band of bands) {
      if (this.channels === 1 && (band.channel === "side" || band.channel === "right")) continue;
      this.runners[r++].filter.setCoeffs(designBiquad(band.shape, { freqHz: band.freqHz, q: band.q, gainDb: band.gainDb }, sampleRate));
    }
  }

  reset(): void {
    for (const r of this.runners) r.filter.reset();
  }

  process(channels: Planar, frames: number): void {
    for (const { filter, channel } of this.runners) {
      switch (channel) {
        case "stereo":
          filter.process(channels, frames);
          break;
        case "left":
          filter.processChannel(channels[0], frames);
          break;
        case "right":
          filter.processChannel(channels[1], frames);
          break;
        case "mid":
        case "side":
          filter.processMidSide(channels[0], channels[1], frames, channel === "side");
          break;
      }
    }
  }
}

// The limiter's true-peak detector: per frame, the larger of two readings of
// the waveform between samples, so that no common meter reads the output
// above the ceiling:
// - the BS.1770-4 Annex 2 reading (true-peak.ts: 4× below 96 kHz, 2× at
//   96 kHz, the meter's own short filter); short interpolation filters pass
//   part of the images of content near fs/2 and read such content higher
//   than the waveform is (by 0.3 dB on full-band noise, as does
//   ebur128-wasm's), so the limiter must hold what they read;
// - the 8× reconstruction flat to 0.45·fs (reconstruct-peak.ts), which sees
//   what the short filters miss: their droop near Nyquist and the crests
//   between their points (what sox's `rate -v` and ffmpeg's meter read).
// The two are aligned to the later one's delay (the 4× readings wait in a
// short ring).
// Design: docs/decisions/2026-12-02-reconstructed-peak-ceiling.md.

import type { PerFramePeakDetector } from "./limiter.ts";
import { ReconstructedPeakDetector } from "../loudness/reconstruct-peak.ts";
import { TruePeakDetector } from "../loudness/true-peak.ts";

export class CeilingPeakDetector implements PerFramePeakDetector {
  readonly latencyFrames: number;
  private readonly bs1770: TruePeakDetector;
  private readonly fine: ReconstructedPeakDetector;
  private readonly shift: number; // frames the BS.1770 readings wait
  private readonly wait: Float64Array; // the last `shift` BS.1770 readings, then the block's
  private readonly scratch: Float64Array;

  constructor(sampleRate: number, channels: number, maxBlockFrames: number) {
    this.bs1770 = new TruePeakDetector(sampleRate, channels, maxBlockFrames);
    this.fine = new ReconstructedPeakDetector(sampleRate, channels, maxBlockFrames);
    this.latencyFrames = Math.max(this.bs1770.latencyFrames, this.fine.latencyFrames);
    this.shift = this.latencyFrames - this.bs1770.latencyFrames;
    this.wait = new Float64Array(this.shift + maxBlockFrames);
    this.scratch = new Float64Array(maxBlockFrames);
    // The 8× detector is the later one, so only the BS.1770 readings wait.
    if (this.fine.latencyFrames !== this.latencyFrames) throw new Error("the 8× detector is expected to have the longer delay");
  }

  reset(): void {
    this.bs1770.reset();
    this.fine.reset();
    this.wait.fill(0);
  }

  processPerFrame(channels: Float64Array[], frames: number, outPeak: Float64Array, exactAbove = 0): void {
    this.fine.processPerFrame(channels, frames, outPeak, exactAbove);
    const wait = this.wait, shift = this.shift;
    this.bs1770.processPerFrame(channels, frames, this.scratch, exactAbove);
    wait.set(this.scratch.subarray(0, frames), shift);
    for (let i = 0; i < frames; i++) {
      const a = outPeak[i], b = wait[i];
      outPeak[i] = a > b ? a : b;
    }
    wait.copyWithin(0, frames, frames + shift);
  }
}

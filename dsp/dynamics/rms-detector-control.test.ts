import { describe, expect, it } from "vitest";
import { whiteNoise } from "../testing/signals.ts";
import { RmsDetector } from "./rms-detector.ts";
import { ControlRateRmsDetector } from "./rms-detector-control.ts";

const FS = 48000;

/** Runs the control-rate detector in blocks of `block`; the linked power at each group end. */
function control(det: ControlRateRmsDetector, input: Float64Array[], block: number): Float64Array {
  const frames = input[0].length;
  const out = new Float64Array(Math.ceil(frames / det.groupFrames) + 1);
  const part = new Float64Array(block + 1);
  const max = new Float64Array(1);
  let count = 0;
  for (let off = 0; off < frames; off += block) {
    const n = Math.min(block, frames - off);
    const m = det.process(input.map((x) => x.subarray(off, off + n)), n, part, max);
    out.set(part.subarray(0, m), count);
    if (m > 0) expect(max[0]).toBe(Math.max(...part.subarray(0, m)));
    count += m;
  }
  expect(count).toBe(Math.floor(frames / det.groupFrames));
  return out.subarray(0, count);
}

describe("control-rate RMS detector (reference: the per-frame RmsDetector, k steps of the same one-pole, read at each group end)", () => {
  it.each([
    ["stereo, k = 4", 2, 4, null],
    ["stereo with sidechain high-pass, k = 4", 2, 4, 90],
    ["mono, k = 7", 1, 7, null],
    ["stereo with high-pass, k = 8", 2, 8, 120],
  ] as const)("%s: within 1e-12 (relative) of the reference, and bit for bit the same for any block size", (_name, channels, k, highPassHz) => {
    const frames = 20000;
    const input = [whiteNoise(frames, 3), whiteNoise(frames, 4).map((v, i) => v * (i < 10000 ? 0.2 : 1))].slice(0, channels);
    const power = new Float64Array(frames);
    new RmsDetector(FS, channels, 20, highPassHz).process(input, frames, power);
    const a = control(new ControlRateRmsDetector(FS, channels, 20, highPassHz, k), input, 480);
    let worst = 0;
    for (let j = 0; j < a.length; j++) worst = Math.max(worst, Math.abs(a[j] / power[(j + 1) * k - 1] - 1));
    expect(worst).toBeLessThan(1e-12);
    for (const block of [333, 1, 4096]) expect(Array.from(control(new ControlRateRmsDetector(FS, channels, 20, highPassHz, k), input, block))).toEqual(Array.from(a));
  });

  it("silence after noise decays to exact zeros (flushed, no subnormal numbers)", () => {
    // Unflushed, a 5 ms mean square would take about 3.7 s to underflow to 0 through the subnormals.
    const frames = 48000 * 3;
    const x = new Float64Array(frames);
    x.set(whiteNoise(4800, 9));
    const a = control(new ControlRateRmsDetector(FS, 2, 5, 90, 4), [x, x], 480);
    expect(a[a.length - 1]).toBe(0);
    expect(a[1000]).toBeGreaterThan(0);
  });
});

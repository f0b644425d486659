// Level matching, with sources synthesized here and measured by our BS.1770
// meter. Reference for the absolute values: EBU Tech 3341, test 1/2 — a stereo
// 1 kHz sine at −23 dBFS (and −33 dBFS) per channel reads −23 (−33) LUFS ±0.1 LU.
import { describe, expect, it } from "vitest";
import { LoudnessMeter } from "../../dsp/loudness/meter.ts";
import { levelMatch, levelMatchRegion, measureRegionLufs, regionLoudnessFromShortTerm } from "../../app/lib/compare/level-match.ts";

const SR = 48_000;

/** Stereo 1 kHz sine; `levels` gives [fromS, toS, dBFS] pieces back to back. */
function sine(pieces: [number, number, number][]): Float64Array[] {
  const frames = Math.round(pieces[pieces.length - 1][1] * SR);
  const x = new Float64Array(frames);
  for (const [from, to, dbfs] of pieces) {
    const amp = Math.pow(10, dbfs / 20);
    for (let i = Math.round(from * SR); i < Math.round(to * SR); i++) x[i] = amp * Math.sin((2 * Math.PI * 1000 * i) / SR);
  }
  return [x, x.slice()];
}

/** Seeded pink-ish noise (a one-pole low-passed white noise), stereo, scaled by gainDb. */
function noise(seconds: number, gainDb: number, seed = 12345): Float64Array[] {
  let s = seed >>> 0;
  const rand = () => ((s = (Math.imul(s, 1664525) + 1013904223) >>> 0) / 4294967296) * 2 - 1;
  const g = Math.pow(10, gainDb / 20);
  const out = [new Float64Array(seconds * SR), new Float64Array(seconds * SR)];
  let l = 0;
  let r = 0;
  for (let i = 0; i < seconds * SR; i++) {
    l = 0.9 * l + 0.1 * rand();
    r = 0.9 * r + 0.1 * rand();
    out[0][i] = g * 2 * l;
    out[1][i] = g * 2 * r;
  }
  return out;
}

function analyse(channels: Float64Array[]) {
  const meter = new LoudnessMeter(SR, 2, { truePeak: false, gridMs: 10 });
  meter.process(channels, channels[0].length);
  return meter.result();
}

describe("levelMatch", () => {
  it("turns the louder of two measured sources down by their difference of integrated loudness", () => {
    const a = analyse(sine([[0, 10, -20]]));
    const b = analyse(sine([[0, 10, -26.5]]));
    // Tech 3341 test 1 style check that the meter reads what the sine is.
    expect(a.integratedLufs).toBeCloseTo(-20, 1);
    expect(b.integratedLufs).toBeCloseTo(-26.5, 1);
    const m = levelMatch(a.integratedLufs, b.integratedLufs);
    expect(m.matched).toBe(true);
    expect(m.differenceDb).toBeCloseTo(a.integratedLufs - b.integratedLufs, 12);
    expect(m.differenceDb).toBeCloseTo(6.5, 1);
    expect(m.gainADb).toBeCloseTo(-m.differenceDb, 12);
    expect(m.gainBDb).toBe(0);
    // The other way round the gain moves to B.
    const swapped = levelMatch(b.integratedLufs, a.integratedLufs);
    expect(swapped.gainADb).toBe(0);
    expect(swapped.gainBDb).toBeCloseTo(-m.differenceDb, 12);
  });

  it("matches noise scaled by a known gain to within its measured difference", () => {
    const a = analyse(noise(8, -3.25));
    const b = analyse(noise(8, 0));
    const m = levelMatch(a.integratedLufs, b.integratedLufs);
    // The same noise 3.25 dB apart: the meter is linear in power, so the difference is the scale.
    expect(m.differenceDb).toBeCloseTo(-3.25, 6);
    expect(m.gainBDb).toBeCloseTo(-3.25, 6);
    expect(m.gainADb).toBe(0);
  });

  it("applies no gain when a source is silent or unknown", () => {
    const silent = analyse([new Float64Array(SR * 2), new Float64Array(SR * 2)]);
    expect(silent.integratedLufs).toBe(-Infinity);
    for (const other of [silent.integratedLufs, null, undefined, Number.NaN, -80]) {
      expect(levelMatch(-14, other)).toEqual({ gainADb: 0, gainBDb: 0, differenceDb: 0, matched: false });
      expect(levelMatch(other, -14).matched).toBe(false);
    }
  });
});

describe("loop-region matching", () => {
  // A: loud first half, quiet second half; B: steady in between.
  const aSamples = sine([[0, 10, -14], [10, 20, -30]]);
  const bSamples = sine([[0, 20, -20]]);
  const a = analyse(aSamples);
  const b = analyse(bSamples);

  it("measures a region exactly from its samples (gated momentary blocks)", () => {
    expect(measureRegionLufs(aSamples, SR, 12, 18)).toBeCloseTo(-30, 1);
    expect(measureRegionLufs(aSamples.map((c) => Float32Array.from(c)), SR, 2, 8)).toBeCloseTo(-14, 1);
    expect(measureRegionLufs([new Float32Array(SR)], SR, 0, 1)).toBeNull();
  });

  it("estimates the region from the short-term curve close to the exact value on steady sound", () => {
    const estimate = regionLoudnessFromShortTerm(a, 12, 18)!;
    expect(estimate).toBeCloseTo(measureRegionLufs(aSamples, SR, 12, 18)!, 1);
    // Windows that straddle the step at 10 s are outside the region, so the loud half does not leak in.
    expect(estimate).toBeLessThan(-29.8);
  });

  it("uses the region's loudness, not the integrated loudness, inside a loop", () => {
    // Integrated: A's quiet half is gated out (more than 10 LU below), so A reads near −14 and is turned down.
    const whole = levelMatch(a.integratedLufs, b.integratedLufs);
    expect(whole.gainADb).toBeLessThan(-5);
    const region = levelMatchRegion(a, b, 12, 18);
    expect(region.basis).toBe("region");
    expect(region.gainADb).toBe(0);
    expect(region.gainBDb).toBeCloseTo(-10, 1);
    // A region loudness passed in (measured exactly) is preferred over the estimate.
    const exact = levelMatchRegion(a, b, 12, 18, { aRegionLufs: measureRegionLufs(aSamples, SR, 12, 18), bRegionLufs: measureRegionLufs(bSamples, SR, 12, 18) });
    expect(exact.gainBDb).toBeCloseTo(region.gainBDb, 1);
  });

  it("places a preview's curve at its region's start on the mix's time axis", () => {
    // A preview rendered from 10 s to 20 s of A: its own t = 0 is the mix's 10 s.
    const preview = analyse(aSamples.map((c) => c.slice(10 * SR, 20 * SR)));
    const lufs = regionLoudnessFromShortTerm({ ...preview, offsetS: 10 }, 12, 18);
    expect(lufs).toBeCloseTo(-30, 1);
    // Outside what the preview covers there is nothing to estimate from.
    expect(regionLoudnessFromShortTerm({ ...preview, offsetS: 10 }, 2, 8)).toBeNull();
  });

  it("falls back to integrated loudness when a region cannot be estimated", () => {
    const m = levelMatchRegion({ integratedLufs: -12 }, { integratedLufs: -15 }, 5, 9);
    expect(m).toMatchObject({ basis: "integrated", gainADb: -3, gainBDb: 0 });
  });
});

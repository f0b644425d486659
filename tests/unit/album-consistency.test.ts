// Album consistency hints: the spectral tilt measure on analytic spectra
// (a line of known slope in dB per octave), and the 2 LU / 1 dB-per-octave
// thresholds around the median.
import { describe, expect, it } from "vitest";
import { consistencyHints, median, spectralTiltDbPerOctave } from "../../app/lib/album/consistency.ts";

const NOMINAL = [25, 31.5, 40, 50, 63, 80, 100, 125, 160, 200, 250, 315, 400, 500, 630, 800, 1000, 1250, 1600, 2000, 2500, 3150, 4000, 5000, 6300, 8000, 10000, 12500, 16000, 20000];
const sloped = (dbPerOctave: number, offset = -20) => NOMINAL.map((f) => ({ centreHz: f, levelDb: offset + dbPerOctave * Math.log2(f / 1000) }));

describe("spectral tilt (least squares over 100 Hz – 10 kHz)", () => {
  it("reads the slope of a straight line in dB per octave (nominal labels off the exact frequencies by < 0.1 dB/oct)", () => {
    for (const slope of [-4.5, -3, 0, 2]) expect(Math.abs(spectralTiltDbPerOctave(sloped(slope))! - slope)).toBeLessThan(0.1);
  });
  it("ignores the bands outside 100 Hz – 10 kHz and silent bands; null with too few", () => {
    const bands = sloped(-3).map((b) => (b.centreHz < 100 || b.centreHz > 10000 ? { ...b, levelDb: 0 } : b));
    expect(spectralTiltDbPerOctave(bands)).toBeCloseTo(spectralTiltDbPerOctave(sloped(-3))!, 9);
    expect(spectralTiltDbPerOctave(sloped(-3).map((b) => ({ ...b, levelDb: b.centreHz === 1000 ? null : b.levelDb })))).not.toBeNull();
    expect(spectralTiltDbPerOctave(sloped(-3).slice(0, 8))).toBeNull();
    expect(spectralTiltDbPerOctave(null)).toBeNull();
  });
});

describe("hints", () => {
  it("median of odd and even counts", () => {
    expect(median([3, 1, 2])).toBe(2);
    expect(median([4, 1, 2, 3])).toBe(2.5);
    expect(median([])).toBeNull();
  });
  it("flags a track more than 2 LU off the median, not one 1.9 LU off", () => {
    const { hints, medianLufs } = consistencyHints([
      { integratedLufs: -10, tiltDbPerOctave: -3 },
      { integratedLufs: -10.5, tiltDbPerOctave: -3 },
      { integratedLufs: -12.6, tiltDbPerOctave: -3 },
      { integratedLufs: -8.6, tiltDbPerOctave: -3 },
    ]);
    expect(medianLufs).toBe(-10.25);
    expect(hints[0]).toEqual([]);
    expect(hints[2].map((h) => h.kind)).toEqual(["loudness"]);
    expect(hints[2][0].text).toMatch(/2\.3 LU quieter/) // 2.35 off;
    expect(hints[3]).toEqual([]); // 1.65 LU louder
  });
  it("flags a tilt more than 1 dB/octave off the median; one track alone gets no hints", () => {
    const { hints } = consistencyHints([
      { integratedLufs: -10, tiltDbPerOctave: -3 },
      { integratedLufs: -10, tiltDbPerOctave: -3.2 },
      { integratedLufs: -10, tiltDbPerOctave: -1.5 },
    ]);
    expect(hints[2].map((h) => h.kind)).toEqual(["tilt"]);
    expect(hints[2][0].text).toMatch(/brighter/);
    expect(consistencyHints([{ integratedLufs: -30, tiltDbPerOctave: 5 }]).hints[0]).toEqual([]);
  });
});

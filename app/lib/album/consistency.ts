// Consistency hints for an album: flags, never changes. A track is flagged
//   - when its integrated loudness is more than LOUDNESS_HINT_LU (2 LU) off
//     the median of the album's tracks;
//   - when its spectral tilt is more than TILT_HINT_DB_PER_OCTAVE (1 dB per
//     octave) off the album's median tilt.
// Spectral tilt (our measure): the slope, in dB per octave, of the
// least-squares line through the track's long-term third-octave levels
// (IEC 61260-1 bands) from 100 Hz to 10 kHz against log2 of the band's
// midband frequency. Pink-like program reads about −3 dB/octave… 0; a
// darker master reads more negative. 1 dB/octave across those 6.6 octaves
// is 6.6 dB more or less top end relative to the low mids, which anyone
// hears as a different tonal family. Bands below 100 Hz and above 10 kHz are
// left out: the kick, the sub and the air differ between songs on purpose.

export const LOUDNESS_HINT_LU = 2;
export const TILT_HINT_DB_PER_OCTAVE = 1;
const TILT_LOW_HZ = 100;
const TILT_HIGH_HZ = 10000;

export type Band = { centreHz: number; levelDb: number | null };

/** Slope of the least-squares line of level (dB) over log2 frequency, 100 Hz – 10 kHz; null with fewer than 5 bands. */
export function spectralTiltDbPerOctave(bands: readonly Band[] | null | undefined): number | null {
  const points = (bands ?? []).filter(
    (b): b is { centreHz: number; levelDb: number } => b.centreHz >= TILT_LOW_HZ && b.centreHz <= TILT_HIGH_HZ && typeof b.levelDb === "number" && Number.isFinite(b.levelDb),
  );
  if (points.length < 5) return null;
  const xs = points.map((p) => Math.log2(p.centreHz));
  const ys = points.map((p) => p.levelDb);
  const mx = xs.reduce((a, b) => a + b) / xs.length;
  const my = ys.reduce((a, b) => a + b) / ys.length;
  let sxy = 0, sxx = 0;
  for (let i = 0; i < xs.length; i++) {
    sxy += (xs[i] - mx) * (ys[i] - my);
    sxx += (xs[i] - mx) ** 2;
  }
  return sxy / sxx;
}

export function median(values: readonly number[]): number | null {
  if (values.length === 0) return null;
  const s = [...values].sort((a, b) => a - b);
  const mid = Math.floor(s.length / 2);
  return s.length % 2 ? s[mid] : (s[mid - 1] + s[mid]) / 2;
}

export type TrackFigures = { integratedLufs: number | null; tiltDbPerOctave: number | null };
export type Hint = { kind: "loudness" | "tilt"; text: string; deviation: number };

const one = (v: number) => Math.abs(v).toFixed(1);

/** Hints per track (same order as `tracks`), with the medians they were measured against. */
export function consistencyHints(tracks: readonly TrackFigures[]): { hints: Hint[][]; medianLufs: number | null; medianTilt: number | null } {
  const finite = (v: number | null): v is number => v !== null && Number.isFinite(v);
  const medianLufs = median(tracks.map((t) => t.integratedLufs).filter(finite));
  const medianTilt = median(tracks.map((t) => t.tiltDbPerOctave).filter(finite));
  const hints = tracks.map((t) => {
    const out: Hint[] = [];
    if (tracks.length >= 2 && medianLufs !== null && finite(t.integratedLufs)) {
      const d = t.integratedLufs - medianLufs;
      if (Math.abs(d) > LOUDNESS_HINT_LU) out.push({ kind: "loudness", deviation: d, text: `${one(d)} LU ${d > 0 ? "louder" : "quieter"} than the album's median` });
    }
    if (tracks.length >= 2 && medianTilt !== null && finite(t.tiltDbPerOctave)) {
      const d = t.tiltDbPerOctave - medianTilt;
      if (Math.abs(d) > TILT_HINT_DB_PER_OCTAVE) out.push({ kind: "tilt", deviation: d, text: `spectrum ${d > 0 ? "brighter" : "darker"} than the album's: tilt ${one(d)} dB/octave off its median` });
    }
    return out;
  });
  return { hints, medianLufs, medianTilt };
}

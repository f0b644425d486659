// Pre-roll: how much audio before a region every processor (and the meters)
// runs through before the region's first output frame, so a region starts in
// the state the whole-file render has there. One rule for the offline
// preview (render-file) and the live desk (its worklet), so both start alike.
//
// Why 40 s is enough (docs/decisions/2026-12-02-previews-are-the-print.md):
// a processor started from rest differs from the whole-file render only by
// state that decays. The slowest state any chain holds is a compressor's
// gain smoother in release: time constant ≤ 3 s (the release field's
// maximum; the auto release's slow envelope is 2.5 s), a one-pole in dB, so a
// difference ΔG dB at the pre-roll's start is ΔG·e^(−t/τ) after t. A gain
// error of g dB changes samples by about 0.115·g relative; below −100 dB
// needs g < 8.7e-5 dB, so from a 40 dB difference (a compressor 40 dB into
// gain reduction against one at rest) t ≥ τ·ln(40 / 8.7e-5) = 13·τ = 39 s.
// Everything else forgets sooner: the limiter's release (≤ 1 s), RMS windows
// (≤ 0.3 s), filters (tens of ms), the meter's short-term window (exactly 3 s).
// The dither generator is not state that decays: render-file advances it to
// the frame the pre-roll starts at, so its noise is the print's.
//
// Alignment: the start is moved back to a multiple of PREROLL_ALIGN_S worth of
// frames counted from the file's start (100 ms, and a multiple of 256 frames),
// so processing chunks (the 10 ms grid), the meter's 100 ms gating blocks, the
// compressors' control-rate groups and the filters' flush interval fall on
// the same frames as in the whole-file render.

/** Seconds of pre-roll before a region's start (at least; cut at the file's start). */
export const PREROLL_S = 40;

/** Frames the pre-roll's start is a multiple of: 100 ms of frames and 256, their least common multiple. */
export function prerollAlignFrames(sampleRate: number): number {
  const blockFrames = Math.round(sampleRate / 10);
  const gcd = (a: number, b: number): number => (b === 0 ? a : gcd(b, a % b));
  return (blockFrames * 256) / gcd(blockFrames, 256);
}

/** The frame the processors start from for a region starting at `regionStartFrame`. */
export function prerollStartFrame(regionStartFrame: number, sampleRate: number): number {
  const earliest = regionStartFrame - Math.round(PREROLL_S * sampleRate);
  if (earliest <= 0) return 0;
  const align = prerollAlignFrames(sampleRate);
  return Math.floor(earliest / align) * align;
}

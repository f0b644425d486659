// Pre-roll: how much audio before a region every processor (and the meters)
// runs through before the region's first output frame, so a region starts in
// the state the whole-file render has there. One rule for the offline
// preview (render-file) and the live desk (its worklet), so both start alike.
// The value, and why it is enough, is documented where it is chosen
// (docs/decisions/, "previews are the print").

/** Seconds of pre-roll before a region's start (cut at the file's start). */
export const PREROLL_S = 10;

/** The frame the processors start from for a region starting at `regionStartFrame`. */
export function prerollStartFrame(regionStartFrame: number, sampleRate: number): number {
  return Math.max(0, regionStartFrame - Math.round(PREROLL_S * sampleRate));
}

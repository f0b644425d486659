// Mid/side matrix, so an EQ band can act on mid or side only.
// Scaling: M = (L + R) / 2, S = (L − R) / 2; inverse L = M + S, R = M − S.
// The pair is exactly inverse; a mono signal (L = R) has S = 0 and M = L.

export function toMidSide(left: Float64Array, right: Float64Array, frames: number): void {
  for (let i = 0; i < frames; i++) {
    const l = left[i];
    const r = right[i];
    left[i] = 0.5 * (l + r);
    right[i] = 0.5 * (l - r);
  }
}

export function fromMidSide(mid: Float64Array, side: Float64Array, frames: number): void {
  for (let i = 0; i < frames; i++) {
    const m = mid[i];
    const s = side[i];
    mid[i] = m + s;
    side[i] = m - s;
  }
}

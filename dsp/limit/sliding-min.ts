// Running minimum over the last `length` values (van Herk / Gil-Werman):
// the stream is cut into segments of `length` values. Within the current
// segment a prefix minimum runs; of the segment before it, the suffix minima
// are kept. The window ending at position p of the current segment is the
// previous segment's values after p plus the current ones up to p, so its
// minimum is min(suffix[p + 1], prefix). About three comparisons a value,
// and all of them predictable (a prefix minimum rarely changes, and the
// final comparison flips once a segment), where a monotonic deque's pops
// depend on the data: the limiter runs this per frame. No allocation after
// construction; pushBlock keeps the state in locals for a whole block.

export class SlidingMin {
  private readonly segment: Float64Array; // the current segment's values so far
  private readonly suffix: Float64Array; // suffix minima of the previous segment; suffix[length] = +∞
  private pos = 0;
  private prefix = Infinity;
  private readonly scratch = new Float64Array(1);

  constructor(readonly length: number) {
    this.segment = new Float64Array(length);
    this.suffix = new Float64Array(length + 1);
    this.reset();
  }

  reset(): void {
    this.suffix.fill(Infinity);
    this.pos = 0;
    this.prefix = Infinity;
  }

  /** Adds a value and returns the minimum of the last `length` values. */
  push(v: number): number {
    const one = this.scratch;
    one[0] = v;
    this.pushBlock(one, one, 1);
    return one[0];
  }

  /** out[i] = minimum of the last `length` values up to and including input[i] (out may be input). */
  pushBlock(input: Float64Array, out: Float64Array, n: number): void {
    const segment = this.segment, suffix = this.suffix, length = this.length;
    let pos = this.pos, prefix = this.prefix;
    for (let i = 0; i < n; i++) {
      const v = input[i];
      segment[pos] = v;
      if (v < prefix) prefix = v;
      const older = suffix[pos + 1];
      out[i] = older < prefix ? older : prefix;
      if (++pos === length) {
        // The segment is complete: its suffix minima serve the next one.
        let m = Infinity;
        for (let k = length - 1; k >= 0; k--) {
          const s = segment[k];
          if (s < m) m = s;
          suffix[k] = m;
        }
        pos = 0;
        prefix = Infinity;
      }
    }
    this.pos = pos;
    this.prefix = prefix;
  }
}

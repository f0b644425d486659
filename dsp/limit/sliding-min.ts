// Running minimum over the last `length` values (monotonic deque in a ring
// buffer): O(1) amortised per value, no allocation after construction.
// The ring's size is a power of two (index by mask) and pushBlock keeps the
// deque's state in locals for a whole block: the limiter runs it per frame.

export class SlidingMin {
  private readonly values: Float64Array;
  private readonly stamps: Float64Array; // the count at which each value came in
  private readonly mask: number;
  private head = 0;
  private size = 0;
  private count = 0;
  private readonly scratch = new Float64Array(1);

  constructor(readonly length: number) {
    let cap = 1;
    while (cap < length + 1) cap *= 2;
    this.values = new Float64Array(cap);
    this.stamps = new Float64Array(cap);
    this.mask = cap - 1;
  }

  reset(): void {
    this.head = 0;
    this.size = 0;
    this.count = 0;
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
    const values = this.values, stamps = this.stamps, mask = this.mask, length = this.length;
    let head = this.head, size = this.size, count = this.count;
    for (let i = 0; i < n; i++) {
      const v = input[i];
      // Drop larger values from the back: they can never be the minimum again.
      while (size > 0 && values[(head + size - 1) & mask] >= v) size--;
      const slot = (head + size) & mask;
      values[slot] = v;
      stamps[slot] = count;
      size++;
      // Drop the front when it falls out of the window.
      if (stamps[head] <= count - length) {
        head = (head + 1) & mask;
        size--;
      }
      count++;
      out[i] = values[head];
    }
    this.head = head;
    this.size = size;
    this.count = count;
  }
}

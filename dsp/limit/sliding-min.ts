// Running minimum over the last `length` values (monotonic deque in a ring
// buffer): O(1) amortised per value, no allocation after construction.

export class SlidingMin {
  private readonly values: Float64Array;
  private readonly stamps: Float64Array;
  private head = 0;
  private size = 0;
  private count = 0;

  constructor(readonly length: number) {
    this.values = new Float64Array(length + 1);
    this.stamps = new Float64Array(length + 1);
  }

  reset(): void {
    this.head = 0;
    this.size = 0;
    this.count = 0;
  }

  /** Adds a value and returns the minimum of the last `length` values. */
  push(v: number): number {
    const cap = this.values.length;
    const now = this.count++;
    // Drop larger values from the back: they can never be the minimum again.
    while (this.size > 0) {
      let back = this.head + this.size - 1;
      if (back >= cap) back -= cap;
      if (this.values[back] >= v) this.size--;
      else break;
    }
    let slot = this.head + this.size;
    if (slot >= cap) slot -= cap;
    this.values[slot] = v;
    this.stamps[slot] = now;
    this.size++;
    // Drop the front when it falls out of the window.
    if (this.stamps[this.head] <= now - this.length) {
      this.head = this.head + 1 === cap ? 0 : this.head + 1;
      this.size--;
    }
    return this.values[this.head];
  }
}

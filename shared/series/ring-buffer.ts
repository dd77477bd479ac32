/**
 * Fixed-capacity ring buffer of (x, y) points in two Float64Array columns: the live
 * history of one plotted channel. Pushing into a full buffer overwrites the oldest point,
 * so memory is fixed however long a run lasts.
 */
export interface SeriesColumns {
  x: Float64Array;
  y: Float64Array;
}

export class RingBuffer {
  readonly capacity: number;
  private readonly xs: Float64Array;
  private readonly ys: Float64Array;
  /** Index of the oldest point. */
  private head = 0;
  private count = 0;

  constructor(capacity: number) {
    this.capacity = Number.isInteger(capacity) && capacity > 0 ? capacity : 1;
    this.xs = new Float64Array(this.capacity);
    this.ys = new Float64Array(this.capacity);
  }

  get length(): number {
    return this.count;
  }

  push(x: number, y: number): void {
    let slot = this.head + this.count;
    if (slot >= this.capacity) slot -= this.capacity;
    this.xs[slot] = x;
    this.ys[slot] = y;
    if (this.count < this.capacity) this.count++;
    else if (++this.head === this.capacity) this.head = 0;
  }

  clear(): void {
    this.head = 0;
    this.count = 0;
  }

  private slot(i: number): number {
    const s = this.head + i;
    return s >= this.capacity ? s - this.capacity : s;
  }

  /** x of the i-th point, oldest first; NaN outside 0..length-1. */
  xAt(i: number): number {
    return i >= 0 && i < this.count ? this.xs[this.slot(i)] : NaN;
  }

  yAt(i: number): number {
    return i >= 0 && i < this.count ? this.ys[this.slot(i)] : NaN;
  }

  /** The points in order, oldest first, as fresh columns (two block copies at most). */
  toArrays(): SeriesColumns {
    return this.copyRange(0, this.count);
  }

  /**
   * Points with x >= minX, for a "last N minutes" view. Assumes x never decreases, as
   * for time; found by binary search.
   */
  sinceX(minX: number): SeriesColumns {
    let lo = 0;
    let hi = this.count;
    while (lo < hi) {
      const mid = (lo + hi) >>> 1;
      if (this.xs[this.slot(mid)] < minX) lo = mid + 1;
      else hi = mid;
    }
    return this.copyRange(lo, this.count);
  }

  private copyRange(from: number, to: number): SeriesColumns {
    const n = Math.max(0, to - from);
    const x = new Float64Array(n);
    const y = new Float64Array(n);
    if (n === 0) return { x, y };
    const start = this.slot(from);
    const firstPart = Math.min(n, this.capacity - start);
    x.set(this.xs.subarray(start, start + firstPart));
    y.set(this.ys.subarray(start, start + firstPart));
    if (firstPart < n) {
      x.set(this.xs.subarray(0, n - firstPart), firstPart);
      y.set(this.ys.subarray(0, n - firstPart), firstPart);
    }
    return { x, y };
  }
}

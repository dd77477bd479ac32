/**
 * A station's live series, kept in typed-array columns on the run's time axis, bounded to
 * LOCAL_SERIES_LIMIT samples (7 days at 1 Hz); past that the oldest half is dropped and a
 * recorded run's overview fills the older part of a long window.
 */
import type { PlotSample } from '../wire';
import { decimateWindow } from './decimate';
import type { PlotField, PlotPoint } from './trend-source';

export const LOCAL_SERIES_LIMIT = 7 * 24 * 3600;

const FIELDS: readonly PlotField[] = ['vbatV', 'ibatA', 'tempC', 'vinV', 'powerW'];

export class LocalSeries {
  private size = 0;
  private capacity = 0;
  private t = new Float64Array(0);
  private cols = {} as Record<PlotField, Float32Array>;
  /** Samples dropped from the front since the run started (the overview covers them). */
  dropped = 0;

  constructor(private readonly limit = LOCAL_SERIES_LIMIT) {
    this.allocate(1024);
  }

  get length(): number {
    return this.size;
  }
  get firstT(): number | null {
    return this.size ? this.t[0] : null;
  }
  get lastT(): number | null {
    return this.size ? this.t[this.size - 1] : null;
  }

  clear(): void {
    this.size = 0;
    this.dropped = 0;
  }

  /** Append samples in time order; a sample not after the last one is ignored (a repeat). */
  appendSamples(samples: readonly PlotSample[]): void {
    for (const s of samples) {
      const vin = s.vinV ?? null;
      const iin = s.iinA ?? null;
      this.append(
        s.t,
        s.vbatV ?? null,
        s.ibatA ?? null,
        s.tempC ?? null,
        vin,
        vin !== null && iin !== null ? vin * iin : null,
      );
    }
  }

  append(
    t: number,
    vbatV: number | null,
    ibatA: number | null,
    tempC: number | null,
    vinV: number | null,
    powerW: number | null,
  ): void {
    if (this.size > 0 && t <= this.t[this.size - 1]) return;
    if (this.size === this.capacity) this.makeRoom();
    const i = this.size++;
    this.t[i] = t;
    this.cols.vbatV[i] = vbatV ?? NaN;
    this.cols.ibatA[i] = ibatA ?? NaN;
    this.cols.tempC[i] = tempC ?? NaN;
    this.cols.vinV[i] = vinV ?? NaN;
    this.cols.powerW[i] = powerW ?? NaN;
  }

  /** How many samples lie after the one nearest to t (0 = t is at the newest sample). */
  samplesAfterNearest(t: number): number {
    if (this.size === 0) return 0;
    const i = this.indexAtOrAfter(t);
    const nearest = i >= this.size ? this.size - 1 : i > 0 && t - this.t[i - 1] < this.t[i] - t ? i - 1 : i;
    return this.size - 1 - nearest;
  }

  /** Does the local series hold everything of [x0, x1] (nothing dropped before x0)? */
  covers(x0: number): boolean {
    return this.dropped === 0 || (this.size > 0 && this.t[0] <= x0);
  }

  points(field: PlotField, x0: number, x1: number, maxPoints: number): PlotPoint[] {
    if (this.size === 0) return [];
    // One sample either side of the window, so lines run to the edges.
    const i0 = Math.max(0, this.indexAtOrAfter(x0) - 1);
    const i1 = Math.min(this.size, this.indexAtOrAfter(x1) + 1);
    return decimateWindow(this.t, this.cols[field], i0, i1, maxPoints);
  }

  private indexAtOrAfter(x: number): number {
    let lo = 0;
    let hi = this.size;
    while (lo < hi) {
      const mid = (lo + hi) >>> 1;
      if (this.t[mid] < x) lo = mid + 1;
      else hi = mid;
    }
    return lo;
  }

  private allocate(capacity: number): void {
    const t = new Float64Array(capacity);
    t.set(this.t.subarray(0, this.size));
    this.t = t;
    for (const f of FIELDS) {
      const col = new Float32Array(capacity);
      if (this.cols[f]) col.set(this.cols[f].subarray(0, this.size));
      this.cols[f] = col;
    }
    this.capacity = capacity;
  }

  private makeRoom(): void {
    if (this.capacity < this.limit) {
      this.allocate(Math.min(this.limit, this.capacity * 2));
      return;
    }
    const drop = Math.floor(this.size / 2);
    this.t.copyWithin(0, drop, this.size);
    for (const f of FIELDS) this.cols[f].copyWithin(0, drop, this.size);
    this.size -= drop;
    this.dropped += drop;
  }
}

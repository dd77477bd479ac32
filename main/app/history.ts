/**
 * The live history the service keeps per station, for a view that opens late and for
 * `stations.diagnose` when there is no recorder. Samples are thinned to at most one per
 * HISTORY_STEP_S of run time and kept in typed arrays that grow on demand, up to
 * HISTORY_MAX_SAMPLES (7 days at 1 Hz); past that the oldest half is dropped.
 */
import type { EngineEvent, TimedSample } from '@shared/engine/types';
import type { SampleBatch } from '@shared/ipc/pushes';
import type { FeedLine } from '../station/types';

/** Run-time spacing of the kept samples: 1 Hz is finer than any Bench view plot needs. */
export const HISTORY_STEP_S = 1;
/** 7 days at 1 Hz: a burn-in run as long as the Rack view is meant to watch. */
export const HISTORY_MAX_SAMPLES = 7 * 24 * 3600;
/** Recent lines kept for a Line feed that opens late. */
export const HISTORY_MAX_LINES = 500;
/** Events kept per station; an engine raises few, this is only a guard. */
export const HISTORY_MAX_EVENTS = 10_000;

const COLUMNS = ['vbatV', 'ibatA', 'tempC', 'vinV', 'iinA', 'ntcRaw'] as const;
type Column = (typeof COLUMNS)[number];

/** Boolean status pins: 1 asserted, 0 released, -1 not reported. */
const PINS = ['chg', 'flt'] as const;
type Pin = (typeof PINS)[number];

export class StationHistory {
  private size = 0;
  private capacity: number;
  private t: Float64Array;
  private rx: Float64Array;
  private cols: Record<Column, Float64Array>;
  private pins: Record<Pin, Int8Array>;
  private lastKeptT = -Infinity;
  private readonly events: EngineEvent[] = [];
  private readonly lines: FeedLine[] = [];

  constructor(
    private readonly maxSamples = HISTORY_MAX_SAMPLES,
    private readonly stepS = HISTORY_STEP_S,
  ) {
    this.capacity = Math.min(4096, maxSamples);
    this.t = new Float64Array(this.capacity);
    this.rx = new Float64Array(this.capacity);
    this.cols = Object.fromEntries(COLUMNS.map((c) => [c, new Float64Array(this.capacity)])) as Record<
      Column,
      Float64Array
    >;
    this.pins = Object.fromEntries(PINS.map((p) => [p, new Int8Array(this.capacity)])) as Record<
      Pin,
      Int8Array
    >;
  }

  get sampleCount(): number {
    return this.size;
  }

  /** Keep a sample when it is at least one step after the last kept one. */
  addSample(sample: TimedSample): void {
    if (sample.t < this.lastKeptT + this.stepS && this.size > 0) return;
    if (this.size === this.capacity) this.makeRoom();
    const i = this.size++;
    this.lastKeptT = sample.t;
    this.t[i] = sample.t;
    this.rx[i] = sample.rxS;
    for (const c of COLUMNS) this.cols[c][i] = sample[c] ?? NaN;
    for (const p of PINS) this.pins[p][i] = sample[p] === undefined ? -1 : sample[p] ? 1 : 0;
  }

  addEvent(event: EngineEvent): void {
    this.events.push(event);
    if (this.events.length > HISTORY_MAX_EVENTS)
      this.events.splice(0, this.events.length - HISTORY_MAX_EVENTS);
  }

  addLine(line: FeedLine): void {
    this.lines.push(line);
    if (this.lines.length > HISTORY_MAX_LINES) this.lines.splice(0, this.lines.length - HISTORY_MAX_LINES);
  }

  /** Kept samples from `fromT` on, in the same column form as the `samples` push. */
  batch(stationId: string, fromT = 0): SampleBatch {
    const start = this.firstIndexAtOrAfter(fromT);
    const out: SampleBatch = { stationId, tS: [], vbatV: [], ibatA: [], tempC: [], vinV: [], iinA: [] };
    for (let i = start; i < this.size; i++) {
      out.tS.push(this.t[i]);
      out.vbatV.push(orNull(this.cols.vbatV[i]));
      out.ibatA.push(orNull(this.cols.ibatA[i]));
      out.tempC.push(orNull(this.cols.tempC[i]));
      out.vinV.push(orNull(this.cols.vinV[i]));
      out.iinA.push(orNull(this.cols.iinA[i]));
    }
    return out;
  }

  /** Kept samples as TimedSample objects (for diagnosis without a recorder). */
  samples(fromT = 0): TimedSample[] {
    const out: TimedSample[] = [];
    for (let i = this.firstIndexAtOrAfter(fromT); i < this.size; i++) {
      const s: TimedSample = { t: this.t[i], rxS: this.rx[i], extra: {} };
      for (const c of COLUMNS) {
        const v = this.cols[c][i];
        if (!Number.isNaN(v)) s[c] = v;
      }
      for (const p of PINS) {
        const v = this.pins[p][i];
        if (v >= 0) s[p] = v === 1;
      }
      out.push(s);
    }
    return out;
  }

  eventsFrom(fromT = 0): EngineEvent[] {
    return this.events.filter((e) => e.t >= fromT);
  }

  recentLines(): FeedLine[] {
    return this.lines.slice();
  }

  /** Grow the arrays (doubling) up to the cap; at the cap, drop the oldest half. */
  private makeRoom(): void {
    if (this.capacity < this.maxSamples) {
      this.resize(Math.min(this.capacity * 2, this.maxSamples), 0);
      return;
    }
    const drop = Math.floor(this.size / 2);
    this.resize(this.capacity, drop);
  }

  private resize(capacity: number, drop: number): void {
    const keep = this.size - drop;
    const move = <T extends Float64Array | Int8Array>(from: T, make: (n: number) => T): T => {
      const to = make(capacity);
      to.set(from.subarray(drop, this.size));
      return to;
    };
    this.t = move(this.t, (n) => new Float64Array(n));
    this.rx = move(this.rx, (n) => new Float64Array(n));
    for (const c of COLUMNS) this.cols[c] = move(this.cols[c], (n) => new Float64Array(n));
    for (const p of PINS) this.pins[p] = move(this.pins[p], (n) => new Int8Array(n));
    this.capacity = capacity;
    this.size = keep;
  }

  private firstIndexAtOrAfter(fromT: number): number {
    let lo = 0;
    let hi = this.size;
    while (lo < hi) {
      const mid = (lo + hi) >>> 1;
      if (this.t[mid] < fromT) lo = mid + 1;
      else hi = mid;
    }
    return lo;
  }
}

function orNull(v: number): number | null {
  return Number.isNaN(v) ? null : v;
}

/**
 * Trend sources: a live station (its local series, with the recorded run's overview for
 * windows older than what the page holds) and a recorded run (overview buckets for long
 * windows, raw samples once zoomed in close).
 */
import type { EngineEvent } from '@shared/engine/types';
import type { Api } from '../api';
import type { StationModel } from '../store';
import { readBuckets, readSamples, type Bucket, type SeriesField } from '../wire';
import { LocalSeries } from './local-series';
import { phaseSpans, type PhaseSpan } from './phase-spans';
import type { PlotField, PlotPoint, TrendSource } from './trend-source';

const OVERVIEW_FIELDS: SeriesField[] = ['vbatV', 'ibatA', 'tempC', 'vinV', 'iinA'];
/** Buckets per overview request: about one per pixel column of a wide chart. */
export const OVERVIEW_BUCKETS = 1200;
/** Below this many samples in a window, fetch the samples themselves. */
const RAW_SAMPLES_LIMIT = 12_000;
const FETCH_DEBOUNCE_MS = 120;

/** Bucket min/max as an envelope: two points per bucket at its middle. */
export function bucketPoints(buckets: readonly Bucket[], field: PlotField): PlotPoint[] {
  const out: PlotPoint[] = [];
  for (const b of buckets) {
    const mid = (b.t0S + b.t1S) / 2;
    if (field === 'powerW') {
      const vin = b.values.vinV;
      const iin = b.values.iinA;
      if (vin && iin) out.push({ x: mid, y: vin.mean * iin.mean });
      continue;
    }
    const v = b.values[field];
    if (!v) continue;
    if (v.min === v.max) out.push({ x: mid, y: v.mean });
    else out.push({ x: mid, y: v.min }, { x: mid, y: v.max });
  }
  return out;
}

function clip(points: PlotPoint[], x0: number, x1: number): PlotPoint[] {
  let a = 0;
  while (a < points.length && points[a].x < x0) a++;
  let b = points.length;
  while (b > a && points[b - 1].x > x1) b--;
  return points.slice(Math.max(0, a - 1), Math.min(points.length, b + 1));
}

/** A fetched window of a recorded run: buckets or raw samples. */
interface WindowData {
  x0: number;
  x1: number;
  buckets: Bucket[] | null;
  samples: LocalSeries | null;
}

/** Fetches finer windows of a recorded run as the view zooms; keeps the last one. */
class RunWindowFetcher {
  current: WindowData | null = null;
  private timer = 0;
  private wanted: { x0: number; x1: number } | null = null;
  private inFlight = false;

  constructor(
    private readonly api: Api,
    private readonly runId: number,
    private readonly samplesPerS: () => number,
    private readonly onData: () => void,
  ) {}

  request(x0: number, x1: number, coarseSpanS: number): void {
    const c = this.current;
    const span = x1 - x0;
    // The whole-run overview is fine enough for windows near its own span.
    if (coarseSpanS > 0 && span > coarseSpanS * 0.5) {
      this.current = null;
      return;
    }
    if (c && x0 >= c.x0 && x1 <= c.x1 && span > (c.x1 - c.x0) * 0.4) return;
    this.wanted = { x0, x1 };
    window.clearTimeout(this.timer);
    this.timer = window.setTimeout(() => void this.fetch(), FETCH_DEBOUNCE_MS);
  }

  covers(x0: number, x1: number): boolean {
    const c = this.current;
    return !!c && c.x0 <= x0 && c.x1 >= x1;
  }

  private async fetch(): Promise<void> {
    if (this.inFlight || !this.wanted) return;
    const { x0, x1 } = this.wanted;
    this.wanted = null;
    this.inFlight = true;
    // Fetch a little more than the window so small pans need no new request.
    const pad = (x1 - x0) * 0.25;
    const fromT = Math.max(0, x0 - pad);
    const toT = x1 + pad;
    try {
      if ((toT - fromT) * this.samplesPerS() <= RAW_SAMPLES_LIMIT) {
        const series = new LocalSeries();
        series.appendSamples(
          readSamples(
            await this.api.request('runs.samples', {
              runId: this.runId,
              fromT,
              toT,
              limit: RAW_SAMPLES_LIMIT * 2,
            }),
          ),
        );
        this.current = { x0: fromT, x1: toT, buckets: null, samples: series };
      } else {
        const buckets = readBuckets(
          await this.api.request('runs.overview', {
            runId: this.runId,
            fields: OVERVIEW_FIELDS,
            fromT,
            toT,
            buckets: OVERVIEW_BUCKETS,
          }),
        );
        this.current = { x0: fromT, x1: toT, buckets, samples: null };
      }
      this.onData();
    } catch (err) {
      console.warn('taperline: could not fetch a window of the run', err);
    } finally {
      this.inFlight = false;
      if (this.wanted) void this.fetch();
    }
  }

  points(field: PlotField, x0: number, x1: number, maxPoints: number): PlotPoint[] | null {
    const c = this.current;
    if (!c || !this.covers(x0, x1)) return null;
    if (c.samples) return c.samples.points(field, x0, x1, maxPoints);
    return clip(bucketPoints(c.buckets ?? [], field), x0, x1);
  }
}

/** A live station: local series, and for windows older than it, the recorded run's overview. */
export class LiveStationSource implements TrendSource {
  onData?: () => void;
  private fetcher: RunWindowFetcher | null = null;
  private fetcherRunId: number | null = null;

  constructor(
    private readonly api: Api,
    readonly model: StationModel,
  ) {}

  extent(): { t0: number; t1: number } | null {
    const s = this.model.series;
    if (s.lastT === null) return null;
    return { t0: s.dropped > 0 ? 0 : (s.firstT ?? 0), t1: s.lastT };
  }

  spans(): readonly PhaseSpan[] {
    return phaseSpans(this.model.events, this.model.series.lastT ?? this.model.view.state.t);
  }

  events(): readonly EngineEvent[] {
    return this.model.events;
  }

  windowChanged(x0: number, x1: number): void {
    const s = this.model.series;
    const runId = this.model.view.runId;
    if (s.covers(x0) || runId === null) return;
    if (this.fetcherRunId !== runId) {
      const rate = () => {
        const first = s.firstT;
        const last = s.lastT;
        return first !== null && last !== null && last > first ? s.length / (last - first) : 1;
      };
      this.fetcher = new RunWindowFetcher(this.api, runId, rate, () => this.onData?.());
      this.fetcherRunId = runId;
    }
    this.fetcher!.request(x0, x1, 0);
  }

  points(field: PlotField, x0: number, x1: number, maxPoints: number): PlotPoint[] {
    const s = this.model.series;
    if (!s.covers(x0) && this.fetcher) {
      const older = this.fetcher.points(field, x0, Math.min(x1, s.firstT ?? x1), maxPoints);
      if (older)
        return [...older.filter((p) => p.x < (s.firstT ?? Infinity)), ...s.points(field, x0, x1, maxPoints)];
    }
    return s.points(field, x0, x1, maxPoints);
  }
}

/** A recorded run opened from the Runs view (or a diagnosis of one). */
export class RecordedRunSource implements TrendSource {
  onData?: () => void;
  private readonly fetcher: RunWindowFetcher;

  constructor(
    api: Api,
    readonly runId: number,
    private readonly durationS: number,
    private readonly lineCount: number,
    private readonly runEvents: readonly EngineEvent[],
    private readonly whole: Bucket[],
  ) {
    const rate = () => (this.durationS > 0 ? this.lineCount / this.durationS : 1);
    this.fetcher = new RunWindowFetcher(api, runId, rate, () => this.onData?.());
  }

  static async open(
    api: Api,
    runId: number,
    durationS: number,
    lineCount: number,
    events: readonly EngineEvent[],
  ): Promise<RecordedRunSource> {
    const toT = Math.max(durationS, 1);
    const whole = readBuckets(
      await api.request('runs.overview', {
        runId,
        fields: OVERVIEW_FIELDS,
        fromT: 0,
        toT,
        buckets: OVERVIEW_BUCKETS,
      }),
    );
    return new RecordedRunSource(api, runId, durationS, lineCount, events, whole);
  }

  extent(): { t0: number; t1: number } | null {
    const last = this.whole[this.whole.length - 1];
    return { t0: 0, t1: Math.max(this.durationS, last ? last.t1S : 0, 1) };
  }

  spans(): readonly PhaseSpan[] {
    return phaseSpans(this.runEvents, this.extent()!.t1);
  }

  events(): readonly EngineEvent[] {
    return this.runEvents;
  }

  windowChanged(x0: number, x1: number): void {
    this.fetcher.request(x0, x1, this.extent()!.t1);
  }

  points(field: PlotField, x0: number, x1: number, maxPoints: number): PlotPoint[] {
    return this.fetcher.points(field, x0, x1, maxPoints) ?? clip(bucketPoints(this.whole, field), x0, x1);
  }
}

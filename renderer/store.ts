/**
 * The renderer's model of what the backend reports: stations (snapshots), their live series,
 * engine events, recent lines and problems. It only stores and forwards; phases, alarms and
 * metrics come from the backend as they are.
 */
import type { AlarmEvent, EngineEvent } from '@shared/engine/types';
import type { PushEnvelope, SampleBatch } from '@shared/ipc/pushes';
import type { Api, ConnectionState } from './api';
import { Hub } from './events';
import { FeedRing } from './feed-ring';
import { LocalSeries } from './charts/local-series';
import { RingBuffer } from '@shared/series';

/** Samples of pack voltage a Rack tile's sparkline shows (the live tail only). */
export const SPARK_SAMPLES = 900;
import {
  readEvents,
  readFeedLines,
  readSamples,
  readStation,
  readStations,
  readChecks,
  type ChecksView,
  type FeedRow,
  type PlotSample,
  type StationView,
} from './wire';

export interface AlarmAckRef {
  code: string;
  t: number;
}

export interface Problem {
  stationId: string | null;
  message: string;
  level: 'warn' | 'critical';
  atMs: number;
}

export class StationModel {
  readonly series = new LocalSeries();
  /** Live tail of pack voltage for the Rack sparkline: fixed memory however long the run. */
  readonly spark = new RingBuffer(SPARK_SAMPLES);
  readonly events: EngineEvent[] = [];
  readonly feed = new FeedRing();
  acks: AlarmAckRef[] = [];
  /** The run's board checks as the backend last computed them (null: none, or no expect). */
  checks: ChecksView | null = null;
  /** Pushes that arrived before the history reply: applied after it, so time stays ordered. */
  private early: { batches: SampleBatch[]; events: EngineEvent[] } | null = { batches: [], events: [] };

  constructor(public view: StationView) {
    this.acks = readAcks(view);
  }

  get loaded(): boolean {
    return this.early === null;
  }

  isAcked(alarm: { code: string; t: number }): boolean {
    return this.acks.some((a) => a.code === alarm.code && a.t === alarm.t);
  }

  /** Every alarm raised in this run, newest first, with whether it is still active. */
  alarmHistory(): { alarm: AlarmEvent; active: boolean; clearedT: number | null; acked: boolean }[] {
    const out: { alarm: AlarmEvent; active: boolean; clearedT: number | null; acked: boolean }[] = [];
    const open = new Map<string, (typeof out)[number]>();
    for (const e of this.events) {
      if (e.type === 'alarm') {
        const row = { alarm: e, active: true, clearedT: null, acked: false };
        const prev = open.get(e.code);
        if (prev && prev.active && prev.alarm.t === e.t) continue;
        if (prev) prev.active = false;
        open.set(e.code, row);
        out.push(row);
      } else if (e.type === 'alarm-clear') {
        const row = open.get(e.code);
        if (row && row.active) {
          row.active = false;
          row.clearedT = e.t;
        }
      }
    }
    // The snapshot is the authority on what is active now (events may have been trimmed).
    const activeNow = new Set(this.view.state.activeAlarms.map((a) => `${a.code}@${a.t}`));
    for (const a of this.view.state.activeAlarms) {
      if (!out.some((r) => r.alarm.code === a.code && r.alarm.t === a.t))
        out.push({ alarm: a, active: true, clearedT: null, acked: false });
    }
    for (const row of out) {
      row.active = activeNow.has(`${row.alarm.code}@${row.alarm.t}`);
      row.acked = this.isAcked(row.alarm);
    }
    return out.sort((a, b) => b.alarm.t - a.alarm.t);
  }

  /** Active alarms nobody acknowledged yet. */
  unackedActive(): AlarmEvent[] {
    return this.view.state.activeAlarms.filter((a) => !this.isAcked(a));
  }

  /** Hold pushes again until a fresh history reply arrives (after a reconnect). */
  beginReload(view: StationView): void {
    this.view = view;
    this.acks = readAcks(view);
    this.early ??= { batches: [], events: [] };
  }

  applyHistory(raw: unknown): void {
    const obj = (raw ?? {}) as { samples?: unknown; events?: unknown; lines?: unknown; acks?: unknown };
    this.series.clear();
    this.spark.clear();
    this.events.length = 0;
    this.feed.clear();
    if (obj.samples) this.appendSamples(readSamples(obj.samples));
    if (obj.events) this.events.push(...readEvents(obj.events));
    if (obj.lines) this.feed.add(readFeedLines(obj.lines));
    if (Array.isArray(obj.acks)) this.acks = obj.acks.map(ackRef).filter((a): a is AlarmAckRef => a !== null);
    const early = this.early;
    this.early = null;
    for (const batch of early?.batches ?? []) this.addBatch(batch);
    for (const e of early?.events ?? []) this.addEvent(e);
  }

  addBatch(batch: SampleBatch): void {
    if (this.early) this.early.batches.push(batch);
    else this.appendSamples(readSamples(batch));
  }

  private appendSamples(samples: PlotSample[]): void {
    const lastT = this.series.lastT ?? -Infinity;
    this.series.appendSamples(samples);
    for (const s of samples)
      if (s.t > lastT && s.vbatV !== null && s.vbatV !== undefined) this.spark.push(s.t, s.vbatV);
  }

  addEvent(event: EngineEvent): void {
    if (this.early) {
      this.early.events.push(event);
      return;
    }
    const last = this.events[this.events.length - 1];
    if (
      last &&
      last.t === event.t &&
      last.type === event.type &&
      JSON.stringify(last) === JSON.stringify(event)
    )
      return;
    this.events.push(event);
  }

  /** A new run (new profile) starts a new time axis: drop the old run's series and events. */
  resetRun(): void {
    this.series.clear();
    this.spark.clear();
    this.events.length = 0;
  }
}

function ackRef(raw: unknown): AlarmAckRef | null {
  if (!raw || typeof raw !== 'object') return null;
  const { code, t } = raw as { code?: unknown; t?: unknown };
  return typeof code === 'string' && typeof t === 'number' ? { code, t } : null;
}

function readAcks(view: StationView): AlarmAckRef[] {
  const acks = (view as unknown as { acks?: unknown }).acks;
  return Array.isArray(acks) ? acks.map(ackRef).filter((a): a is AlarmAckRef => a !== null) : [];
}

type StoreEvents = {
  /** The set of stations or one snapshot changed. */
  stations: [];
  samples: [stationId: string];
  events: [stationId: string, event: EngineEvent | null];
  lines: [stationId: string, rows: FeedRow[]];
  problem: [Problem];
  connection: [ConnectionState];
  checks: [stationId: string];
};

export class Store extends Hub<StoreEvents> {
  readonly stations = new Map<string, StationModel>();
  readonly problems: Problem[] = [];
  connection: ConnectionState = 'connecting';

  constructor(readonly api: Api) {
    super();
  }

  start(): void {
    this.api.onPush((push) => this.handlePush(push));
    let wasOpen = false;
    this.api.onConnection((state) => {
      this.connection = state;
      this.emit('connection', state);
      if (state === 'open' && !wasOpen) void this.refresh();
      wasOpen = state === 'open';
    });
  }

  /** Fetch every station and its recent history (at start and after a reconnect). */
  async refresh(): Promise<void> {
    try {
      const views = readStations(await this.api.request('stations.list', {}));
      const seen = new Set(views.map((v) => v.id));
      for (const id of [...this.stations.keys()]) if (!seen.has(id)) this.stations.delete(id);
      for (const view of views) {
        // Keep the model a view may hold (a reconnect): refill it rather than replace it.
        const existing = this.stations.get(view.id);
        const model = existing ?? new StationModel(view);
        if (existing) existing.beginReload(view);
        this.stations.set(view.id, model);
        void this.loadHistory(model);
      }
      this.emit('stations');
    } catch (err) {
      this.addProblem({
        stationId: null,
        level: 'warn',
        message: `Could not list stations: ${String(err instanceof Error ? err.message : err)}`,
      });
    }
  }

  private async loadHistory(model: StationModel): Promise<void> {
    try {
      model.applyHistory(await this.api.request('stations.history', { stationId: model.view.id }));
    } catch (err) {
      model.applyHistory(null);
      this.addProblem({
        stationId: model.view.id,
        level: 'warn',
        message: `The recent history of ${model.view.id} could not be loaded (${err instanceof Error ? err.message : String(err)}); live data is shown from now on.`,
      });
    }
    this.emit('samples', model.view.id);
    this.emit('events', model.view.id, null);
    this.emit('lines', model.view.id, []);
    this.emit('stations');
  }

  addProblem(p: Omit<Problem, 'atMs'>): void {
    const problem = { ...p, atMs: Date.now() };
    this.problems.push(problem);
    if (this.problems.length > 50) this.problems.shift();
    this.emit('problem', problem);
  }

  sortedStations(): StationModel[] {
    return [...this.stations.values()].sort(
      (a, b) => troubleRank(b) - troubleRank(a) || a.view.id.localeCompare(b.view.id),
    );
  }

  private handlePush(push: PushEnvelope): void {
    switch (push.push) {
      case 'station': {
        let view: StationView;
        try {
          view = readStation(push.data);
        } catch {
          return;
        }
        const model = this.stations.get(view.id);
        if (!model) {
          const created = new StationModel(view);
          this.stations.set(view.id, created);
          void this.loadHistory(created);
        } else {
          if (model.view.runId !== view.runId && model.loaded) model.resetRun();
          model.view = view;
          model.acks = readAcks(view);
        }
        this.emit('stations');
        return;
      }
      case 'station-removed':
        this.stations.delete(push.data.stationId);
        this.emit('stations');
        return;
      case 'samples': {
        const model = this.stations.get(push.data.stationId);
        if (!model) return;
        model.addBatch(push.data);
        this.emit('samples', model.view.id);
        return;
      }
      case 'event': {
        const model = this.stations.get(push.data.stationId);
        if (!model) return;
        model.addEvent(push.data.event);
        this.emit('events', model.view.id, push.data.event);
        return;
      }
      case 'lines': {
        const model = this.stations.get(push.data.stationId);
        if (!model) return;
        let rows: FeedRow[];
        try {
          rows = readFeedLines(push.data.lines);
        } catch {
          return;
        }
        model.feed.add(rows);
        this.emit('lines', model.view.id, rows);
        return;
      }
      case 'problem':
        this.addProblem(push.data);
        return;
      case 'checks': {
        const model = this.stations.get(push.data.stationId);
        if (!model) return;
        try {
          model.checks = readChecks(push.data.report);
        } catch {
          return;
        }
        this.emit('checks', model.view.id);
        this.emit('stations');
        return;
      }
      case 'alarm-ack': {
        const model = this.stations.get(push.data.stationId);
        if (!model) return;
        if (!model.isAcked(push.data)) model.acks.push({ code: push.data.code, t: push.data.t });
        this.emit('stations');
        return;
      }
    }
  }
}

/** Higher = more urgent: unacknowledged critical, fault, critical, warn, lost source, fine. */
export function troubleRank(model: StationModel): number {
  const { state, source } = model.view;
  const alarms = state.activeAlarms;
  let rank = 0;
  if (alarms.some((a) => a.level === 'critical' && !model.isAcked(a))) rank = Math.max(rank, 60);
  if (state.phase === 'fault') rank = Math.max(rank, 50);
  if (alarms.some((a) => a.level === 'critical')) rank = Math.max(rank, 40);
  if (alarms.some((a) => a.level === 'warn')) rank = Math.max(rank, 20);
  if (source.state === 'lost' || source.state === 'closed') rank = Math.max(rank, 10);
  return rank;
}

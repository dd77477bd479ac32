/**
 * Turns the station manager's per-sample and per-line events into the pushes of
 * shared/ipc/pushes.ts: snapshots at most MAX_PUSHES_PER_SECOND per station, samples and
 * lines gathered into one batch per station per flush. Events, problems and acks are rare
 * and matter at once, so they are sent straight away by the service.
 */
import { MAX_PUSHES_PER_SECOND } from '@shared/ipc/channels';
import type { PushEnvelope, SampleBatch } from '@shared/ipc/pushes';
import type { TimedSample } from '@shared/engine/types';
import type { FeedLine } from '../station/types';

/** Flush period: one snapshot and one batch per station per period at most. */
export const FLUSH_PERIOD_MS = Math.ceil(1000 / MAX_PUSHES_PER_SECOND);

interface Pending {
  snapshotDue: boolean;
  samples: SampleBatch | null;
  lines: FeedLine[];
}

export class PushBatcher {
  private readonly pending = new Map<string, Pending>();
  private timer: NodeJS.Timeout | null = null;

  constructor(
    private readonly send: (push: PushEnvelope) => void,
    /** Current snapshot of a station (with the service's acks), or null once removed. */
    private readonly snapshotOf: (stationId: string) => unknown | null,
    private readonly periodMs = FLUSH_PERIOD_MS,
  ) {}

  markChanged(stationId: string): void {
    this.entry(stationId).snapshotDue = true;
    this.arm();
  }

  addSample(stationId: string, sample: TimedSample): void {
    const entry = this.entry(stationId);
    const b = (entry.samples ??= { stationId, tS: [], vbatV: [], ibatA: [], tempC: [], vinV: [], iinA: [] });
    b.tS.push(sample.t);
    b.vbatV.push(sample.vbatV ?? null);
    b.ibatA.push(sample.ibatA ?? null);
    b.tempC.push(sample.tempC ?? null);
    b.vinV.push(sample.vinV ?? null);
    b.iinA.push(sample.iinA ?? null);
    entry.snapshotDue = true;
    this.arm();
  }

  addLine(stationId: string, line: FeedLine): void {
    this.entry(stationId).lines.push(line);
    this.arm();
  }

  /** Send what is pending for one station now (before a removal or an event that depends on it). */
  flushStation(stationId: string): void {
    const entry = this.pending.get(stationId);
    if (!entry) return;
    this.pending.delete(stationId);
    if (entry.samples) this.send({ push: 'samples', data: entry.samples });
    if (entry.lines.length) this.send({ push: 'lines', data: { stationId, lines: entry.lines } });
    if (entry.snapshotDue) {
      const snapshot = this.snapshotOf(stationId);
      if (snapshot !== null) this.send({ push: 'station', data: snapshot });
    }
  }

  flushAll(): void {
    for (const stationId of [...this.pending.keys()]) this.flushStation(stationId);
  }

  /** Drop what is pending for a station that is gone. */
  forget(stationId: string): void {
    this.pending.delete(stationId);
  }

  close(): void {
    if (this.timer) clearTimeout(this.timer);
    this.timer = null;
    this.pending.clear();
  }

  private entry(stationId: string): Pending {
    let entry = this.pending.get(stationId);
    if (!entry) {
      entry = { snapshotDue: false, samples: null, lines: [] };
      this.pending.set(stationId, entry);
    }
    return entry;
  }

  private arm(): void {
    if (this.timer) return;
    this.timer = setTimeout(() => {
      this.timer = null;
      this.flushAll();
    }, this.periodMs);
    this.timer.unref?.();
  }
}

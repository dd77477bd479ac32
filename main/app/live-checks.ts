/**
 * Live checks of the stations whose profile carries `expect`: the engine's checks recomputed
 * from the station's kept history as the run goes on, so the Bench view's checks panel fills in
 * as each value becomes measurable. Work is bounded: a station is judged again only when it has
 * new samples, and no more often than every `minIntervalMs`, stretched to 50 times the time the
 * last judgement took (a week-long run's history costs more to read than a fresh one).
 */
import type { CheckReport } from '@shared/engine/checks';
import { runChecks } from '@shared/engine/checks';
import type { ResolvedProfile } from '@shared/chemistry/types';
import type { EngineEvent, TimedSample } from '@shared/engine/types';

export interface LiveChecksSource {
  profile: ResolvedProfile;
  runId: number | null;
  boardId: string | null;
  sampleCount: number;
  samples(): TimedSample[];
  events(): EngineEvent[];
}

export interface LiveChecksPush {
  stationId: string;
  runId: number | null;
  report: CheckReport;
}

interface Due {
  atMs: number;
  sampleCount: number;
  runId: number | null;
  last: CheckReport | null;
}

export class LiveChecks {
  private readonly due = new Map<string, Due>();

  constructor(
    private readonly nowMs: () => number,
    private readonly minIntervalMs = 5000,
  ) {}

  /** Judges the station now when it is due; returns the report to push, or null. */
  update(stationId: string, src: LiveChecksSource): LiveChecksPush | null {
    if (!src.profile.expect) return null;
    const prev = this.due.get(stationId);
    const now = this.nowMs();
    const fresh = !prev || prev.runId !== src.runId;
    if (!fresh && (now < prev.atMs || prev.sampleCount === src.sampleCount)) return null;
    const started = this.nowMs();
    const report = runChecks({
      profile: src.profile,
      samples: src.samples(),
      events: src.events(),
      board: src.boardId,
    });
    const tookMs = this.nowMs() - started;
    this.due.set(stationId, {
      atMs: now + Math.max(this.minIntervalMs, 50 * tookMs),
      sampleCount: src.sampleCount,
      runId: src.runId,
      last: report,
    });
    return { stationId, runId: src.runId, report };
  }

  /** The latest report of a station (a view that opens late), or null. */
  latest(stationId: string): CheckReport | null {
    return this.due.get(stationId)?.last ?? null;
  }

  forget(stationId: string): void {
    this.due.delete(stationId);
  }
}

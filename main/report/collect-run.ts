/**
 * Runs a line input (telemetry file, standard input or a recorded run) through the one
 * pipeline and keeps everything diagnose and the Run report need: samples, events, and the
 * engine's own summary and metrics at the end (the figures the dashboard showed).
 */
import type { ResolvedProfile } from '@shared/chemistry/types';
import type { EngineEvent, RunMetrics, RunSummary, TimedSample } from '@shared/engine/types';
import type { RejectReason } from '@shared/telemetry/types';
import { parseBoardLine, type BoardLine } from '@shared/engine/checks/board-line';
import type { LineInput } from '../sources/line-input';
import { ProfiledRun } from '@shared/engine/assumed-profile';

/** What a Run report is made of: the run's data and the engine's figures at its end. */
export interface EngineRun {
  profile: ResolvedProfile;
  samples: TimedSample[];
  events: EngineEvent[];
  summary: RunSummary;
  /** The engine's metrics after the last sample: source Wh, efficiency, internal resistance… */
  metrics: RunMetrics;
}

export interface CollectedRun extends EngineRun {
  rejectCounts: Partial<Record<RejectReason, number>>;
  /** Set when no profile was given or recorded and one was assumed from the first pack voltage. */
  assumedProfileNote: string | null;
  /** Board id, firmware version… from the firmware's `#` lines (`# board=GS-0042 fw=1.4.2`). */
  identity: BoardLine;
}

/** Feeds lines into the pipeline, collecting samples and events; `push` is the whole hot path. */
export class RunCollector {
  readonly samples: TimedSample[] = [];
  readonly events: EngineEvent[] = [];
  readonly identity: BoardLine = {};
  private readonly run: ProfiledRun;

  constructor(profile: ResolvedProfile | null) {
    this.run = new ProfiledRun(profile, (out) => {
      if (out.sample) this.samples.push(out.sample);
      for (const e of out.events) this.events.push(e);
      if (out.result.kind === 'firmware') Object.assign(this.identity, parseBoardLine(out.result.text));
    });
  }

  push(text: string, rxS: number, tooLong: boolean): void {
    this.run.push(text, rxS, tooLong);
  }

  finish(): CollectedRun {
    const pipeline = this.run.finish();
    return {
      profile: pipeline.profile,
      samples: this.samples,
      events: this.events,
      summary: pipeline.summary(),
      metrics: pipeline.state().metrics,
      rejectCounts: pipeline.rejectCounts(),
      assumedProfileNote: this.run.note,
      identity: this.identity,
    };
  }
}

/** Reads the whole input through the pipeline. */
export async function collectRun(input: LineInput, profile: ResolvedProfile | null): Promise<CollectedRun> {
  const collector = new RunCollector(profile ?? input.profile);
  await input.forEach((text, rxS, tooLong) => collector.push(text, rxS, tooLong));
  return collector.finish();
}

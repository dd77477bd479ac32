/**
 * Runs a line input (telemetry file, standard input or a recorded run) through the one
 * pipeline and keeps everything diagnose and the Run report need: samples, events, summary.
 */
import { parseProfile } from '../../shared/chemistry/profile';
import type { ResolvedProfile } from '../../shared/chemistry/types';
import { createPipeline, type Pipeline } from '../../shared/engine/pipeline';
import type { EngineEvent, RunSummary, TimedSample } from '../../shared/engine/types';
import { createLineParser } from '../../shared/telemetry/parse-line';
import type { RejectReason } from '../../shared/telemetry/types';
import type { LineInput } from '../cli/line-input';

export interface CollectedRun {
  profile: ResolvedProfile;
  samples: TimedSample[];
  events: EngineEvent[];
  summary: RunSummary;
  rejectCounts: Partial<Record<RejectReason, number>>;
  /** Set when no profile was given or recorded and one was assumed from the first pack voltage. */
  assumedProfileNote: string | null;
}

/** Feeds lines into a pipeline, collecting samples and events; `push` is the whole hot path. */
export class RunCollector {
  readonly samples: TimedSample[] = [];
  readonly events: EngineEvent[] = [];
  private pipeline: Pipeline | null;
  private pending: { text: string; rxS: number; tooLong: boolean }[] = [];
  private readonly probe = createLineParser({});
  private note: string | null = null;

  constructor(profile: ResolvedProfile | null) {
    this.pipeline = profile ? createPipeline(profile) : null;
  }

  push(text: string, rxS: number, tooLong: boolean): void {
    if (this.pipeline) {
      this.feed(this.pipeline, text, rxS, tooLong);
      return;
    }
    // No profile: hold lines until the first pack voltage says how many cells there are.
    this.pending.push({ text, rxS, tooLong });
    const probe = this.probe.parse(text, rxS, tooLong);
    if (probe.kind === 'sample' && probe.sample.vbatV !== undefined) this.start(probe.sample.vbatV);
  }

  finish(): CollectedRun {
    if (!this.pipeline) this.start(null);
    const pipeline = this.pipeline as Pipeline;
    return {
      profile: pipeline.profile,
      samples: this.samples,
      events: this.events,
      summary: pipeline.summary(),
      rejectCounts: pipeline.rejectCounts(),
      assumedProfileNote: this.note,
    };
  }

  private start(vbatV: number | null): void {
    const { profile, note } = assumedProfile(vbatV);
    this.note = note;
    const pipeline = createPipeline(profile);
    this.pipeline = pipeline;
    const pending = this.pending;
    this.pending = [];
    for (const line of pending) this.feed(pipeline, line.text, line.rxS, line.tooLong);
  }

  private feed(pipeline: Pipeline, text: string, rxS: number, tooLong: boolean): void {
    const out = pipeline.pushLine(text, rxS, tooLong);
    if (out.sample) this.samples.push(out.sample);
    for (const e of out.events) this.events.push(e);
  }
}

/** Reads the whole input through the pipeline. */
export async function collectRun(input: LineInput, profile: ResolvedProfile | null): Promise<CollectedRun> {
  const collector = new RunCollector(profile ?? input.profile);
  await input.forEach((text, rxS, tooLong) => collector.push(text, rxS, tooLong));
  return collector.finish();
}

/**
 * Without a profile, a Li-ion pack whose cell count fits the first pack voltage
 * (3.7 V nominal per cell, common practice): the same assumption replay makes.
 */
function assumedProfile(vbatV: number | null): { profile: ResolvedProfile; note: string } {
  const cells = vbatV === null ? 1 : Math.min(64, Math.max(1, Math.round(vbatV / 3.7)));
  const result = parseProfile({ name: `assumed ${cells}S li-ion`, chemistry: 'li-ion', cells });
  if (!result.ok) throw new Error(`assumed profile refused: ${result.error}`);
  const note =
    vbatV === null
      ? 'no --profile given and no pack voltage in the input; assumed a 1-cell Li-ion pack. Pass --profile for real limits.'
      : `no --profile given; assumed a ${cells}-cell Li-ion pack from the first pack voltage ${vbatV.toFixed(2)} V. ` +
        "Pass --profile for the pack's real limits.";
  return { profile: result.profile, note };
}

/**
 * A recorded run for its Run report: the station's recorded samples and events, and the engine's
 * figures at the end, got by feeding those samples (and the recorded interruptions) through the
 * run engine again. The live station's engine had the same samples and the same `gap()` calls,
 * so the report shows the figures its dashboard showed; the summary kept in the database lacks
 * the metrics (source Wh, efficiency, internal resistance).
 */
import type { ResolvedProfile } from '@shared/chemistry/types';
import { createRunEngine } from '@shared/engine/run-engine';
import type { GapEvent } from '@shared/engine/types';
import type { RunReader } from '../recorder/types';
import type { EngineRun } from './collect-run';

export function readRecordedRun(reader: RunReader, runId: number, profile: ResolvedProfile): EngineRun {
  const row = reader.getRun(runId);
  if (!row) throw new Error(`run ${runId} is not in the recording database`);
  const samples = reader.allSamples(runId);
  const events = reader.events(runId);
  const gaps = events.filter((e): e is GapEvent => e.type === 'gap').sort((a, b) => a.t - b.t);
  const engine = createRunEngine(profile);
  let g = 0;
  // Live, a gap is opened after the last sample before it and closed just before the next one.
  const applyGap = (gap: GapEvent) => {
    engine.gap(gap.t, null, gap.reason);
    if (gap.endT !== null) engine.gap(gap.t, gap.endT, gap.reason);
  };
  for (const sample of samples) {
    while (g < gaps.length && gaps[g].t < sample.t) applyGap(gaps[g++]);
    engine.push(sample);
  }
  while (g < gaps.length) applyGap(gaps[g++]);
  return {
    profile,
    samples,
    events,
    // Lines and rejects are counted by the parser, which the database already totalled.
    summary: { ...engine.summary(), lines: row.lines, rejected: row.rejected },
    metrics: engine.state().metrics,
  };
}

/**
 * The Run report's public surface: build the HTML from a run's data (or from a recorded run),
 * write it, print it to PDF.
 */
import { parseProfile } from '@shared/chemistry/profile';
import { diagnose } from '@shared/engine/diagnosis';
import type { EngineEvent, Phase, RunSummary } from '@shared/engine/types';
import type { RunReader } from '../recorder/types';
import { buildRunReportHtml, type RunReportInput } from './build-report';

export { renderReportPdf, findChromium, NoChromiumError, CHROMIUM_ARGS } from './pdf';
export { collectRun, RunCollector, type CollectedRun } from './collect-run';
export type { RunReportInput } from './build-report';

/**
 * One self-contained HTML file for a run. Given a RunReader and a run id instead, reads the
 * recorded run (its profile, samples and events) and resolves to the same HTML.
 */
export function buildRunReport(input: RunReportInput): string;
export function buildRunReport(reader: RunReader, runId: number): Promise<string>;
export function buildRunReport(input: RunReportInput | RunReader, runId?: number): string | Promise<string> {
  if (isRunReader(input)) {
    const reader = input;
    return Promise.resolve().then(() => buildRunReportHtml(recordedRunReportInput(reader, runId as number)));
  }
  return buildRunReportHtml(input);
}

function isRunReader(x: RunReportInput | RunReader): x is RunReader {
  return typeof (x as RunReader).profileOf === 'function';
}

/** The report input of a recorded run, with its diagnosis. Throws when the run or its profile is missing. */
export function recordedRunReportInput(reader: RunReader, runId: number, source?: string): RunReportInput {
  const row = reader.getRun(runId);
  if (!row) throw new Error(`run ${runId} is not in the recording database`);
  const parsed = parseProfile(reader.profileOf(runId));
  if (!parsed.ok) throw new Error(`the profile recorded with run ${runId} is not valid: ${parsed.error}`);
  const profile = parsed.profile;
  const samples = reader.allSamples(runId);
  const events = reader.events(runId);
  const summary: RunSummary = {
    durationS: row.durationS,
    ah: row.ah,
    wh: row.wh,
    phaseS: phaseSecondsOf(events, samples.length ? samples[samples.length - 1].t : row.durationS),
    lines: row.lines,
    rejected: row.rejected,
  };
  return {
    profile,
    samples,
    events,
    summary,
    diagnosis: diagnose({ profile, samples, events }),
    title: `Run ${runId}: ${row.stationLabel || row.stationId} · ${row.profileName}`,
    source: source ?? `recorded run ${runId} (station ${row.stationId})`,
  };
}

function phaseSecondsOf(events: readonly EngineEvent[], endT: number): Partial<Record<Phase, number>> {
  const out: Partial<Record<Phase, number>> = {};
  let current: { phase: Phase; t: number } | null = null;
  for (const e of events) {
    if (e.type !== 'phase') continue;
    if (current) out[current.phase] = (out[current.phase] ?? 0) + (e.t - current.t);
    current = { phase: e.phase, t: e.t };
  }
  if (current && endT > current.t) out[current.phase] = (out[current.phase] ?? 0) + (endT - current.t);
  return out;
}

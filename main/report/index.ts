/**
 * The Run report's public surface: build the HTML from a run's data (or from a recorded run),
 * write it, print it to PDF.
 */
import { parseProfile } from '@shared/chemistry/profile';
import { diagnose } from '@shared/engine/diagnosis';
import { runChecks } from '@shared/engine/checks';
import type { RunIdentity } from './checks-section';
import type { RunReader } from '../recorder/types';
import { buildRunReportHtml, type RunReportInput } from './build-report';
import type { EngineRun } from './collect-run';
import { readRecordedRun } from './recorded-run';

export { renderReportPdf, findChromium, NoChromiumError, CHROMIUM_ARGS } from './pdf';
export { collectRun, RunCollector, type CollectedRun, type EngineRun } from './collect-run';
export { readRecordedRun } from './recorded-run';
export type { RunReportInput } from './build-report';

/**
 * One self-contained HTML file for a run. Given a RunReader and a run id instead, reads the
 * recorded run (its profile, samples and events, with the engine's figures) and resolves to the same HTML.
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

/**
 * The report input of a run with the engine's figures, and its diagnosis: the one place both
 * report paths (a file on the command line, a recorded run in the app) turn a run into a report.
 */
export function reportInputOf(
  run: EngineRun,
  title: string,
  source: string,
  identity: RunIdentity = { board: null, operator: null, firmware: null },
): RunReportInput {
  const { profile, samples, events } = run;
  return {
    checks: profile.expect ? runChecks({ profile, samples, events, board: identity.board }) : null,
    boardUnderTest: identity,
    profile,
    samples,
    events,
    summary: run.summary,
    metrics: run.metrics,
    diagnosis: diagnose({ profile, samples, events }),
    title,
    source,
  };
}

/**
 * The report input of a recorded run, with the profile it was recorded with (see
 * `readRecordedRun`). Throws when the run or its profile is missing.
 */
export function recordedRunReportInput(reader: RunReader, runId: number, source?: string): RunReportInput {
  const row = reader.getRun(runId);
  if (!row) throw new Error(`run ${runId} is not in the recording database`);
  const parsed = parseProfile(reader.profileOf(runId));
  if (!parsed.ok) throw new Error(`the profile recorded with run ${runId} is not valid: ${parsed.error}`);
  return reportInputOf(
    readRecordedRun(reader, runId, parsed.profile),
    `Run ${runId}: ${row.stationLabel || row.stationId} · ${row.profileName}`,
    source ?? `recorded run ${runId} (station ${row.stationId})`,
    { board: row.boardId ?? null, operator: row.operator ?? null, firmware: row.firmware ?? null },
  );
}

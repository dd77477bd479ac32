/**
 * The pieces of other layers the service calls, gathered in one place so the service reads
 * as wiring: profile parsing, the pipeline (for previews), diagnosis, scenarios, ports, run
 * and batch reports. `realLibraries` binds the project's own implementations.
 */
import { parseProfile } from '@shared/chemistry/profile';
import type { ProfileResult, ResolvedProfile } from '@shared/chemistry/types';
import { createPipeline, type LineOutcome } from '@shared/engine/pipeline';
import { diagnose } from '@shared/engine/diagnosis';
import type { Diagnosis, DiagnosisInput } from '@shared/engine/diagnosis/types';
import { getScenario, listScenarios } from '../simulator/scenarios';
import { listPorts } from '../serial/list';
import { mkdtemp, readFile, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { buildRunReport, renderReportPdf } from '../report';
import { recordedBatchFile } from '../report/batch';
import type { RunReader } from '../recorder/types';

export interface AppLibraries {
  parseProfile(json: unknown): ProfileResult;
  /** Read lines through a fresh pipeline with this profile, as a live station would. */
  previewLines(profile: ResolvedProfile, lines: string[]): LineOutcome[];
  diagnose(input: DiagnosisInput): Diagnosis;
  listScenarios(): unknown[];
  listPorts(): Promise<unknown[]>;
  /** Self-contained HTML Run report of a recorded run. */
  runReportHtml(recorder: RunReader, runId: number): Promise<string>;
  /** The same report printed to PDF by headless Chromium (web mode; Electron prints itself). */
  runReportPdf(recorder: RunReader, runId: number): Promise<Buffer>;
  /** A burn-in batch's Batch report (HTML) or batch table (CSV), judged from the recording. */
  batchReportFile(recorder: RunReader, batchId: string, what: 'html' | 'csv'): string;
}

export const realLibraries: AppLibraries = {
  parseProfile,
  previewLines(profile, lines) {
    const pipeline = createPipeline(profile);
    const rxS = Date.now() / 1000;
    // Spread the lines one second apart so a time-less preview still has a time axis.
    return lines.map((text, i) => pipeline.pushLine(text, rxS + i));
  },
  diagnose,
  // Each scenario with its demo profile, so the Connect view can fill the form from it.
  listScenarios: () => listScenarios().map((s) => ({ ...s, profile: getScenario(s.name).profile })),
  listPorts: async () => [...(await listPorts())],
  runReportHtml: async (recorder, runId) => buildRunReport(recorder, runId),
  batchReportFile: recordedBatchFile,
  async runReportPdf(recorder, runId) {
    const dir = await mkdtemp(join(tmpdir(), 'taperline-report-'));
    try {
      const htmlPath = join(dir, 'report.html');
      const pdfPath = join(dir, 'report.pdf');
      await writeFile(htmlPath, await buildRunReport(recorder, runId), 'utf8');
      await renderReportPdf(htmlPath, pdfPath);
      return await readFile(pdfPath);
    } finally {
      await rm(dir, { recursive: true, force: true });
    }
  },
};

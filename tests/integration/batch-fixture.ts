/**
 * Test helper (not a test): a burn-in batch of simulated charger boards recorded into a real
 * SQLite file through the one pipeline, as stations would record it, with each run's board id,
 * firmware and batch id stored. Demo data: the boards and their parts are invented.
 */
import assert from 'node:assert/strict';
import { parseProfile } from '@shared/chemistry/profile';
import { parseBoardLine } from '@shared/engine/checks';
import { createPipeline } from '@shared/engine/pipeline';
import { openRecorder } from '../../main/recorder';
import { createTelemetryRun } from '../../main/simulator';
import type { BoardScenario } from '../../main/simulator/board-scenarios';

export function recordBatch(
  dbPath: string,
  boards: readonly BoardScenario[],
  batchId: string,
  intervalS: number,
): void {
  const recorder = openRecorder(dbPath);
  const startRxS = 1_780_000_000;
  boards.forEach((board, k) => {
    const parsed = parseProfile(board.profile);
    assert.ok(parsed.ok);
    const { runId } = recorder.startRun({
      stationId: `rack-${k + 1}`,
      stationLabel: `rack ${k + 1}`,
      profileName: parsed.profile.name,
      chemistry: parsed.profile.chemistry,
      profileJson: board.profile,
      startRxS,
    });
    recorder.setRunInfo(runId, { batchId, operator: 'demo operator' });
    const pipeline = createPipeline(parsed.profile);
    for (const line of createTelemetryRun(board, {
      shape: 'kv',
      sampleIntervalS: intervalS,
      seed: 11 + k,
    }).lines()) {
      const rxS = startRxS + line.simS;
      const out = pipeline.pushLine(line.text, rxS, false);
      recorder.addLine(runId, { rxS, text: line.text, kind: out.result.kind });
      if (out.result.kind === 'firmware') {
        const id = parseBoardLine(out.result.text);
        if (id?.board) recorder.setRunInfo(runId, { boardId: id.board, firmware: id.firmware ?? null });
      }
      if (out.sample) recorder.addSample(runId, out.sample);
      for (const e of out.events) recorder.addEvent(runId, e);
    }
    recorder.endRun(runId, startRxS + board.durationS, 'completed', pipeline.summary());
  });
  recorder.close();
}

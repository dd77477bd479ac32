/**
 * The board under test on a station fed through a real socat pty: the firmware's
 * `# board=… fw=…` line names the board and its firmware, a new board id starts a new run,
 * each run ends with its verdict stored, and starting a batch starts a run of the batch on
 * every station. The lines are the simulated demo board GS with its sense resistor 20 % low
 * (1.25 A against 1.0 A ±10 %: single-cell linear Li-ion charger ICs' datasheets).
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { SerialPort } from 'serialport';
import { openRecorder } from '../../main/recorder';
import { createTelemetryRun, getScenario } from '../../main/simulator';
import { createStationManager } from '../../main/station';
import { ptyPair, until } from './serial-pty';

test('board ids from the firmware start runs; verdicts are stored; a batch starts a run on every station', async () => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-board-'));
  const pair = ptyPair(join(dir, 'dev'), join(dir, 'host'));
  const recorder = openRecorder(join(dir, 'runs.sqlite'));
  const manager = createStationManager({ recorder });
  const scenario = getScenario('board-sense-low');
  // 50 min of cc at 5 s per line, without the simulator's own board line.
  const body = [...createTelemetryRun(scenario, { shape: 'kv', sampleIntervalS: 5, durationS: 3000 }).lines()]
    .map((l) => l.text)
    .filter((text) => !text.startsWith('# board='));
  const lines = ['# board=GS-0101 fw=1.4.2', ...body, '# board=GS-0102 fw=1.4.3', ...body];
  let received = 0;
  manager.on('line', () => received++);
  try {
    await pair.start();
    await manager.addStation({
      id: 'rack-1',
      source: { kind: 'serial', path: pair.host, baudRate: 115200 },
      profile: scenario.profile,
    });
    await until(() => manager.get('rack-1')?.source.state === 'open', 5000, 'open');
    const device = new SerialPort({ path: pair.device, baudRate: 115200, autoOpen: false });
    await new Promise<void>((res, rej) => device.open((e) => (e ? rej(e) : res())));
    for (let i = 0; i < lines.length; i += 200) {
      const chunk = lines.slice(i, i + 200).join('\n') + '\n';
      await new Promise<void>((res, rej) =>
        device.write(chunk, (e) => (e ? rej(e) : device.drain((d) => (d ? rej(d) : res())))),
      );
    }
    await until(() => received === lines.length, 30_000, `all ${lines.length} lines`);
    assert.deepEqual(manager.get('rack-1')?.board, {
      boardId: 'GS-0102',
      operator: null,
      firmware: '1.4.3',
      batchId: null,
    });
    await manager.startBatch('B9');
    await new Promise<void>((r) => device.close(() => r()));
    await manager.close();

    const runs = recorder.listRuns().sort((a, b) => a.id - b.id);
    assert.equal(runs.length, 3);
    const [first, second, third] = runs;
    assert.equal(first.boardId, 'GS-0101');
    assert.equal(first.firmware, '1.4.2');
    assert.equal(first.endReason, 'board-changed');
    assert.equal(first.verdict, 'fail', 'chargeCurrentA 1.25 A is outside 0.9..1.1 A');
    assert.equal(second.boardId, 'GS-0102');
    assert.equal(second.firmware, '1.4.3');
    assert.equal(second.endReason, 'batch-started');
    assert.equal(second.verdict, 'fail');
    assert.equal(third.batchId, 'B9');
    assert.equal(third.boardId, 'GS-0102');
    assert.equal(third.verdict, null, 'a run with no samples is not judged');
    // The board line starts its own run's raw record, so the run read again names its board.
    assert.equal([...recorder.lineIterator(second.id)][0].text, '# board=GS-0102 fw=1.4.3');
  } finally {
    await manager.close();
    recorder.close();
    await pair.stop();
    rmSync(dir, { recursive: true, force: true });
  }
});

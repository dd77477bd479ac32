/**
 * Stations fed by the built-in simulated charger: once as its own source, once with the
 * simulator's lines written into a socat pty and read back with the real serial binding.
 * Either way the recorded run must equal what the one pipeline gives for the same lines.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { SerialPort } from 'serialport';
import { parseProfile } from '@shared/chemistry/profile';
import { createPipeline } from '@shared/engine/pipeline';
import type { EngineEvent } from '@shared/engine/types';
import { openRecorder } from '../../main/recorder';
import { getScenario, simulatedLines } from '../../main/simulator';
import { createStationManager, StationConfigError } from '../../main/station';
import { ptyPair, until } from './serial-pty';

const SCENARIO = 'bench-liion-3s';

/** The reference: the same lines straight through the pipeline, no port, no database. */
function direct(lines: string[], profileJson: unknown): { events: EngineEvent[]; samples: number } {
  const parsed = parseProfile(profileJson);
  assert.ok(parsed.ok);
  const p = createPipeline(parsed.profile);
  const events: EngineEvent[] = [];
  let samples = 0;
  lines.forEach((text, i) => {
    const out = p.pushLine(text, 1_800_000_000 + i, false);
    if (out.sample) samples++;
    events.push(...out.events);
  });
  return { events, samples };
}

const phases = (events: EngineEvent[]) =>
  events.filter((e) => e.type === 'phase').map((e) => (e.type === 'phase' ? [e.t, e.phase] : null));

test('simulator lines through a pty pair record the same phases and samples as the pipeline alone', async () => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-simpty-'));
  const pair = ptyPair(join(dir, 'dev'), join(dir, 'host'));
  const recorder = openRecorder(join(dir, 'runs.sqlite'));
  const manager = createStationManager({ recorder });
  const { profile } = getScenario(SCENARIO);
  const lines = [...simulatedLines(SCENARIO, { shape: 'kv', sampleIntervalS: 5 })];
  let received = 0;
  manager.on('line', () => received++);
  try {
    await pair.start();
    const snap = await manager.addStation({
      id: 'sim-pty',
      label: 'garden sensor via pty',
      source: { kind: 'serial', path: pair.host, baudRate: 115200 },
      profile,
    });
    await until(() => manager.get('sim-pty')?.source.state === 'open', 5000, 'open');
    const device = new SerialPort({ path: pair.device, baudRate: 115200, autoOpen: false });
    await new Promise<void>((res, rej) => device.open((e) => (e ? rej(e) : res())));
    for (let i = 0; i < lines.length; i += 200) {
      const chunk = lines.slice(i, i + 200).join('\n') + '\n';
      await new Promise<void>((res, rej) =>
        device.write(chunk, (e) => (e ? rej(e) : device.drain((d) => (d ? rej(d) : res())))),
      );
    }
    await until(() => received === lines.length, 30_000, `all ${lines.length} lines`);
    await new Promise<void>((r) => device.close(() => r()));
    await manager.close();

    const runId = snap.runId as number;
    const want = direct(lines, profile);
    // Device time `t` is on every sample line, so the run's time axis does not depend on the port's timing.
    assert.deepEqual(phases(recorder.events(runId)), phases(want.events));
    assert.ok(phases(want.events).length >= 2, 'the scenario goes through several phases');
    assert.equal(recorder.samples(runId, 0, 1e9).length, want.samples);
    assert.deepEqual(
      [...recorder.lineIterator(runId)].map((l) => l.text),
      lines,
    );
    const run = recorder.getRun(runId);
    assert.equal(run?.endReason, 'stopped');
    assert.equal(run?.lines, lines.length);
  } finally {
    await manager.close();
    recorder.close();
    await pair.stop();
    rmSync(dir, { recursive: true, force: true });
  }
});

test('the simulator as a station source records a run with samples and events', async () => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-sim-'));
  const recorder = openRecorder(join(dir, 'runs.sqlite'));
  const manager = createStationManager({ recorder });
  let samples = 0;
  manager.on('sample', () => samples++);
  try {
    await assert.rejects(
      manager.addStation({
        id: 'nope',
        source: { kind: 'simulator', scenario: 'no-such-scenario' },
        profile: { chemistry: 'li-ion', cells: 1 },
      }),
      (err: unknown) => err instanceof StationConfigError && /cannot use its source/.test(err.message),
    );
    const { profile } = getScenario(SCENARIO);
    const snap = await manager.addStation({
      id: 'sim-1',
      source: { kind: 'simulator', scenario: SCENARIO, speedup: 600, sampleIntervalS: 5 },
      profile,
    });
    assert.equal(snap.sourceLabel, `simulator:${SCENARIO}`);
    await until(() => samples >= 20, 20_000, 'twenty simulated samples');
    await manager.close();
    const runId = snap.runId as number;
    assert.ok(recorder.samples(runId, 0, 1e9).length >= 20);
    assert.ok(recorder.events(runId).some((e) => e.type === 'phase'));
    assert.equal(recorder.getRun(runId)?.endReason, 'stopped');
  } finally {
    await manager.close();
    recorder.close();
    rmSync(dir, { recursive: true, force: true });
  }
});

/**
 * The simulated charger as a live LineSource: lines in order on a compressed clock, the
 * same lines as the fast generator, answers to commands, and a clean stop.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { createSimulatorSource, simulatedLines } from '../../main/simulator';
import type { SourceLine, SourceStatus } from '../../main/sources/types';

function collect(source: ReturnType<typeof createSimulatorSource>) {
  const lines: SourceLine[] = [];
  const statuses: SourceStatus[] = [];
  source.on('line', (l) => lines.push(l));
  source.on('status', (s) => statuses.push(s));
  return { lines, statuses };
}

const waitFor = async (cond: () => boolean, what: string, timeoutMs = 10000): Promise<void> => {
  const started = Date.now();
  while (!cond()) {
    if (Date.now() - started > timeoutMs) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 10));
  }
};

test('plays the same lines as the generator, then reports the end', async () => {
  const opts = { shape: 'kv' as const, sampleIntervalS: 5, durationS: 300, seed: 3 };
  const expected = [...simulatedLines('bench-liion-3s', opts)];
  // 300 simulated seconds at 3000x: a tenth of a second of wall time.
  const source = createSimulatorSource('bench-liion-3s', { ...opts, speedup: 3000 });
  assert.equal(source.label, 'simulator:bench-liion-3s');
  const { lines, statuses } = collect(source);
  source.start();
  await waitFor(() => statuses.some((s) => s.state === 'closed'), 'the end of the scenario');
  assert.deepEqual(
    lines.map((l) => l.text),
    expected,
  );
  assert.deepEqual(
    statuses.map((s) => s.state),
    ['connecting', 'open', 'closed'],
  );
  for (let i = 1; i < lines.length; i++)
    assert.ok(lines[i].rxS >= lines[i - 1].rxS, 'receive times never go back');
  assert.ok(lines.every((l) => l.tooLong === false));
});

test('answers status?, version? and unknown commands with # lines, and records what was sent', async () => {
  const source = createSimulatorSource('solar-lifepo4-4s', {
    shape: 'json',
    sampleIntervalS: 10,
    speedup: 600,
  });
  const { lines } = collect(source);
  const sent: string[] = [];
  source.on('sent', (s) => sent.push(s.text));
  source.start();
  await waitFor(() => lines.length >= 4, 'the first samples');
  await source.send?.('status?', '\n');
  await source.send?.('version?', '\r\n');
  await source.send?.('calibrate now', '\n');
  await waitFor(() => lines.filter((l) => l.text.startsWith('# ')).length >= 6, 'the replies');
  const replies = lines.map((l) => l.text).filter((t) => /^# (status|charger fw|unknown)/.test(t));
  assert.equal(replies.length, 3);
  assert.match(
    replies[0],
    /^# status stage (cc|sleep|precondition) at \d+ s, [\d.]+ V [\d.]+ A, fault none$/,
  );
  assert.match(replies[1], /^# charger fw 0\.3 /);
  assert.equal(replies[2], '# unknown command: calibrate now');
  assert.deepEqual(sent, ['status?\n', 'version?\r\n', 'calibrate now\n']);
  await source.stop();
});

test('stop() ends the stream: no line after it, and sending is refused', async () => {
  const source = createSimulatorSource('weak-panel', { shape: 'csv', sampleIntervalS: 60, speedup: 6000 });
  const { lines, statuses } = collect(source);
  source.start();
  await waitFor(() => lines.length >= 10, 'some lines');
  await source.stop();
  const count = lines.length;
  await new Promise((r) => setTimeout(r, 100));
  assert.equal(lines.length, count);
  assert.equal(statuses[statuses.length - 1].state, 'closed');
  await assert.rejects(() => source.send!('status?', '\n'), /not running/);
  // Stopping twice is harmless.
  await source.stop();
});

test('bad options are refused at creation', () => {
  assert.throws(
    () => createSimulatorSource('nope', { shape: 'kv', sampleIntervalS: 1, speedup: 10 }),
    /unknown scenario/,
  );
  assert.throws(
    () => createSimulatorSource('nimh-4s', { shape: 'kv', sampleIntervalS: 1, speedup: 0 }),
    /speedup/,
  );
});

/**
 * The API service's own parts: the live history ring, the ack book, the push batcher and
 * the request dispatch, with the real station manager, pipeline and profile parser.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import type { TimedSample } from '@shared/engine/types';
import type { PushEnvelope, SampleBatch } from '@shared/ipc/pushes';
import { validateRequest } from '@shared/ipc/requests';
import { AckBook } from '../../main/app/acks';
import { answerRequest, answerText } from '../../main/app/dispatch';
import { StationHistory } from '../../main/app/history';
import { PushBatcher } from '../../main/app/push-batcher';
import { createAppService } from '../../main/app/service';
import { createStationManager } from '../../main/station';

const sample = (t: number, vbatV = 8.0): TimedSample => ({
  t,
  rxS: 1_800_000_000 + t,
  vbatV,
  ibatA: 0.5,
  chg: true,
  extra: {},
});

test('the history keeps one sample per second of run time, in column form', () => {
  const history = new StationHistory();
  for (let i = 0; i < 50; i++) history.addSample(sample(i * 0.25)); // 4 Hz for 12.5 s
  assert.equal(history.sampleCount, 13); // t = 0, 1, ..., 12
  const batch = history.batch('s1', 10);
  assert.deepEqual(batch.tS, [10, 11, 12]);
  assert.deepEqual(batch.vbatV, [8, 8, 8]);
  assert.deepEqual(batch.tempC, [null, null, null]);
  const back = history.samples(12);
  assert.deepEqual(back, [{ t: 12, rxS: 1_800_000_012, vbatV: 8, ibatA: 0.5, chg: true, extra: {} }]);
});

test('the history grows past its first arrays and drops the oldest half at its cap', () => {
  const grown = new StationHistory(100_000, 1);
  for (let i = 0; i < 10_000; i++) grown.addSample(sample(i, i));
  assert.equal(grown.sampleCount, 10_000);
  assert.equal(grown.batch('s', 9_999).vbatV[0], 9_999);
  const capped = new StationHistory(1000, 1);
  for (let i = 0; i < 1001; i++) capped.addSample(sample(i));
  assert.equal(capped.sampleCount, 501);
  assert.equal(capped.batch('s').tS[0], 500);
  assert.equal(capped.batch('s').tS.at(-1), 1000);
});

test('an ack belongs to one raising of an alarm', () => {
  const book = new AckBook();
  const alarm = {
    type: 'alarm' as const,
    t: 30,
    code: 'overtemp' as const,
    level: 'critical' as const,
    message: 'hot',
  };
  book.ack('s1', 'overtemp', 30);
  assert.equal(book.isAcked('s1', alarm), true);
  book.noteEvent('s1', { type: 'phase', t: 31, phase: 'fault' });
  assert.equal(book.isAcked('s1', alarm), true);
  book.noteEvent('s1', { type: 'alarm-clear', t: 40, code: 'overtemp' });
  assert.equal(book.isAcked('s1', alarm), false);
  book.ack('s1', 'overtemp', 30);
  book.noteEvent('s1', { ...alarm, t: 90 });
  assert.deepEqual(book.list('s1'), []);
});

test('the batcher gathers samples and lines and sends one snapshot per period', async () => {
  const sent: PushEnvelope[] = [];
  const batcher = new PushBatcher(
    (p) => sent.push(p),
    (id) => ({ id }),
    30,
  );
  for (let i = 0; i < 5; i++) batcher.addSample('s1', sample(i));
  batcher.addLine('s1', { rxS: 1, text: '# hello', kind: 'firmware' });
  batcher.markChanged('s2');
  assert.equal(sent.length, 0);
  await new Promise((r) => setTimeout(r, 80));
  assert.deepEqual(
    sent.map((p) => p.push),
    ['samples', 'lines', 'station', 'station'],
  );
  assert.deepEqual((sent[0].data as SampleBatch).tS, [0, 1, 2, 3, 4]);
  batcher.addSample('s1', sample(5));
  batcher.forget('s1');
  await new Promise((r) => setTimeout(r, 80));
  assert.equal(sent.length, 4);
  batcher.close();
});

test('dispatch answers with the request id and names the bad field', async () => {
  const stations = createStationManager();
  const service = createAppService({ stations, recorder: null });
  try {
    assert.deepEqual(await answerRequest(service, { id: 1, method: 'stations.list', params: {} }), {
      id: 1,
      ok: true,
      result: [],
    });
    const noRuns = await answerRequest(service, { id: 2, method: 'runs.list', params: {} });
    assert.match(!noRuns.ok ? noRuns.error : '', /recording is off/);
    const bad = await answerText(
      service,
      JSON.stringify({
        id: 3,
        method: 'runs.overview',
        params: { runId: 1, fields: ['volts'], fromT: 0, toT: 1, buckets: 10 },
      }),
    );
    assert.equal(bad.id, 3);
    assert.match(!bad.ok ? bad.error : '', /runs\.overview: fields\.0/);
    const idEcho = await answerRequest(service, { id: 4, method: 'stations.list', params: {}, extra: 1 });
    assert.equal(idEcho.id, 4);
    assert.match(!idEcho.ok ? idEcho.error : '', /bad request envelope/);
    // handle() validates too, for callers that skip validateRequest.
    await assert.rejects(service.handle('stations.remove', { stationId: '../etc' }), /stationId/);
  } finally {
    service.close();
    await stations.close();
  }
});

test('profile.preview reads draft lines through the real pipeline', async () => {
  const stations = createStationManager();
  const service = createAppService({ stations, recorder: null });
  try {
    const result = (await service.handle('profile.preview', {
      profile: { chemistry: 'li-ion', cells: 2, fields: { vbat: { key: 'vb', unit: 'mV' } } },
      lines: ['t=1 vb=8214 ibat=598mA temp=27.1', 'garbage ###'],
    })) as { profile: { ok: boolean }; lines: { result: { kind: string }; sample: TimedSample | null }[] };
    assert.equal(result.profile.ok, true);
    // docs/telemetry.md: unit suffixes and the profile's unit for an unsuffixed key.
    assert.equal(result.lines[0].sample?.vbatV, 8.214);
    assert.equal(result.lines[0].sample?.ibatA, 0.598);
    assert.equal(result.lines[1].result.kind, 'rejected');
    const refused = (await service.handle('profile.preview', {
      profile: { chemistry: 'unobtainium', cells: 1 },
      lines: [],
    })) as {
      profile: { ok: boolean; key: string };
    };
    assert.equal(refused.profile.ok, false);
    assert.equal(refused.profile.key, 'chemistry');
    const scenarios = (await service.handle('scenarios.list', {})) as { name: string }[];
    assert.ok(scenarios.some((s) => s.name === 'bench-liion-3s'));
  } finally {
    service.close();
    await stations.close();
  }
});

test('runs.overview takes each of the five series at most once', async () => {
  const overview = (fields: string[]) => ({
    id: 7,
    method: 'runs.overview',
    params: { runId: 1, fields, fromT: 0, toT: 60, buckets: 10 },
  });
  const repeated = validateRequest(overview(['vbatV', 'ibatA', 'vbatV', 'vbatV']));
  assert.equal(repeated.ok, true);
  assert.deepEqual((repeated as { params: { fields: string[] } }).params.fields, ['vbatV', 'ibatA']);
  const all = ['vbatV', 'ibatA', 'tempC', 'vinV', 'iinA'];
  assert.equal(validateRequest(overview(all)).ok, true);
  const tooMany = validateRequest(overview([...all, 'vbatV']));
  assert.match(!tooMany.ok ? tooMany.error : '', /runs\.overview: fields/);
  // The service validates again; a long list of one field is refused there too.
  const stations = createStationManager();
  const service = createAppService({ stations, recorder: null });
  try {
    await assert.rejects(
      service.handle('runs.overview', overview(Array(1000).fill('vbatV')).params),
      /runs\.overview: fields/,
    );
  } finally {
    service.close();
    await stations.close();
  }
});

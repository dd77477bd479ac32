/**
 * The live sweep through the API service, with the real station manager and the simulated
 * sweep-trimmer station: `stations.sweep` answers with the engine's report and keeps pushing
 * `sweep` while watched; `stations.setInputSetpoint` writes the found voltage into the
 * station's profile; bad requests are refused by the request schemas with the field named.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import type { SweepPayload } from '@shared/ipc/payloads';
import type { PushEnvelope } from '@shared/ipc/pushes';
import { validateRequest } from '@shared/ipc/requests';
import { createAppService } from '../../main/app/service';
import { getScenario } from '../../main/simulator';
import { createStationManager } from '../../main/station';

const until = async (cond: () => boolean, timeoutMs: number, what: string): Promise<void> => {
  const end = Date.now() + timeoutMs;
  while (!cond()) {
    if (Date.now() > end) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 50));
  }
};

test('stations.sweep pushes the live sweep; stations.setInputSetpoint writes the found voltage', async (t) => {
  const stations = createStationManager({ recorder: null });
  const service = createAppService({ stations, recorder: null });
  t.after(async () => {
    service.close();
    await stations.close();
  });
  const pushes: SweepPayload[] = [];
  service.onPush((p: PushEnvelope) => {
    if (p.push === 'sweep') pushes.push(p.data as SweepPayload);
  });
  const { profile } = getScenario('sweep-trimmer');
  await stations.addStation({
    id: 'solar-1',
    source: { kind: 'simulator', scenario: 'sweep-trimmer', speedup: 600, sampleIntervalS: 1 },
    profile,
  });

  const first = (await service.handle('stations.sweep', {
    stationId: 'solar-1',
    watch: true,
  })) as SweepPayload;
  assert.equal(first.stationId, 'solar-1');
  assert.equal(first.report.setpointV, 18.4);

  // 1800 simulated seconds at 600x: three seconds; then the last analysis sees every point.
  await until(() => stations.get('solar-1')?.source.state === 'closed', 30_000, 'the scenario to end');
  await until(
    () => pushes.some((p) => p.points.tS.length === 1800 && p.report.ok && p.report.window !== null),
    20_000,
    'a report over every point',
  );
  const last = pushes.filter((p) => p.points.tS.length === 1800 && p.report.ok).at(-1)!;
  assert.ok(Math.abs(last.report.mppV! - 16.64) < 0.17, `mppV ${last.report.mppV}`);
  assert.match(last.report.advice ?? '', /^turn the set point down about 1\.\d V/);
  assert.equal(last.points.vV.length, 1800);
  assert.ok(Math.abs(last.points.pW[500] - last.points.vV[500] * 0.966) < 1, 'power is vin times iin');

  // Stop watching: no more pushes for the station.
  assert.equal(await service.handle('stations.sweep', { stationId: 'solar-1', watch: false }), null);

  const snap = (await service.handle('stations.setInputSetpoint', {
    stationId: 'solar-1',
    inputSetpointV: last.report.mppV!,
  })) as { profile: { inputSetpointV: number; panelTempCoeffPctPerC: number; name: string } };
  assert.equal(snap.profile.inputSetpointV, Math.round(last.report.mppV! * 100) / 100);
  // Every other key of the written profile is kept.
  assert.equal(snap.profile.panelTempCoeffPctPerC, -0.36);
  assert.equal(snap.profile.name, profile.name);

  await assert.rejects(
    service.handle('stations.sweep', { stationId: 'nobody', watch: true }),
    /no station "nobody"/,
  );
});

test('sweep requests are validated: the bad field is named', () => {
  const bad = validateRequest({
    id: 1,
    method: 'stations.setInputSetpoint',
    params: { stationId: 's', inputSetpointV: -3 },
  });
  assert.equal(bad.ok, false);
  assert.match(!bad.ok ? bad.error : '', /inputSetpointV/);
  const extra = validateRequest({
    id: 2,
    method: 'stations.sweep',
    params: { stationId: 's', watch: true, all: 1 },
  });
  assert.equal(extra.ok, false);
  const good = validateRequest({ id: 3, method: 'stations.sweep', params: { stationId: 's', watch: false } });
  assert.equal(good.ok, true);
});

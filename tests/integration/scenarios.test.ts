/**
 * Every simulated scenario read through the real pipeline (parser, time base, run engine):
 * the phases and alarms Taperline reports must be the ones the physics produced. The
 * scenarios are invented demo hardware; their expected outcomes are part of their
 * definitions (main/simulator/scenarios.ts).
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { getScenario, SCENARIO_NAMES, createTelemetryRun } from '../../main/simulator';
import { parseProfile } from '@shared/chemistry/profile';
import { createPipeline } from '@shared/engine/pipeline';
import type { AlarmEvent, EngineEvent, Phase, RunState, TimedSample } from '@shared/engine/types';
import type { LineShape } from '@shared/telemetry/format-line';

/** Receive clock of the synthetic run: device time on top of a fixed epoch. */
const EPOCH_S = 1_780_000_000;

interface Outcome {
  phases: Phase[];
  alarms: AlarmEvent[];
  samples: TimedSample[];
  firmware: string[];
  state: RunState;
  rejected: number;
}

function runScenario(name: string, sampleIntervalS: number, shape: LineShape = 'kv'): Outcome {
  const scenario = getScenario(name);
  const parsed = parseProfile(scenario.profile);
  assert.ok(parsed.ok, `${name}: ${parsed.ok ? '' : parsed.error}`);
  const pipeline = createPipeline(parsed.profile);
  const run = createTelemetryRun(scenario, { shape, sampleIntervalS, seed: 11 });
  const events: EngineEvent[] = [];
  const samples: TimedSample[] = [];
  const firmware: string[] = [];
  for (const line of run.lines()) {
    const out = pipeline.pushLine(line.text, EPOCH_S + line.simS);
    events.push(...out.events);
    if (out.sample) samples.push(out.sample);
    if (out.result.kind === 'firmware') firmware.push(line.text);
  }
  return {
    phases: events.filter((e) => e.type === 'phase').map((e) => e.phase),
    alarms: events.filter((e): e is AlarmEvent => e.type === 'alarm'),
    samples,
    firmware,
    state: pipeline.state(),
    rejected: pipeline.summary().rejected,
  };
}

/** `seq` appears in `phases` in this order (other phases may come between). */
function inOrder(phases: Phase[], seq: Phase[]): boolean {
  let i = 0;
  for (const p of phases) if (p === seq[i]) i++;
  return i === seq.length;
}

function describeRun(o: Outcome): string {
  return `phases ${o.phases.join(' -> ')}; alarms ${o.alarms.map((a) => `${a.code}/${a.level}@${a.t}`).join(', ') || 'none'}`;
}

/** The checks every scenario's definition asks for. */
function checkExpected(name: string, o: Outcome): void {
  const e = getScenario(name).expected;
  const what = describeRun(o);
  assert.equal(o.rejected, 0, `${name}: every simulated line parses`);
  assert.ok(inOrder(o.phases, e.phases), `${name}: expected ${e.phases.join(' -> ')}; got ${what}`);
  for (const code of e.alarms)
    assert.ok(
      o.alarms.some((a) => a.code === code),
      `${name}: expected alarm ${code}; got ${what}`,
    );
  if (e.noCritical)
    assert.ok(
      !o.alarms.some((a) => a.level === 'critical'),
      `${name}: no critical alarm expected; got ${what}`,
    );
  assert.equal(
    o.phases.includes('fault'),
    e.fault,
    `${name}: fault ${e.fault ? 'expected' : 'not expected'}; got ${what}`,
  );
}

test('bench-liion-3s: cc -> cv -> done, no critical alarm, 85-95 % efficiency', () => {
  const o = runScenario('bench-liion-3s', 5);
  checkExpected('bench-liion-3s', o);
  assert.equal(o.state.phase, 'done');
  const eff = o.state.metrics.efficiency;
  assert.ok(eff !== null && eff > 0.85 && eff < 0.95, `efficiency ${eff}`);
  // From 30 % of 2.5 Ah to about full: some 1.7 Ah delivered (coulomb counting, Ah = (1/3600)·∫I dt: MathWorks "SOC Estimator (Coulomb Counting)").
  assert.ok(o.state.metrics.ah > 1.6 && o.state.metrics.ah < 1.85, `${o.state.metrics.ah} Ah`);
});

test('damaged-cell: precondition, then precondition-timeout and fault', () => {
  const o = runScenario('damaged-cell', 5);
  checkExpected('damaged-cell', o);
  assert.ok(!o.phases.includes('cc'), 'a pack with a shorted cell never leaves precondition');
});

test('overheating: overtemp while charging, then the charger cuts off with its fault output', () => {
  const o = runScenario('overheating', 5);
  checkExpected('overheating', o);
  const overtemp = o.alarms.find((a) => a.code === 'overtemp');
  const fault = o.alarms.find((a) => a.code === 'fault-pin');
  assert.ok(overtemp && fault && overtemp.t < fault.t, 'the window is passed before the charger trips');
});

test('weak-panel: idle and sun-limited cc, never a critical alarm, no fault while the sun is low', () => {
  const o = runScenario('weak-panel', 10);
  checkExpected('weak-panel', o);
  assert.ok(o.alarms.filter((a) => a.code === 'input-low').every((a) => a.level === 'warn'));
});

test('lead-acid-float: bulk, absorption, then float (done) at the compensated float voltage', () => {
  const o = runScenario('lead-acid-float', 10);
  checkExpected('lead-acid-float', o);
  const last = o.samples[o.samples.length - 1];
  assert.ok(last.vbatV !== undefined && last.tempC !== undefined);
  // Float 2.30 V/cell at 25 C, -3 mV/K/cell: Battery University BU-403 "Charging Lead Acid".
  const floatV = 6 * (2.3 - 0.003 * (last.tempC - 25));
  assert.ok(Math.abs(last.vbatV - floatV) < 0.05, `float ${last.vbatV} V vs ${floatV.toFixed(3)} V`);
});

test('nimh-4s: constant current, then done by -dV', () => {
  const o = runScenario('nimh-4s', 5);
  checkExpected('nimh-4s', o);
  assert.ok(!o.phases.includes('cv'), 'NiMH has no cv');
  assert.ok(
    o.firmware.some((l) => l.includes('-dV')),
    'the charger ended on -dV',
  );
});

test('solar-lifepo4-4s: sun-limited cc, then cv (and done)', () => {
  const o = runScenario('solar-lifepo4-4s', 10);
  checkExpected('solar-lifepo4-4s', o);
  assert.ok(o.phases.includes('cv') || o.phases.includes('done'));
});

test('open-thermistor: raw ntc pinned at the rail, fault-pin', () => {
  const o = runScenario('open-thermistor', 5);
  checkExpected('open-thermistor', o);
  const opensAtS = getScenario('open-thermistor').bench.thermistorOpensAtS ?? 0;
  const after = o.samples.filter((s) => (s.deviceS ?? 0) >= opensAtS);
  assert.ok(after.length > 10 && after.every((s) => s.ntcRaw === 4095), 'ntc pinned at adcMax = 4095');
});

test('overvoltage-drift: the drifting reference raises overvoltage', () => {
  const o = runScenario('overvoltage-drift', 5);
  checkExpected('overvoltage-drift', o);
});

test('weak-panel-timer: the safety timer expires while current flows -> timer and fault', () => {
  const o = runScenario('weak-panel-timer', 10);
  const faultAt = o.samples.find((s) => s.flt === true);
  assert.ok(faultAt, 'the charger faults');
  const before = o.samples.filter((s) => s.t < faultAt.t && s.t > faultAt.t - 600);
  assert.ok(
    before.every((s) => (s.ibatA ?? 0) > 0.2),
    'current still flowed in the minutes before the timer',
  );
  checkExpected('weak-panel-timer', o);
});

test('loose-connection: charges on through the dropouts without a fault', () => {
  const o = runScenario('loose-connection', 2);
  checkExpected('loose-connection', o);
  const dropouts = o.samples.filter((s) => s.ibatA === 0 && s.chg === true);
  assert.ok(dropouts.length > 0, 'dropouts show as zero current while the charger says charging');
});

test('every scenario reads the same in csv and json shapes', () => {
  for (const name of ['bench-liion-3s', 'damaged-cell']) {
    const kv = runScenario(name, 10, 'kv');
    for (const shape of ['csv', 'json'] as const) {
      const other = runScenario(name, 10, shape);
      assert.deepEqual(other.phases, kv.phases, `${name} ${shape}`);
      assert.deepEqual(
        other.alarms.map((a) => a.code),
        kv.alarms.map((a) => a.code),
      );
    }
  }
  assert.equal(SCENARIO_NAMES.length, 16);
});

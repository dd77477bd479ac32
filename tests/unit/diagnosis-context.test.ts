/** The diagnosed moment and the history the cause modules read (invented sample data). */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { profileFromChemistry } from '@shared/chemistry/profile';
import {
  buildContext,
  findFirstFault,
  phaseSpans,
  typicalInterval,
  upperBound,
} from '@shared/engine/diagnosis/context';
import { fmtDuration, fmtT } from '@shared/engine/diagnosis/format';
import { deliveredAh, resistanceSteps } from '@shared/engine/diagnosis/measures';
import { isImpossibleJump } from '@shared/engine/diagnosis/temperature';
import type { EngineEvent, TimedSample } from '@shared/engine/types';

const at = (t: number, extra: Partial<TimedSample> = {}): TimedSample => ({ t, rxS: t, extra: {}, ...extra });

test('the first fault is the earliest of the fault phase, the fault output and a critical alarm', () => {
  const samples = [at(0), at(10), at(20, { flt: true }), at(30, { flt: true })];
  const events: EngineEvent[] = [
    { type: 'alarm', t: 5, code: 'input-low', level: 'warn', message: 'warn only' },
    { type: 'alarm', t: 25, code: 'overtemp', level: 'critical', message: 'hot' },
    { type: 'phase', t: 30, phase: 'fault' },
  ];
  const fault = findFirstFault(samples, events);
  assert.equal(fault?.t, 20, 'flt at 20 s comes before the critical alarm at 25 s');
  assert.match(fault?.what.join(' ') ?? '', /fault output \(flt\)/);
  assert.equal(
    findFirstFault([at(0), at(1)], [{ type: 'phase', t: 0, phase: 'cc' }]),
    null,
    'a warn is not a fault',
  );
});

test('without a fault the end of the run is diagnosed; an explicit time is used as given', () => {
  const profile = profileFromChemistry('li-ion', 2);
  const samples = [at(0), at(60), at(120)];
  const events: EngineEvent[] = [{ type: 'phase', t: 0, phase: 'cc' }];
  const end = buildContext({ profile, samples, events });
  assert.equal(end.t, 120);
  assert.equal(end.fault, null);
  assert.equal(end.end, 3);
  const mid = buildContext({ profile, samples, events, atT: 60 });
  assert.equal(mid.t, 60);
  assert.equal(mid.end, 2, 'samples at or before the diagnosed time are history');
});

test('phase spans end where the next phase starts, the last at the diagnosed time', () => {
  const events: EngineEvent[] = [
    { type: 'phase', t: 0, phase: 'precondition' },
    { type: 'phase', t: 100, phase: 'cc' },
    { type: 'phase', t: 900, phase: 'cv' },
  ];
  assert.deepEqual(phaseSpans(events, 500), [
    { phase: 'precondition', startT: 0, endT: 100 },
    { phase: 'cc', startT: 100, endT: 500 },
  ]);
});

test('upper bound and typical interval', () => {
  const samples = [0, 1, 2, 3, 50, 51, 52].map((t) => at(t));
  assert.equal(upperBound(samples, 2), 3);
  assert.equal(upperBound(samples, -1), 0);
  assert.equal(upperBound(samples, 99), 7);
  assert.equal(typicalInterval(samples, samples.length), 1, 'a gap does not change the median interval');
});

test('delivered charge by the trapezoid rule (worked example, derived: 1.375 Ah)', () => {
  // I = [0, 1, 2, 2, 1] A at t = 0…3600 s every 900 s: trapezoid 4 950 C = 1.375 Ah (trapezoid rule, derived).
  const samples = [0, 1, 2, 2, 1].map((a, i) => at(i * 900, { ibatA: a }));
  assert.ok(Math.abs(deliveredAh(samples, samples.length, 1000) - 1.375) < 1e-12);
  assert.equal(
    deliveredAh(samples, samples.length, 600),
    0,
    'intervals longer than the gap limit are skipped',
  );
});

test('resistance from a current step is ΔV / ΔI', () => {
  const samples = [at(0, { vbatV: 11.0, ibatA: 0.1 }), at(1, { vbatV: 11.18, ibatA: 1.0 })];
  const steps = resistanceSteps(samples, 2, 0.25, 5);
  assert.equal(steps.length, 1);
  assert.ok(Math.abs(steps[0].ohm - 0.2) < 1e-9);
});

test('an impossible temperature jump is 5 °C in a second, or 20 °C within two minutes', () => {
  assert.equal(isImpossibleJump(25, 30.5, 1), true);
  assert.equal(isImpossibleJump(25, 28, 1), false);
  assert.equal(isImpossibleJump(25, 46, 60), true);
  assert.equal(isImpossibleJump(25, 35, 600), false, '1 °C/min is a pack heating, not a sensor');
});

test('times and durations in evidence text', () => {
  assert.equal(fmtT(3725), 't = 1:02:05');
  assert.equal(fmtDuration(42), '42 s');
  assert.equal(fmtDuration(23 * 60), '23 min');
  assert.equal(fmtDuration(3 * 3600 + 5 * 60), '3 h 05 min');
});

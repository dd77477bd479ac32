/** The Bench view's charge outlook on invented numbers (a demo 3S 2.5 Ah Li-ion pack at 1 A). */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { chargeOutlook, slopePerS, type OutlookInput } from '@shared/engine/metrics/charge-outlook';

const near = (a: number, b: number, tol: number, what: string) =>
  assert.ok(Math.abs(a - b) <= tol, `${what}: ${a} vs ${b} ± ${tol}`);

const base: OutlookInput = {
  chemistry: 'li-ion',
  hasCv: true,
  phase: 'cc',
  capacityAh: 2.5,
  ahIn: 0.2,
  currentA: 1,
  setA: 1,
  terminationA: 0.1,
  regulationV: 12.6,
  floatV: null,
  preconditionV: 9,
  vbatV: 12.0,
  riseVPerS: { low: 0.0003, high: 0.0003 },
  engineSocPct: null,
  engineCvS: null,
};

test('slope of a straight line, with nulls skipped', () => {
  const pts = [0, 60, 120, 180].map((x) => ({ x, y: 12 + 0.0003 * x }));
  near(slopePerS([...pts, { x: 240, y: null }])!, 0.0003, 1e-12, 'slope');
  assert.equal(slopePerS(pts.slice(0, 2)), null);
});

test('in CC: time to CV from the voltage rise, charge level and time to full as ranges', () => {
  const o = chargeOutlook(base);
  // 0.6 V to go at 0.3 mV/s: 2000 s to CV at 12.60 V.
  assert.equal(o.next?.step, 'cv');
  assert.equal(o.next?.atV, 12.6);
  near(o.next!.inS!.low, 2000, 1e-6, 'to CV');
  // 0.556 Ah still to go in CC; CC ends at 60–85 % of 2.5 Ah: 37.8–62.8 %.
  near(o.socPct!.low, 37.8, 0.1, 'level low');
  near(o.socPct!.high, 62.8, 0.1, 'level high');
  // CV still delivers 15–40 % of 2.5 Ah on an exponential taper from 1 A to 0.1 A:
  // tau = Ah·3600/(1 − 0.1), CV time = tau·ln(10) -> 3454 s … 9210 s (derived).
  near(o.fullInS!.low, 2000 + 3454, 2, 'full low');
  near(o.fullInS!.high, 2000 + 9210, 2, 'full high');
});

test('an engine taper learned in this run replaces the assumed CV length', () => {
  const o = chargeOutlook({ ...base, engineCvS: 3000 });
  near(o.fullInS!.low, 2000 + 2550, 1e-6, 'full low (−15 %)');
  near(o.fullInS!.high, 2000 + 3450, 1e-6, 'full high (+15 %)');
});

test('without a stated capacity: no charge level is claimed', () => {
  const o = chargeOutlook({ ...base, capacityAh: null });
  assert.equal(o.socPct, null);
  assert.equal(o.fullInS, null);
  near(o.next!.inS!.low, 2000, 1e-6, 'time to CV still known from the voltage');
});

test('in CV: the taper to the termination current; lead-acid goes to float at its voltage', () => {
  const cv = chargeOutlook({ ...base, phase: 'cv', currentA: 0.5, vbatV: 12.6 });
  assert.equal(cv.next?.step, 'done');
  assert.ok(cv.fullInS!.low > 0 && cv.fullInS!.high >= cv.fullInS!.low);
  assert.ok(cv.socPct!.low >= 60 && cv.socPct!.high <= 100);
  const lead = chargeOutlook({
    ...base,
    chemistry: 'lead-acid',
    phase: 'cv',
    capacityAh: 100,
    setA: 20,
    terminationA: 5,
    currentA: 10,
    regulationV: 14.4,
    floatV: 13.8,
  });
  assert.equal(lead.next?.atV, 13.8);
});

test('done: full now, nothing after; fault and idle claim nothing', () => {
  const done = chargeOutlook({ ...base, phase: 'done' });
  assert.deepEqual(done.fullInS, { low: 0, high: 0 });
  assert.equal(done.next, null);
  assert.deepEqual(chargeOutlook({ ...base, phase: 'fault' }), { socPct: null, fullInS: null, next: null });
});

test('NiMH: constant current to the end, 1.2–1.4 times the capacity in', () => {
  const o = chargeOutlook({
    ...base,
    chemistry: 'nimh',
    hasCv: false,
    capacityAh: 2,
    ahIn: 1.4,
    currentA: 1,
  });
  near(o.socPct!.low, 50, 1e-6, '1.4 Ah of 2.8 Ah');
  assert.equal(o.next?.step, 'done');
  assert.ok(o.fullInS!.high > o.fullInS!.low);
});

/**
 * The per-sample shortcuts of the engine keep their slow forms' answers: phase codes name the
 * same phases, the alarm book skips only alarms with nothing to step, the quick plausibility
 * check agrees with the worded one, and the taper rate worked out on demand is the one measured.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { profileFromChemistry } from '@shared/chemistry/profile';
import { AlarmBook, CLEAR, KEEP, RAISE } from '@shared/engine/alarms';
import { TaperModel } from '@shared/engine/metrics';
import { CC, CV, DONE, FAULT, IDLE, PRECONDITION, isChargingCode } from '@shared/engine/phase-codes';
import { isChargingPhase } from '@shared/engine/phase-machine';
import { implausibility, isPlausible, plausibilityLimits } from '@shared/engine/plausibility';
import { ALARM_CODES, PHASES, type AlarmEvent } from '@shared/engine/types';
import type { Sample } from '@shared/telemetry/types';

test('phase codes index PHASES, and the charging codes are the charging phases', () => {
  assert.equal(PHASES[PRECONDITION], 'precondition');
  assert.equal(PHASES[CC], 'cc');
  assert.equal(PHASES[CV], 'cv');
  assert.equal(PHASES[DONE], 'done');
  assert.equal(PHASES[FAULT], 'fault');
  assert.equal(PHASES[IDLE], 'idle');
  PHASES.forEach((phase, code) => assert.equal(isChargingCode(code), isChargingPhase(phase), phase));
});

/** A seeded sequence of raise/clear conditions, with holds long enough to pass every delay. */
function conditions(seed: number, n: number): { t: number; raise: boolean; clear: boolean }[] {
  let s = seed;
  const next = () => (s = (s * 1103515245 + 12345) & 0x7fffffff) / 0x7fffffff;
  const out: { t: number; raise: boolean; clear: boolean }[] = [];
  let t = 0;
  let raise = false;
  let clear = true;
  for (let k = 0; k < n; k++) {
    if (next() < 0.08) raise = !raise;
    if (next() < 0.08) clear = !clear;
    t += next() < 0.9 ? 1 : 0; // a few repeated times (glitches placed with no elapsed time)
    out.push({ t, raise, clear });
  }
  return out;
}

test('an alarm the book says needs no step would have kept, unchanged, had it been stepped', () => {
  ALARM_CODES.forEach((code, i) => {
    // One book steps every sample; the other only when needsStep says so. Their decisions and
    // their pending state must agree on every sample.
    const always = new AlarmBook();
    const skipping = new AlarmBook();
    let raises = 0;
    let clears = 0;
    for (const { t, raise, clear } of conditions(i + 1, 3000)) {
      const needed = skipping.needsStep(i, raise);
      const decided = always.step(i, t, raise, clear);
      const skipped = needed ? skipping.step(i, t, raise, clear) : KEEP;
      assert.equal(skipped, decided, `${code} at t=${t}`);
      if (!needed) assert.equal(decided, KEEP, `${code}: skipped a step that decided something`);
      if (decided === RAISE) {
        const event: AlarmEvent = { type: 'alarm', t, code, level: 'warn', message: '' };
        always.raised(i, event);
        skipping.raised(i, event);
        raises++;
      } else if (decided === CLEAR) {
        clears++;
        always.cleared(i);
        skipping.cleared(i);
      }
      assert.equal(skipping.isPending(i), always.isPending(i), `${code} pending at t=${t}`);
      assert.equal(skipping.isActive(i), always.isActive(i), `${code} active at t=${t}`);
    }
    assert.ok(raises > 5 && clears > 5, `${code}: the sequence raised (${raises}) and cleared (${clears})`);
  });
});

test('anyActive sees exactly the raised alarms of its mask', () => {
  const book = new AlarmBook();
  const event: AlarmEvent = { type: 'alarm', t: 0, code: 'timer', level: 'critical', message: '' };
  book.raised(5, event);
  assert.equal(book.anyActive(1 << 5), true);
  assert.equal(book.anyActive((1 << 4) | (1 << 6)), false);
  book.cleared(5);
  assert.equal(book.anyActive(1 << 5), false);
  assert.deepEqual(book.list(), []);
});

test('the quick plausibility check agrees with the worded one on every field and edge', () => {
  const lim = plausibilityLimits(profileFromChemistry('li-ion', 3, { capacityAh: 2.5, chargeCurrentA: 1 }));
  const base: Sample = {
    rxS: 0,
    deviceS: 1,
    vbatV: 11.1,
    ibatA: 1,
    tempC: 25,
    vinV: 15,
    iinA: 0.8,
    extra: {},
  };
  const edges = (limit: number) => [
    undefined,
    0,
    limit,
    -limit,
    limit * 1.0001,
    -limit * 1.0001,
    NaN,
    Infinity,
  ];
  const cases: Sample[] = [base, { rxS: 0, extra: {} }];
  for (const v of edges(lim.maxVbatV)) cases.push({ ...base, vbatV: v });
  for (const v of edges(lim.maxCurrentA)) cases.push({ ...base, ibatA: v }, { ...base, iinA: v });
  for (const v of edges(lim.maxVinV)) cases.push({ ...base, vinV: v });
  for (const v of [undefined, -55, 150, -55.1, 150.1, NaN]) cases.push({ ...base, tempC: v });
  for (const v of [undefined, 0, 1e300, NaN, Infinity, -Infinity]) cases.push({ ...base, deviceS: v });
  for (const s of cases)
    assert.equal(isPlausible(s, lim), implausibility(s, lim) === null, JSON.stringify(s));
});

test('the taper rate worked out on demand is the decay measured', () => {
  const taper = new TaperModel();
  assert.ok(Number.isNaN(taper.ratePerS), 'unknown before any decay');
  const tauS = 1800;
  for (let t = 0; t <= 600; t++) taper.update(t, 2 * Math.exp(-t / tauS), true);
  const rate = taper.ratePerS;
  assert.ok(Math.abs(rate - 1 / tauS) < 1e-5, `rate ${rate}`);
  // Leaving CV keeps the rate for later estimates.
  taper.update(601, 0.5, false);
  assert.equal(taper.ratePerS, rate);
  assert.equal(taper.taperS(1, 0.1), Math.log(1 / 0.1) / rate);
  assert.equal(taper.taperAh(1, 0.1), (1 - 0.1) / rate / 3600);
});

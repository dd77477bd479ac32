/**
 * Board checks on synthetic charges (invented data from engine-synthetic.ts): each expect key
 * measured from the samples it came from, the reasons a key is not measured, the verdict rules,
 * the default tolerances and their sources, the firmware identity line, and the profile's
 * `expect` key refused with its name.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { parseProfile, profileFromChemistry } from '@shared/chemistry/profile';
import type { ExpectRanges, ResolvedProfile } from '@shared/chemistry/types';
import {
  DEFAULT_TOLERANCES,
  nominalRange,
  parseBoardLine,
  runChecks,
  verdictOf,
  type CheckReport,
} from '@shared/engine/checks';
import { createRunEngine } from '@shared/engine/run-engine';
import type { TimedSample } from '@shared/engine/types';
import { ccCvCharge, pushAll, steady } from './engine-synthetic';

// Invented demo pack: 3S 2.5 Ah Li-ion charged at 1 A to 4.20 V/cell (BU-409), ending at 0.1 A.
const charge = {
  cells: 3,
  capacityAh: 2.5,
  setA: 1,
  terminationA: 0.1,
  regulationVPerCell: 4.2,
  ocvEmptyV: 3.0,
  ocvFullV: 4.2,
  startSocPct: 20,
  packOhm: 0.3,
  dtS: 1,
  durationS: 4 * 3600,
  tempC: 25,
  vNoiseV: 0.004,
  iNoiseA: 0.004,
};

function profileWith(expect: ExpectRanges, extra = {}): ResolvedProfile {
  return profileFromChemistry('li-ion', 3, {
    capacityAh: 2.5,
    chargeCurrentA: 1,
    terminationA: 0.1,
    expect,
    ...extra,
  });
}

function judge(profile: ResolvedProfile, samples: TimedSample[]): CheckReport {
  const events = pushAll(createRunEngine(profile), samples);
  return runChecks({ profile, samples, events });
}

const byCode = (r: CheckReport, code: string) => {
  const c = r.checks.find((x) => x.code === code);
  assert.ok(c, `check ${code} present`);
  return c;
};

test('a clean CC/CV charge: current, regulation, termination and charge time measured and passed', () => {
  const samples = ccCvCharge(charge);
  const r = judge(
    profileWith({
      chargeCurrentA: [0.9, 1.1],
      regulationV: [12.47, 12.73],
      terminationA: [0.085, 0.115],
      chargeTimeMin: [60, 240],
      tempRiseC: [0, 5],
    }),
    samples,
  );
  assert.equal(r.verdict, 'pass', JSON.stringify(r.checks));
  // The model's own values: 1 A set current, 12.6 V regulation, 0.1 A termination (invented design).
  assert.ok(Math.abs(byCode(r, 'chargeCurrentA').measured! - 1) < 0.01);
  assert.ok(Math.abs(byCode(r, 'regulationV').measured! - 12.6) < 0.01);
  assert.ok(Math.abs(byCode(r, 'terminationA').measured! - 0.1) < 0.01);
  const doneT = samples.findIndex((s) => s.ibatA !== undefined && s.ibatA < 0.05 && s.t > 100);
  assert.ok(Math.abs(byCode(r, 'chargeTimeMin').measured! * 60 - doneT) < 30, 'done within the debounce');
  // Each value names the samples it came from.
  const cc = byCode(r, 'chargeCurrentA');
  assert.ok(cc.basis && cc.basis.samples > 100 && cc.basis.fromT > 0 && cc.basis.toT > cc.basis.fromT);
  assert.equal(byCode(r, 'tempRiseC').measured, 0);
});

test('a value outside its limits fails its check and the run, with the measured value in the note', () => {
  const r = judge(profileWith({ chargeCurrentA: [1.1, 1.3] }), ccCvCharge(charge));
  const c = byCode(r, 'chargeCurrentA');
  assert.equal(c.result, 'fail');
  assert.match(c.note, /below \[1.1, 1.3\] A/);
  assert.equal(r.verdict, 'fail');
});

test('a run cut short in cc: regulation and termination are not measured, with the reason; verdict incomplete', () => {
  const r = judge(
    profileWith({ chargeCurrentA: [0.9, 1.1], regulationV: [12.47, 12.73], terminationA: [0.08, 0.12] }),
    ccCvCharge({ ...charge, durationS: 1800 }),
  );
  assert.equal(byCode(r, 'chargeCurrentA').result, 'pass');
  assert.equal(byCode(r, 'regulationV').result, 'not-measured');
  assert.equal(byCode(r, 'regulationV').note, 'the run never reached cv');
  assert.match(byCode(r, 'terminationA').note, /never ended/);
  assert.equal(r.verdict, 'incomplete');
});

test('the cc level leaves out the stretches where a weak source held the current down', () => {
  // A panel that gives only 0.6 A for the first half hour, while the source voltage sits at the
  // input set point (invented), then the full 1 A.
  const samples = ccCvCharge({
    ...charge,
    durationS: 3600,
    sourceLimitA: (t) => (t < 1800 ? 0.6 : Infinity),
  });
  for (const s of samples) s.vinV = s.t < 1800 ? 14.5 : 17.5;
  const profile = profileWith({ chargeCurrentA: [0.9, 1.1], inputV: [14.2, 14.8] }, { inputSetpointV: 14.5 });
  const r = judge(profile, samples);
  const cc = byCode(r, 'chargeCurrentA');
  assert.ok(Math.abs(cc.measured! - 1) < 0.01, `cc ${cc.measured} (the limited 0.6 A stretch left out)`);
  assert.match(cc.note, /source-limited samples left out/);
  const input = byCode(r, 'inputV');
  assert.equal(input.result, 'pass');
  assert.ok(Math.abs(input.measured! - 14.5) < 0.01);
});

test('input voltage is not measured when the source always gave what was asked', () => {
  const samples = ccCvCharge({ ...charge, vinV: 15 });
  const r = judge(profileWith({ inputV: [14, 15] }), samples);
  assert.equal(byCode(r, 'inputV').result, 'not-measured');
  assert.match(byCode(r, 'inputV').note, /input loop never limited/);
});

test('a charger fault fails the run even when every measured value is in range', () => {
  const samples = ccCvCharge({ ...charge, durationS: 3000, pins: true });
  // The fault output asserts at 2400 s and the current stops (invented).
  for (const s of samples) {
    if (s.t >= 2400) {
      s.flt = true;
      s.chg = false;
      s.ibatA = 0;
    }
  }
  const r = judge(profileWith({ chargeCurrentA: [0.9, 1.1], timerMin: [36, 44] }), samples);
  assert.equal(byCode(r, 'chargeCurrentA').result, 'pass');
  assert.ok(r.fault && Math.abs(r.fault.t - 2400) < 1);
  // Nothing else explains it, so it is read as the timer: 40 min from the start of charging.
  const timer = byCode(r, 'timerMin');
  assert.equal(timer.result, 'pass');
  assert.ok(Math.abs(timer.measured! - 40) < 0.1, `timer ${timer.measured}`);
  assert.equal(r.verdict, 'fail');
});

test('no timer fault: a charge that ended before the lower limit passes, one that ran past the upper limit fails', () => {
  const done = judge(profileWith({ timerMin: [216, 264] }), ccCvCharge(charge));
  assert.equal(byCode(done, 'timerMin').result, 'pass');
  assert.equal(byCode(done, 'timerMin').measured, null);
  const long = judge(profileWith({ timerMin: [30, 40] }), ccCvCharge({ ...charge, durationS: 3600 }));
  assert.equal(byCode(long, 'timerMin').result, 'fail');
  assert.match(byCode(long, 'timerMin').note, /never acted/);
});

test('efficiency is pack energy over source energy; not measured without vin and iin', () => {
  const samples = ccCvCharge({ ...charge, durationS: 1200 });
  // A source that delivers the pack power over 0.9 (invented), so efficiency must read 0.9.
  for (const s of samples) {
    s.vinV = 15;
    s.iinA = (s.vbatV! * s.ibatA!) / 0.9 / 15;
  }
  const r = judge(profileWith({ efficiency: [0.85, 0.95] }), samples);
  assert.ok(Math.abs(byCode(r, 'efficiency').measured! - 0.9) < 0.002);
  const bare = judge(profileWith({ efficiency: [0.85, 0.95] }), ccCvCharge({ ...charge, durationS: 1200 }));
  assert.equal(byCode(bare, 'efficiency').result, 'not-measured');
});

test('precondition current: median over precondition; not measured when the pack started above it', () => {
  const samples = ccCvCharge({
    ...charge,
    ocvEmptyV: 2.9,
    startSocPct: 0,
    // Junlee / ElectroDragon: precondition below about 3.0 V/cell at up to 0.1C.
    preconditionVPerCell: 3.0,
    preconditionA: 0.25,
    durationS: 3600,
  });
  const r = judge(profileWith({ preconditionA: [0.22, 0.28] }, { preconditionA: 0.25 }), samples);
  assert.ok(
    Math.abs(byCode(r, 'preconditionA').measured! - 0.25) < 0.01,
    JSON.stringify(byCode(r, 'preconditionA')),
  );
  const none = judge(
    profileWith({ preconditionA: [0.22, 0.28] }),
    ccCvCharge({ ...charge, durationS: 1800 }),
  );
  assert.match(byCode(none, 'preconditionA').note, /no precondition/);
});

test('temperature rise: highest minus first', () => {
  const samples = [
    ...steady(0, 600, 1, { vbatV: 11.5, ibatA: 1, tempC: 22 }),
    ...steady(600, 600, 1, { vbatV: 11.6, ibatA: 1, tempC: 29.5 }),
  ];
  const r = judge(profileWith({ tempRiseC: [0, 5] }), samples);
  assert.equal(byCode(r, 'tempRiseC').measured, 7.5);
  assert.equal(byCode(r, 'tempRiseC').result, 'fail');
});

test('the verdict: fail beats incomplete beats pass; a fault alone fails', () => {
  assert.equal(verdictOf([{ result: 'pass' }, { result: 'not-measured' }], false), 'incomplete');
  assert.equal(verdictOf([{ result: 'fail' }, { result: 'not-measured' }], false), 'fail');
  assert.equal(verdictOf([{ result: 'pass' }], true), 'fail');
  assert.equal(verdictOf([{ result: 'pass' }], false), 'pass');
});

test('default tolerances name their source and give [min, max] around a nominal value', () => {
  // Regulation ±1 % and current ±10 %: single-cell linear Li-ion charger ICs' datasheets.
  assert.deepEqual(nominalRange('regulationV', 12.6), [12.474, 12.726]);
  assert.deepEqual(nominalRange('chargeCurrentA', 1), [0.9, 1.1]);
  assert.equal(nominalRange('efficiency', 0.9), null);
  for (const [key, tol] of Object.entries(DEFAULT_TOLERANCES)) {
    assert.ok(tol && tol.fraction > 0 && tol.fraction < 0.2, key);
    assert.match(tol.source, /datasheets|common practice/, key);
  }
  assert.match(DEFAULT_TOLERANCES.regulationV!.source, /single-cell linear Li-ion charger ICs/);
});

test('the firmware identity line gives board id, firmware, operator and batch', () => {
  assert.deepEqual(parseBoardLine('# board=GS-0042 fw=1.4.2'), { board: 'GS-0042', firmware: '1.4.2' });
  assert.deepEqual(parseBoardLine('board=GS-7, operator=ana; batch=B7'), {
    board: 'GS-7',
    operator: 'ana',
    batch: 'B7',
  });
  assert.equal(parseBoardLine('# charger boot fw 0.3'), null);
  assert.equal(parseBoardLine('# stage cc -> cv: regulation voltage reached'), null);
});

test('profile expect: [min, max] per key; a bad key or a reversed pair is refused with its name', () => {
  const ok = parseProfile({ chemistry: 'li-ion', cells: 3, expect: { regulationV: [12.47, 12.73] } });
  assert.ok(ok.ok && ok.profile.expect?.regulationV?.[1] === 12.73);
  const unknown = parseProfile({ chemistry: 'li-ion', cells: 3, expect: { chargeCurrent: [1, 2] } });
  assert.ok(!unknown.ok);
  assert.match(
    unknown.error,
    /^expect\.chargeCurrent: unknown key; known keys here are chargeCurrentA, regulationV/,
  );
  const reversed = parseProfile({ chemistry: 'li-ion', cells: 3, expect: { chargeCurrentA: [1.1, 0.9] } });
  assert.ok(!reversed.ok);
  assert.match(reversed.error, /^expect\.chargeCurrentA: must be \[min, max\] with min at most max/);
  const single = parseProfile({ chemistry: 'li-ion', cells: 3, expect: { timerMin: 240 } });
  assert.ok(!single.ok);
  assert.match(single.error, /^expect\.timerMin: must be/);
});

test('no expect, no checks: the verdict rests on the charger fault alone', () => {
  const profile = profileFromChemistry('li-ion', 3, {
    capacityAh: 2.5,
    chargeCurrentA: 1,
    terminationA: 0.1,
  });
  const samples = ccCvCharge({ ...charge, durationS: 600 });
  const r = runChecks({
    profile,
    samples,
    events: pushAll(createRunEngine(profile), samples),
    board: 'GS-1',
  });
  assert.deepEqual(r.checks, []);
  assert.equal(r.board, 'GS-1');
  assert.equal(r.verdict, 'pass');
});

test("the timer is the board's fault output, not Taperline's own timer alarm", () => {
  // The profile's 40 min timer raises Taperline's alarm at 40 min, but the board (its fault
  // output reported and never asserted) keeps charging to 50 min: its timer never acted.
  const samples = ccCvCharge({ ...charge, durationS: 3000, pins: true });
  const r = judge(profileWith({ timerMin: [36, 44] }, { timerMin: 40 }), samples);
  assert.ok(r.fault, 'the run faulted on the timer alarm');
  const timer = byCode(r, 'timerMin');
  assert.equal(timer.measured, null);
  assert.equal(timer.result, 'fail');
  assert.match(timer.note, /never acted/);
});

/**
 * Phase classification on synthetic charges (invented data built in engine-synthetic.ts).
 * Check values: regulation voltages from BU-409 / BU-403 / RightBattery, −ΔV from the
 * cheali-charger docs, lead-acid compensation from BU-403, as named beside each assertion.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { profileFromChemistry } from '@shared/chemistry/profile';
import { createRunEngine } from '@shared/engine/run-engine';
import type { TimedSample } from '@shared/engine/types';
import { alarmsOf, ccCvCharge, noise, phasesOf, pushAll, steady } from './engine-synthetic';

// Invented demo pack: a 3S Li-ion pack of a trail camera, 2.5 Ah charged at 1 A, ending at 0.1 A.
const liIon3s = profileFromChemistry('li-ion', 3, { capacityAh: 2.5, chargeCurrentA: 1, terminationA: 0.1 });
const liIonCharge = {
  cells: 3,
  capacityAh: 2.5,
  setA: 1,
  terminationA: 0.1,
  // BU-409: CV at 4.20 V/cell.
  regulationVPerCell: 4.2,
  ocvEmptyV: 3.0,
  ocvFullV: 4.2,
  startSocPct: 20,
  packOhm: 0.3,
  dtS: 1,
  durationS: 4 * 3600,
  tempC: 25,
};

test('a clean Li-ion CC/CV charge goes cc -> cv -> done, from V and I alone (no chg/flt pins)', () => {
  const engine = createRunEngine(liIon3s);
  const samples = ccCvCharge(liIonCharge);
  const events = pushAll(engine, samples);
  assert.deepEqual(phasesOf(events), ['cc', 'cv', 'done']);
  assert.deepEqual(alarmsOf(events), []);
  const cv = events.find((e) => e.type === 'phase' && e.phase === 'cv');
  // CV begins where the pack first reaches 4.20 V/cell within the 1 % charger accuracy (Junlee blog), plus the 5 s debounce.
  const firstAtReg = samples.find((s) => (s.vbatV ?? 0) >= 3 * 4.2 * 0.99 && (s.ibatA ?? 1) < 0.95)!;
  assert.ok(cv && cv.t >= firstAtReg.t && cv.t <= firstAtReg.t + 6, `cv at ${cv?.t}, reg at ${firstAtReg.t}`);
  const summary = engine.summary();
  assert.equal(summary.durationS, 4 * 3600);
  const totalS = Object.values(summary.phaseS).reduce((a, b) => a + (b ?? 0), 0);
  assert.ok(Math.abs(totalS - summary.durationS) < 1e-6);
  // Coulomb counting, Q = ∫ I dt (MathWorks "SOC Estimator (Coulomb Counting)"): the charge the model put in, by trapezoid.
  let expectedAh = 0;
  for (let i = 1; i < samples.length; i++)
    expectedAh += (samples[i - 1].ibatA! + samples[i].ibatA!) / 2 / 3600;
  assert.ok(Math.abs(summary.ah - expectedAh) < 1e-9);
  assert.equal(engine.state().phase, 'done');
});

test('with chg/flt pins and sensor noise, a charge from precondition ends done with no flicker', () => {
  const profile = profileFromChemistry('li-ion', 3, {
    capacityAh: 2.5,
    chargeCurrentA: 1,
    terminationA: 0.1,
  });
  const engine = createRunEngine(profile);
  const samples = ccCvCharge({
    ...liIonCharge,
    ocvEmptyV: 2.95,
    startSocPct: 0,
    // Junlee / ElectroDragon: precondition below ≈ 3.0 V/cell at ≤ 0.1C.
    preconditionVPerCell: 3.0,
    preconditionA: 0.25,
    durationS: 5 * 3600,
    vNoiseV: 0.03,
    iNoiseA: 0.03,
    pins: true,
    seed: 11,
  });
  const events = pushAll(engine, samples);
  assert.deepEqual(phasesOf(events), ['precondition', 'cc', 'cv', 'done']);
  assert.deepEqual(alarmsOf(events), []);
});

test('noise and one-sample glitches do not flicker the phase', () => {
  const engine = createRunEngine(liIon3s);
  const rnd = noise(5);
  const samples: TimedSample[] = [];
  for (let t = 0; t < 1800; t++) {
    // CC at 1 A near the top of CC: 12.40 V with ±40 mV and ±50 mA noise, one dropout sample every 97 s.
    const glitch = t % 97 === 50;
    samples.push({ t, rxS: t, vbatV: 12.4 + 0.08 * rnd(), ibatA: glitch ? 0 : 1 + 0.1 * rnd(), extra: {} });
  }
  const events = pushAll(engine, samples);
  assert.deepEqual(phasesOf(events), ['cc']);
  // Near the CV boundary: held at 12.6 V (4.20 V/cell) with the current tapering and noisy, CV does not flicker back.
  const engine2 = createRunEngine(liIon3s);
  const taper: TimedSample[] = [];
  for (let t = 0; t < 1800; t++) {
    taper.push({
      t,
      rxS: t,
      vbatV: 12.6 + 0.1 * rnd(),
      ibatA: 0.7 * Math.exp(-t / 1500) + 0.15 + 0.1 * rnd(),
      extra: {},
    });
  }
  assert.deepEqual(phasesOf(pushAll(engine2, taper)), ['cv']);
});

test('a solar-limited charge below the set current and below regulation stays cc', () => {
  const profile = profileFromChemistry('li-ion', 3, {
    capacityAh: 2.5,
    chargeCurrentA: 1,
    inputSetpointV: 14.5,
  });
  const engine = createRunEngine(profile);
  // The panel gives only 0.35 A; the pack is at 3.8 V/cell; the input sits on its MPPT set point.
  const events = pushAll(
    engine,
    steady(0, 3600, 1, { vbatV: 11.4, ibatA: 0.35, vinV: 14.5, iinA: 0.3, src: 'panel' }),
  );
  assert.deepEqual(phasesOf(events), ['cc']);
  // At the set point the source cannot supply more: input-low, a warning only (docs/codes.md).
  const alarms = alarmsOf(events);
  assert.deepEqual(
    alarms.map((a) => [a.code, a.level]),
    [['input-low', 'warn']],
  );
});

test('a sunset: the current fades to nothing and the source drops under the pack -> idle, at most a warning', () => {
  const profile = profileFromChemistry('li-ion', 3, {
    capacityAh: 2.5,
    chargeCurrentA: 1,
    inputSetpointV: 14.5,
  });
  const engine = createRunEngine(profile);
  const samples: TimedSample[] = [];
  for (let t = 0; t <= 7200; t += 2) {
    // Invented weather-station evening: full sun for 30 min, then the panel fades over an hour, then night.
    const sun = t < 1800 ? 1 : Math.max(0, 1 - (t - 1800) / 3600);
    const ibatA = Math.min(1, 1.4 * sun);
    const vinV = sun > 0 ? 14.5 + 3 * sun : 0.4;
    samples.push({ t, rxS: t, vbatV: 11.2 + 0.3 * ibatA, ibatA, vinV, iinA: ibatA * 0.9, extra: {} });
  }
  const events = pushAll(engine, samples);
  assert.deepEqual(phasesOf(events), ['cc', 'idle']);
  const alarms = alarmsOf(events);
  assert.ok(alarms.length >= 1);
  assert.ok(
    alarms.every((a) => a.level === 'warn' && a.code === 'input-low'),
    JSON.stringify(alarms),
  );
  assert.equal(engine.state().phase, 'idle');
  // Sunrise: charging resumes as cc.
  const morning = pushAll(engine, steady(7202, 600, 2, { vbatV: 11.5, ibatA: 0.8, vinV: 17, iinA: 0.7 }));
  assert.deepEqual(phasesOf(morning), ['cc']);
});

test('no source (src=none) with no current is idle, not a fault; done stays done while the source is there', () => {
  const engine = createRunEngine(liIon3s);
  const events = pushAll(
    engine,
    steady(0, 60, 1, { vbatV: 11.1, ibatA: 0, src: 'none', chg: false, flt: false }),
  );
  assert.deepEqual(phasesOf(events), ['idle']);
  assert.deepEqual(alarmsOf(events), []);
  // A full pack at regulation with the current under termination is done at once (BU-409: taper end = full).
  const full = createRunEngine(liIon3s);
  const fullEvents = pushAll(full, steady(0, 120, 1, { vbatV: 12.6, ibatA: 0.05, vinV: 15, src: 'adapter' }));
  assert.deepEqual(phasesOf(fullEvents), ['done']);
  // The charger stops completely after termination: still done while the source is present...
  assert.deepEqual(
    phasesOf(pushAll(full, steady(120, 120, 1, { vbatV: 12.5, ibatA: 0, vinV: 15, src: 'adapter' }))),
    [],
  );
  // ...and idle once the source is gone.
  assert.deepEqual(
    phasesOf(pushAll(full, steady(240, 60, 1, { vbatV: 12.5, ibatA: 0, vinV: 0, src: 'none' }))),
    ['idle'],
  );
});

test('the fault pin puts the phase in fault at once; it returns when the pin clears', () => {
  const engine = createRunEngine(liIon3s);
  pushAll(engine, steady(0, 30, 1, { vbatV: 11.4, ibatA: 1, chg: true, flt: false, tempC: 25 }));
  const first = engine.push({
    t: 30,
    rxS: 30,
    vbatV: 11.4,
    ibatA: 0,
    chg: false,
    flt: true,
    tempC: 25,
    extra: {},
  });
  assert.deepEqual(phasesOf(first), ['fault']);
  assert.deepEqual(
    alarmsOf(first).map((a) => [a.code, a.level]),
    [['fault-pin', 'critical']],
  );
  const later = pushAll(
    engine,
    steady(31, 20, 1, { vbatV: 11.4, ibatA: 1, chg: true, flt: false, tempC: 25 }),
  );
  assert.deepEqual(phasesOf(later), ['cc']);
  assert.ok(later.some((e) => e.type === 'alarm-clear' && e.code === 'fault-pin'));
});

test('LiFePO4 charges cc -> cv -> done at 3.60 V/cell', () => {
  // RightBattery: 3.6 V/cell; Sunland IFR26650PE: termination ≤ 0.05C. Invented 4S boat house-battery bank, 20 Ah.
  const profile = profileFromChemistry('lifepo4', 4, { capacityAh: 20, chargeCurrentA: 10 });
  assert.equal(profile.terminationA, 1);
  const engine = createRunEngine(profile);
  const events = pushAll(
    engine,
    ccCvCharge({
      cells: 4,
      capacityAh: 20,
      setA: 10,
      terminationA: 1,
      regulationVPerCell: 3.6,
      ocvEmptyV: 3.0,
      ocvFullV: 3.55,
      startSocPct: 30,
      packOhm: 0.02,
      dtS: 2,
      durationS: 3 * 3600,
      vNoiseV: 0.01,
      iNoiseA: 0.05,
    }),
  );
  assert.deepEqual(phasesOf(events), ['cc', 'cv', 'done']);
});

test('lead-acid: bulk = cc, absorption = cv, float = done, with -3 mV/°C/cell compensation at 35 °C', () => {
  // BU-403: absorption 2.40 V/cell, float 2.30 V/cell at 25 °C, −3 mV/°C/cell. At 35 °C:
  // absorption 6 × (2.40 − 0.030) = 14.22 V; float 6 × (2.30 − 0.030) = 13.62 V (derived worked check).
  const profile = profileFromChemistry('lead-acid', 6, { capacityAh: 100, chargeCurrentA: 20 });
  const engine = createRunEngine(profile);
  const samples: TimedSample[] = [];
  let t = 0;
  for (; t < 3600; t += 5)
    samples.push({ t, rxS: t, vbatV: 12.4 + (1.8 * t) / 3600, ibatA: 20, tempC: 35, extra: {} });
  for (let k = 0; k < 720; k++, t += 5) {
    samples.push({ t, rxS: t, vbatV: 14.22, ibatA: 20 * Math.exp(-k / 200) + 1, tempC: 35, extra: {} });
  }
  for (let k = 0; k < 240; k++, t += 5)
    samples.push({ t, rxS: t, vbatV: 13.62, ibatA: 0.8, tempC: 35, extra: {} });
  const events = pushAll(engine, samples);
  assert.deepEqual(phasesOf(events), ['cc', 'cv', 'done']);
  // 14.22 V is 1.25 % under the uncompensated 14.40 V: only compensation makes it absorption.
  assert.ok((14.4 - 14.22) / 14.4 > 0.01);
  assert.deepEqual(alarmsOf(events), []);
});

test('NiMH: constant current ended by -ΔV of about 5 mV/cell, never cv', () => {
  // cheali-charger docs: −ΔV ≈ 5 mV/cell; Panasonic: −ΔV masked for the first ≈ 10 min. Invented 4-cell garden-light pack.
  const profile = profileFromChemistry('nimh', 4, { capacityAh: 2, chargeCurrentA: 1 });
  const engine = createRunEngine(profile);
  const rnd = noise(9);
  const samples: TimedSample[] = [];
  for (let t = 0; t <= 9000; t += 2) {
    // Rises from 1.30 to a 1.48 V/cell peak at 7000 s, then falls 8 mV/cell over the next 2000 s.
    const vPerCell = t < 7000 ? 1.3 + (0.18 * t) / 7000 : 1.48 - (0.008 * (t - 7000)) / 2000;
    samples.push({
      t,
      rxS: t,
      vbatV: 4 * vPerCell + 0.004 * rnd(),
      ibatA: 1 + 0.01 * rnd(),
      tempC: 30,
      extra: {},
    });
  }
  const events = pushAll(engine, samples);
  assert.deepEqual(phasesOf(events), ['cc', 'done']);
  const done = events.find((e) => e.type === 'phase' && e.phase === 'done')!;
  // 5 mV/cell under the peak is reached at 7000 + 2000 × 5/8 = 8250 s; the 30 s filter and 5 s debounce add a little.
  assert.ok(done.t > 8250 && done.t < 8400, `done at ${done.t}`);
});

test('NiMH: dT/dt of more than 1 °C/min ends the charge', () => {
  // dT/dt ≈ 1 °C/min (from memory, unverified: Duracell / Energizer NiMH handbooks treat dT/dt).
  const profile = profileFromChemistry('nimh', 4, { capacityAh: 2, chargeCurrentA: 1 });
  const engine = createRunEngine(profile);
  const samples: TimedSample[] = [];
  for (let t = 0; t <= 4000; t += 5) {
    const tempC = t < 3000 ? 25 + (2 * t) / 3000 : 27 + (1.5 * (t - 3000)) / 60;
    samples.push({ t, rxS: t, vbatV: 5.6 + (0.2 * t) / 4000, ibatA: 1, tempC, extra: {} });
  }
  const events = pushAll(engine, samples);
  assert.deepEqual(phasesOf(events), ['cc', 'done']);
  const done = events.find((e) => e.type === 'phase' && e.phase === 'done')!;
  // Read over a 2 min window of 20 s-filtered temperature: found within about 5 min of the rise.
  assert.ok(done.t > 3000 && done.t <= 3300, `done at ${done.t}`);
  // Sensor jitter of ±0.4 °C on a steady pack is not a dT/dt end.
  const steadyEngine = createRunEngine(profile);
  const rnd = noise(21);
  const jitter: TimedSample[] = [];
  for (let t = 0; t <= 4000; t += 1) {
    jitter.push({ t, rxS: t, vbatV: 5.6 + (0.2 * t) / 4000, ibatA: 1, tempC: 27 + 0.8 * rnd(), extra: {} });
  }
  assert.deepEqual(phasesOf(pushAll(steadyEngine, jitter)), ['cc']);
});

test('without a current reading the charger pins and the voltage decide', () => {
  const engine = createRunEngine(liIon3s);
  const events = pushAll(engine, [
    ...steady(0, 60, 1, { vbatV: 8.7, chg: true }),
    ...steady(60, 60, 1, { vbatV: 11.4, chg: true }),
    ...steady(120, 60, 1, { vbatV: 12.58, chg: true }),
    ...steady(180, 60, 1, { vbatV: 12.5, chg: false }),
  ]);
  // Junlee / ElectroDragon: precondition under ≈ 3.0 V/cell; BU-409: CV at 4.20 V/cell.
  assert.deepEqual(phasesOf(events), ['precondition', 'cc', 'cv', 'done']);
});

test('NiMH: the charger deasserting chg after reaching full-charge voltage is done', () => {
  // PowerStream "NiMH Charging": ≥ 1.41 V/cell for a full charge.
  const profile = profileFromChemistry('nimh', 2, { capacityAh: 2, chargeCurrentA: 1 });
  const engine = createRunEngine(profile);
  pushAll(engine, steady(0, 300, 1, { vbatV: 2.9, ibatA: 1, chg: true, vinV: 5 }));
  const events = pushAll(engine, steady(300, 60, 1, { vbatV: 2.88, ibatA: 0, chg: false, vinV: 5 }));
  assert.deepEqual(phasesOf(events), ['done']);
});

/** Run metrics against published worked examples (coulomb counting) and exact synthetic cases. */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { profileFromChemistry } from '@shared/chemistry/profile';
import { createRunEngine } from '@shared/engine/run-engine';
import { EnergyCounter, SocEstimator, StepResistance, TaperModel } from '@shared/engine/metrics';
import type { TimedSample } from '@shared/engine/types';
import { pushAll, steady } from './engine-synthetic';

const close = (actual: number | null, expected: number, tol: number, what: string) =>
  assert.ok(actual !== null && Math.abs(actual - expected) <= tol, `${what}: ${actual} vs ${expected}`);

test('coulomb counting worked example: I = [0,1,2,2,1] A every 900 s -> 1.375 Ah by trapezoid', () => {
  // Worked example derived from coulomb counting Q = ∫ I dt (MathWorks "SOC Estimator (Coulomb Counting)"; Pebble OS fuel-gauge docs): trapezoid 4 950 C = 1.375 Ah (left-rectangle would be 1.25 Ah).
  const counter = new EnergyCounter();
  const currents = [0, 1, 2, 2, 1];
  for (let i = 1; i < currents.length; i++)
    counter.add(900, currents[i - 1], currents[i], 4, 4, NaN, NaN, NaN, NaN);
  close(counter.ah, 1.375, 1e-12, 'Ah');
  close(counter.ah * 3600, 4950, 1e-9, 'coulombs');
  close(counter.wh, 5.5, 1e-12, 'Wh at a constant 4 V');
  assert.equal(counter.sourceWhOrNull(), null);

  // Samples 900 s apart are only a run, not gaps, with a silence limit above 900 s.
  const engine = createRunEngine(
    profileFromChemistry('li-ion', 1, { capacityAh: 2.5, chargeCurrentA: 2, silenceS: 1000 }),
  );
  pushAll(
    engine,
    currents.map((ibatA, i): TimedSample => ({ t: i * 900, rxS: i * 900, vbatV: 4, ibatA, extra: {} })),
  );
  close(engine.summary().ah, 1.375, 1e-12, 'engine Ah');
});

test('2.0 A for 1.5 h -> 3.0 Ah = 10 800 C (coulomb counting worked example; 1 Ah = 3600 C, SI)', () => {
  const engine = createRunEngine(profileFromChemistry('li-ion', 2, { capacityAh: 6, chargeCurrentA: 2 }));
  pushAll(engine, steady(0, 5401, 1, { vbatV: 7.6, ibatA: 2 }));
  close(engine.summary().ah, 3.0, 1e-9, 'Ah');
  close(engine.summary().ah * 3600, 10800, 1e-6, 'coulombs');
  close(engine.summary().wh, 22.8, 1e-9, 'Wh at 7.6 V');
});

test('SoC: a 2.5 Ah cell at 20 % plus 1.375 Ah is at 75 % (coulomb counting)', () => {
  const soc = new SocEstimator(2.5, true);
  assert.equal(soc.pct(0), null);
  soc.anchorAt(20, 0);
  close(soc.pct(1.375), 75, 1e-9, 'SoC %');
  assert.equal(new SocEstimator(2.5, false).pct(1), null);
});

test('engine SoC: anchored at 0 % by a pack in precondition, unknown without a stated capacity', () => {
  const engine = createRunEngine(profileFromChemistry('li-ion', 1, { capacityAh: 2.5, chargeCurrentA: 1 }));
  pushAll(engine, steady(0, 2251, 1, { vbatV: 2.9, ibatA: 0.25 }));
  // 0.25 A × 2250 s = 0.15625 Ah of 2.5 Ah = 6.25 %.
  close(engine.state().metrics.socPct, 6.25, 1e-9, 'SoC %');
  const unknown = createRunEngine(profileFromChemistry('li-ion', 1, { chargeCurrentA: 1 }));
  pushAll(unknown, steady(0, 600, 1, { vbatV: 2.9, ibatA: 0.1 }));
  assert.equal(unknown.state().metrics.socPct, null);
});

test('source energy and conversion efficiency = pack Wh / source Wh', () => {
  const engine = createRunEngine(profileFromChemistry('li-ion', 3, { capacityAh: 2.5, chargeCurrentA: 1 }));
  pushAll(engine, steady(0, 3601, 1, { vbatV: 12, ibatA: 1, vinV: 15, iinA: 0.9 }));
  const m = engine.state().metrics;
  close(m.wh, 12, 1e-9, 'pack Wh');
  close(m.sourceWh, 13.5, 1e-9, 'source Wh');
  close(m.efficiency, 12 / 13.5, 1e-12, 'efficiency');
  const noSource = createRunEngine(profileFromChemistry('li-ion', 3));
  pushAll(noSource, steady(0, 60, 1, { vbatV: 12, ibatA: 0.4 }));
  assert.equal(noSource.state().metrics.efficiency, null);
  assert.equal(noSource.state().metrics.sourceWh, null);
});

test("internal resistance from a current step: ΔV/ΔI (Ohm's law), median of recent steps", () => {
  const engine = createRunEngine(profileFromChemistry('li-ion', 3, { capacityAh: 2.5, chargeCurrentA: 1 }));
  // 0.3 Ω pack: 1 A at 11.70 V, then 0.2 A at 11.46 V -> ΔV/ΔI = 0.24 / 0.8 = 0.3 Ω.
  pushAll(engine, steady(0, 60, 1, { vbatV: 11.7, ibatA: 1 }));
  pushAll(engine, steady(60, 60, 1, { vbatV: 11.46, ibatA: 0.2 }));
  close(engine.state().metrics.internalResistanceOhm, 0.3, 1e-9, 'Ω');
  const r = new StepResistance(0.2, 5);
  r.add(1, 11.46, 11.7, 0.2, 1); // 0.3 Ω
  r.add(1, 11.7, 11.46, 1, 0.2); // 0.3 Ω
  r.add(1, 11.46, 12.5, 0.2, 1); // 1.3 Ω outlier (a set-point change at the same moment)
  close(r.ohm, 0.3, 1e-9, 'median Ω');
  r.add(10, 11.46, 11.7, 0.2, 1.5); // too far apart: ignored
  r.add(1, 11.46, 11.47, 0.2, 0.25); // step under the threshold: ignored
  close(r.ohm, 0.3, 1e-9, 'median Ω after ignored steps');
  assert.equal(
    createRunEngine(profileFromChemistry('li-ion', 3)).state().metrics.internalResistanceOhm,
    null,
  );
});

test('MPPT tracking error: |vin - set point| / set point while charging from a panel', () => {
  const engine = createRunEngine(
    profileFromChemistry('li-ion', 3, { capacityAh: 2.5, inputSetpointV: 14.5 }),
  );
  pushAll(engine, steady(0, 600, 1, { vbatV: 11.4, ibatA: 1, vinV: 15.0, iinA: 0.9, src: 'panel' }));
  close(engine.state().metrics.mpptErrorFraction, 0.5 / 14.5, 1e-12, 'fraction');
  assert.equal(createRunEngine(profileFromChemistry('li-ion', 3)).state().metrics.mpptErrorFraction, null);
});

test('time to full in CV: exponential taper model toward the termination current (common practice)', () => {
  const taper = new TaperModel();
  const tauS = 1800;
  for (let t = 0; t <= 1200; t++) taper.update(t, 0.9 * Math.exp(-t / tauS), true);
  close(taper.ratePerS, 1 / tauS, 1e-6, 'decay rate');
  const nowA = 0.9 * Math.exp(-1200 / tauS);
  // Remaining taper time τ·ln(I/I_term), and charge (I − I_term)·τ.
  close(taper.taperS(nowA, 0.1), tauS * Math.log(nowA / 0.1), 60, 'taper s');
  close(taper.taperAh(nowA, 0.1), ((nowA - 0.1) * tauS) / 3600, 0.01, 'taper Ah');

  const engine = createRunEngine(
    profileFromChemistry('li-ion', 3, { capacityAh: 2.5, chargeCurrentA: 1, terminationA: 0.1 }),
  );
  pushAll(engine, steady(0, 60, 1, { vbatV: 12.2, ibatA: 1 }));
  const cv: TimedSample[] = [];
  for (let t = 60; t <= 1260; t++)
    cv.push({ t, rxS: t, vbatV: 12.6, ibatA: 0.9 * Math.exp(-(t - 60) / tauS), extra: {} });
  pushAll(engine, cv);
  const m = engine.state().metrics;
  assert.equal(engine.state().phase, 'cv');
  assert.equal(m.etaCcS, 0);
  close(m.etaCvS, tauS * Math.log(nowA / 0.1), 90, 'engine CV eta');
  assert.equal(m.etaS, m.etaCvS);
});

test('time to full in CC: remaining Ah / current (common practice), known once SoC is', () => {
  const engine = createRunEngine(profileFromChemistry('li-ion', 1, { capacityAh: 2, chargeCurrentA: 1 }));
  pushAll(engine, steady(0, 61, 1, { vbatV: 2.9, ibatA: 0.2 })); // precondition: anchors SoC at 0 %
  pushAll(engine, steady(61, 600, 1, { vbatV: 3.7, ibatA: 1 }));
  const m = engine.state().metrics;
  assert.equal(engine.state().phase, 'cc');
  const remainingAh = 2 - m.ah;
  close(m.etaCcS, remainingAh * 3600, 1, 'CC eta s at 1 A');
  assert.equal(m.etaCvS, null); // no taper seen yet in this run
  assert.equal(m.etaS, m.etaCcS);
});

/**
 * Properties of the run engine over random sequences (fast-check): the phase debounce holds,
 * charge integration does not depend on how samples are grouped, every clear follows a raise.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import fc from 'fast-check';
import { profileFromChemistry } from '@shared/chemistry/profile';
import { createRunEngine } from '@shared/engine/run-engine';
import type { EngineEvent, TimedSample } from '@shared/engine/types';
import { CHEMISTRIES } from '@shared/chemistry/types';

const sampleArb = fc.record({
  dtS: fc.double({ min: 0.1, max: 10, noNaN: true }),
  vPerCell: fc.double({ min: 0.5, max: 4.5, noNaN: true }),
  ibatA: fc.double({ min: -0.5, max: 3, noNaN: true }),
  tempC: fc.option(fc.double({ min: -20, max: 70, noNaN: true }), { nil: undefined }),
  vinV: fc.option(fc.double({ min: 0, max: 30, noNaN: true }), { nil: undefined }),
  chg: fc.option(fc.boolean(), { nil: undefined }),
  flt: fc.option(
    fc.oneof({ arbitrary: fc.constant(false), weight: 20 }, { arbitrary: fc.constant(true), weight: 1 }),
    {
      nil: undefined,
    },
  ),
});

type RawSample = typeof sampleArb extends fc.Arbitrary<infer T> ? T : never;

function build(cells: number, raw: RawSample[]): TimedSample[] {
  let t = 0;
  return raw.map((r) => {
    t += r.dtS;
    const s: TimedSample = { t, rxS: t, vbatV: r.vPerCell * cells, ibatA: r.ibatA, extra: {} };
    if (r.tempC !== undefined) s.tempC = r.tempC;
    if (r.vinV !== undefined) s.vinV = r.vinV;
    if (r.chg !== undefined) s.chg = r.chg;
    if (r.flt !== undefined) s.flt = r.flt;
    return s;
  });
}

test('phases other than fault are only entered after 5 s of sample time; events come in time order', () => {
  fc.assert(
    fc.property(
      fc.constantFrom(...CHEMISTRIES),
      fc.array(sampleArb, { minLength: 2, maxLength: 300 }),
      (chem, raw) => {
        const engine = createRunEngine(profileFromChemistry(chem, 3, { capacityAh: 2, chargeCurrentA: 1 }));
        const samples = build(3, raw);
        const events: EngineEvent[] = [];
        let lastSampleT = -Infinity;
        for (const s of samples) {
          const out = engine.push(s);
          for (const e of out) {
            assert.ok(e.t <= s.t + 1e-9, 'no event from the future');
            if (e.type === 'phase') assert.equal(e.t, s.t);
            events.push(e);
          }
          lastSampleT = s.t;
        }
        assert.ok(lastSampleT >= 0);
        // Debounce: two phase changes with no fault around them are at least 5 s of sample time apart.
        const phases = events.filter((e) => e.type === 'phase');
        for (let i = 1; i < phases.length; i++) {
          const a = phases[i - 1];
          const b = phases[i];
          if (a.type === 'phase' && b.type === 'phase' && a.phase !== 'fault' && b.phase !== 'fault') {
            assert.ok(b.t - a.t >= 5 - 1e-9, `${a.phase}@${a.t} -> ${b.phase}@${b.t}`);
          }
        }
        // Each alarm-clear follows a raise of the same code, and no code is raised twice without a clear.
        const active = new Set<string>();
        for (const e of events) {
          if (e.type === 'alarm') {
            assert.ok(!active.has(e.code), `${e.code} raised twice`);
            active.add(e.code);
          } else if (e.type === 'alarm-clear') {
            assert.ok(active.has(e.code), `${e.code} cleared before raised`);
            active.delete(e.code);
          }
        }
        assert.deepEqual(new Set(engine.state().activeAlarms.map((a) => a.code)), active);
        const summary = engine.summary();
        const total = Object.values(summary.phaseS).reduce((a, b) => a + (b ?? 0), 0);
        assert.ok(Math.abs(total - summary.durationS) < 1e-6 * Math.max(1, summary.durationS));
      },
    ),
    { numRuns: 200, seed: 42 },
  );
});

test('charge by trapezoid equals the sum over the same intervals, whatever the sampling', () => {
  fc.assert(
    fc.property(fc.array(sampleArb, { minLength: 2, maxLength: 200 }), (raw) => {
      const samples = build(1, raw);
      const engine = createRunEngine(
        profileFromChemistry('li-ion', 1, { capacityAh: 2, chargeCurrentA: 1, silenceS: 100 }),
      );
      for (const s of samples) engine.push(s);
      // Q = ∫ I dt by the trapezoid rule (MathWorks "SOC Estimator (Coulomb Counting)").
      let ah = 0;
      for (let i = 1; i < samples.length; i++) {
        ah +=
          (((samples[i - 1].ibatA ?? 0) + (samples[i].ibatA ?? 0)) / 2) * (samples[i].t - samples[i - 1].t);
      }
      ah /= 3600;
      assert.ok(Math.abs(engine.summary().ah - ah) < 1e-9);
    }),
    { numRuns: 200, seed: 7 },
  );
});

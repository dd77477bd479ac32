/**
 * The sweep engine on the simulator's sweeps: the maximum power point against the simulator's
 * truth, a cloud during the sweep, sweeps that cannot give an answer, the smooth fallback, the
 * advice sentence, the panel-temperature shift and the EN 50530 MPPT efficiency.
 */
import test from 'node:test';
import assert from 'node:assert/strict';
import {
  adviceFor,
  analyseSweep,
  findMaximum,
  fitSmooth,
  mpptEfficiency,
  pointsFromSamples,
  type SweepPoint,
} from '@shared/engine/sweep';
import { chooseFit } from '@shared/engine/sweep/choose-fit';
import { temperatureShift } from '@shared/engine/sweep/temperature';
import type { TimedSample } from '@shared/engine/types';
import { simulateSweep, truthAt } from './sweep-sim';

const within = (actual: number, expected: number, rel: number, what: string): void =>
  assert.ok(
    Math.abs(actual - expected) <= rel * Math.abs(expected),
    `${what}: found ${actual.toFixed(4)}, truth ${expected.toFixed(4)} (allowed ${rel * 100} %)`,
  );

const trimmer = simulateSweep('sweep-trimmer');
const clouds = simulateSweep('sweep-clouds');

function optionsOf(s: typeof trimmer): Parameters<typeof analyseSweep>[1] {
  return { setpointV: s.profile.inputSetpointV, panelTempCoeffPctPerC: s.profile.panelTempCoeffPctPerC };
}

test('steady light: the maximum power point within 1 % of the simulator truth, in V and in W', () => {
  const r = analyseSweep(trimmer.samples, optionsOf(trimmer));
  assert.equal(r.ok, true, r.reason ?? '');
  assert.ok(r.window && r.mppV !== null && r.mppW !== null && r.fit);
  assert.equal(r.fit.model, 'single-diode');
  assert.equal(r.irradiance?.changed, false);
  // The truth drifts a little with the sun during the sweep: every instant of it must agree.
  const during = trimmer.truth.filter((x) => x.t >= r.window!.fromS && x.t <= r.window!.toS);
  assert.ok(during.length > 500);
  for (const x of during) {
    within(r.mppV, x.mppV, 0.01, `V at ${x.t} s`);
    within(r.mppW, x.mppW, 0.01, `W at ${x.t} s`);
  }
  // Noisy samples (0.01 V and 1 mA of measurement noise, rounded like the firmware's lines).
  assert.ok(r.fit.rmsW > 0.005 && r.fit.rmsW < 0.2, `rms ${r.fit.rmsW} W`);
  assert.equal(r.setpointV, 18.4);
  assert.ok(Math.abs((r.operatingV ?? 0) - 18.4) < 0.05);
});

test('a cloud during the sweep: restarted on the steady stretch, within 3 % of the truth there, or refused with the reason', () => {
  const r = analyseSweep(clouds.samples, optionsOf(clouds));
  assert.ok(r.irradiance?.changed, 'the change of light is reported');
  assert.match(
    r.irradiance.evidence ?? '',
    /light changed during the sweep: at [\d.]+ V the source gave [\d.]+ W at \d+ s and [\d.]+ W at \d+ s/,
  );
  if (!r.ok) {
    assert.match(r.reason ?? '', /light changed/);
    return;
  }
  const on = r.irradiance.restartedOn;
  assert.ok(on, 'the fit was restarted on a steady stretch');
  for (const x of clouds.truth.filter((t) => t.t >= on.fromS && t.t <= on.toS)) {
    within(r.mppV!, x.mppV, 0.03, `V at ${x.t} s`);
    within(r.mppW!, x.mppW, 0.03, `W at ${x.t} s`);
  }
  // The cloud itself is outside the stretch the answer rests on.
  const cloudy = clouds.truth.filter((x) => x.irradianceWPerM2 < 0.9 * 900);
  assert.ok(cloudy.length > 0 && cloudy.every((x) => x.t < on.fromS || x.t > on.toS));
});

test('the sweep scenarios meet their expected outcome: panel-limited bulk, no critical alarm', () => {
  for (const run of [trimmer, clouds]) {
    const phases = run.events
      .filter((e) => e.type === 'phase')
      .map((e) => (e.type === 'phase' ? e.phase : ''));
    assert.ok(phases.includes('cc'), phases.join(','));
    assert.ok(!phases.includes('fault'));
    assert.ok(!run.events.some((e) => e.type === 'alarm' && e.level === 'critical'));
  }
});

test('a sweep that never passes the maximum is refused: the peak lies outside the swept range', () => {
  const high = trimmer.samples.filter((s) => (s.vinV ?? 0) > 17.3);
  const r = analyseSweep(high, optionsOf(trimmer));
  assert.equal(r.ok, false);
  assert.match(r.reason ?? '', /outside the swept range; turn the set point further down/);
});

test('a run without a sweep says so', () => {
  const steady = trimmer.samples.filter((s) => s.t < 250);
  const r = analyseSweep(steady, optionsOf(trimmer));
  assert.equal(r.ok, false);
  assert.match(r.reason ?? '', /no sweep found/);
  const none = analyseSweep(
    steady.map((s) => ({ ...s, vinV: undefined })),
    optionsOf(trimmer),
  );
  assert.match(none.reason ?? '', /no samples carry both source voltage/);
});

test('points that do not follow one diode curve get the smooth fit, which still finds the higher peak', () => {
  // Invented two-hump P-V curve (a panel with one shaded substring behind its bypass diode).
  const pts: SweepPoint[] = [];
  for (let k = 0; k < 400; k++) {
    const v = 8 + (12 * k) / 399;
    const p = 9 * Math.exp(-(((v - 11) / 1.6) ** 2)) + 14 * Math.exp(-(((v - 16.5) / 1.4) ** 2));
    const noise = 0.03 * Math.sin(k * 12.9898);
    pts.push({ tS: k, vV: v, iA: (p + noise) / v, pW: p + noise });
  }
  const curve = chooseFit(pts);
  assert.equal(curve?.model, 'smooth');
  const max = findMaximum(curve!);
  assert.ok(max.ok);
  assert.ok(Math.abs(max.mpp.vV - 16.5) < 0.15, `peak at ${max.mpp.vV}`);
  assert.ok(Math.abs(max.mpp.pW - 14) < 0.2);
  assert.ok((fitSmooth(pts)?.rmsW ?? 1) < 0.05);
});

test('the advice sentence: which way, how far, and what it is worth', () => {
  assert.equal(
    adviceFor(16.6, 16.45, 17.4, 15.5).text,
    'turn the set point down about 0.8 V: about 6 % more power at this light',
  );
  assert.equal(
    adviceFor(17.2, 16.0, 15.9, 15.7).text,
    'turn the set point up about 1.3 V: about 1.9 % more power at this light',
  );
  assert.match(adviceFor(16.6, 16.45, 16.62, 16.449).text, /^leave the set point where it is/);
});

test('the best set point moves with the panel temperature coefficient', () => {
  const t = temperatureShift(16.6, -0.36, [38, 38.2, 37.8], [20, 38, 52]);
  assert.ok(t);
  assert.ok(Math.abs(t.shiftVPerC - -0.05976) < 1e-4);
  assert.ok(Math.abs(t.at25CV - (16.6 + 0.05976 * 13)) < 1e-3);
  assert.equal(t.hottestC, 52);
  assert.match(t.text, /moves down about 0\.06 V per °C warmer/);
  const r = analyseSweep(trimmer.samples, optionsOf(trimmer));
  assert.ok(
    r.temperature && Math.abs(r.temperature.sweepTempC - 38) < 1.5,
    'tpanel read from the extra channel',
  );
});

test('EN 50530 MPPT efficiency on a hand-computed case', () => {
  // eta = integral(v i dt) / integral(P_MPP dt) (EN 50530; formula from memory). Samples every
  // 10 s: taken 9, 10, 10, 8 W; available 10 W throughout. Trapezoids: taken
  // 10 (9.5 + 10 + 9) = 285 J, available 300 J: eta = 0.95; the static form
  // integral(v i dt) / (P_MPP T_M) = 285 / (10 * 30) gives the same.
  const e = mpptEfficiency([0, 10, 20, 30], [9, 10, 10, 8], [10, 10, 10, 10]);
  assert.equal(e.efficiency, 0.95);
  assert.ok(Math.abs(e.takenWh - 285 / 3600) < 1e-12);
  assert.ok(Math.abs(e.availableWh - 300 / 3600) < 1e-12);
  // A gap longer than a minute is not integrated across.
  assert.equal(mpptEfficiency([0, 10, 200, 210], [5, 5, 10, 10], [10, 10, 10, 10]).efficiency, 0.75);
});

test('whole-run MPPT efficiency of the trimmer run matches the simulator truth', () => {
  const r = analyseSweep(trimmer.samples, optionsOf(trimmer));
  assert.ok(r.day && r.day.efficiency !== null);
  // Truth: the panel's true maximum at every sample, and the power actually taken.
  const pts = pointsFromSamples(trimmer.samples);
  const truthEta = mpptEfficiency(
    pts.map((p) => p.tS),
    pts.map((p) => p.pW),
    pts.map((p) => truthAt(trimmer.truth, p.tS).mppW),
  ).efficiency!;
  assert.ok(Math.abs(r.day.efficiency - truthEta) < 0.01, `estimated ${r.day.efficiency}, truth ${truthEta}`);
  assert.ok(r.day.coverage > 0.9);
});

test('the points helper skips samples without both vin and iin', () => {
  const s = (t: number, vinV?: number, iinA?: number): TimedSample => ({ t, rxS: t, vinV, iinA, extra: {} });
  assert.deepEqual(
    pointsFromSamples([s(0, 17, 1), s(1, 17), s(2, undefined, 1), s(3, -1, 1), s(4, 16, 0.5)]).map(
      (p) => p.tS,
    ),
    [0, 4],
  );
});

test('a morning of passing clouds and three sweeps: the estimated MPPT efficiency matches the truth', () => {
  const day = simulateSweep('sweep-day');
  const r = analyseSweep(day.samples, optionsOf(day));
  assert.equal(r.ok, true, r.reason ?? '');
  assert.equal(r.sweeps, 3);
  assert.ok(r.day && r.day.efficiency !== null && r.day.sweeps >= 2, JSON.stringify(r.refused));
  // Truth: EN 50530's ratio with the simulator's true maximum at every sample.
  const pts = pointsFromSamples(day.samples);
  const truthEta = mpptEfficiency(
    pts.map((p) => p.tS),
    pts.map((p) => p.pW),
    pts.map((p) => truthAt(day.truth, p.tS).mppW),
  ).efficiency!;
  assert.ok(Math.abs(r.day.efficiency - truthEta) < 0.01, `estimated ${r.day.efficiency}, truth ${truthEta}`);
  assert.ok(r.day.coverage > 0.9, `coverage ${r.day.coverage}`);
  // The last sweep answers the question, about the set point the person left.
  assert.ok(r.window && r.window.fromS > 10_000);
});

/**
 * Diagnosis cause modules on small synthetic histories (invented data, one pattern per cause),
 * with the published source of each threshold named beside the assertions that rest on them.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { profileFromChemistry } from '@shared/chemistry/profile';
import type { ResolvedProfile } from '@shared/chemistry/types';
import { CAUSE_CODES, diagnose, type Diagnosis } from '@shared/engine/diagnosis';
import type { AlarmCode, EngineEvent, Phase, TimedSample } from '@shared/engine/types';

// Invented demo pack: a trail camera's 3S 2.5 Ah Li-ion pack on a bench adapter.
const liion3s = (overrides: Parameters<typeof profileFromChemistry>[2] = {}): ResolvedProfile =>
  profileFromChemistry('li-ion', 3, {
    capacityAh: 2.5,
    chargeCurrentA: 1,
    terminationA: 0.1,
    timerMin: 300,
    ...overrides,
  });

type Fields = Omit<TimedSample, 't' | 'rxS' | 'extra'>;

/** Samples every dtS seconds from 0 to durationS; `at` gives each sample's readings. */
function history(durationS: number, dtS: number, at: (t: number) => Fields): TimedSample[] {
  const out: TimedSample[] = [];
  for (let t = 0; t <= durationS + 1e-9; t += dtS) out.push({ t, rxS: t, extra: {}, ...at(t) });
  return out;
}
const phase = (t: number, p: Phase): EngineEvent => ({ type: 'phase', t, phase: p });
const critical = (t: number, code: AlarmCode): EngineEvent => ({
  type: 'alarm',
  t,
  code,
  level: 'critical',
  message: code,
});

/** A healthy CC/CV charge of the 3S pack: CC at 1 A to 12.60 V, then an exponential taper. */
function cleanCharge(): { samples: TimedSample[]; events: EngineEvent[] } {
  const ccEnd = 7200;
  const samples = history(10800, 5, (t) => {
    if (t < ccEnd) {
      return { vbatV: 11.1 + (1.5 * t) / ccEnd, ibatA: 1, tempC: 25 + (6 * t) / ccEnd, vinV: 19, iinA: 0.8 };
    }
    const ibatA = Math.max(0.1, Math.exp(-(t - ccEnd) / 1500));
    return { vbatV: 12.6, ibatA, tempC: 31 - (3 * (t - ccEnd)) / 3600, vinV: 19, iinA: 0.75 * ibatA };
  });
  const events = [phase(0, 'cc'), phase(ccEnd, 'cv'), phase(10800, 'done')];
  return { samples, events };
}

function top(d: Diagnosis): string {
  return d.causes[0]?.code ?? 'none';
}
function conf(d: Diagnosis, code: string): number {
  return d.causes.find((c) => c.code === code)?.confidence ?? 0;
}
function assertTrueCauseFirst(d: Diagnosis, code: string): void {
  assert.equal(
    top(d),
    code,
    `expected ${code} first, got ${JSON.stringify(d.causes.map((c) => [c.code, c.confidence]))}`,
  );
  const runnerUp = d.causes[1]?.confidence ?? 0;
  assert.ok(d.causes[0].confidence > runnerUp, `${code} must beat the runner-up (${runnerUp})`);
  assert.ok(d.causes[0].evidence.length > 0, 'a cause carries evidence');
  assert.ok(d.causes[0].next.length > 0, 'a cause carries next steps');
}

test('the diagnosis is exactly the JSON of diagnose --json: t and causes sorted by confidence', () => {
  const { samples, events } = cleanCharge();
  const d = diagnose({ profile: liion3s(), samples, events });
  assert.deepEqual(Object.keys(d).sort(), ['causes', 't']);
  for (let i = 1; i < d.causes.length; i++) assert.ok(d.causes[i - 1].confidence >= d.causes[i].confidence);
  for (const c of d.causes) {
    assert.ok(CAUSE_CODES.includes(c.code));
    assert.deepEqual(Object.keys(c).sort(), ['code', 'confidence', 'evidence', 'next']);
    assert.ok(c.confidence >= 0 && c.confidence <= 1);
  }
  assert.deepEqual(JSON.parse(JSON.stringify(d)), d, 'plain JSON, no undefined or class instances');
});

test('a clean charge reports no cause above 0.3 and diagnoses the end of the run', () => {
  const { samples, events } = cleanCharge();
  const d = diagnose({ profile: liion3s(), samples, events });
  assert.equal(d.t, 10800);
  for (const c of d.causes)
    assert.ok(c.confidence <= 0.3, `${c.code} scored ${c.confidence} on a clean charge`);
});

test('damaged-cell: precondition that does not end, voltage that does not rise', () => {
  const profile = liion3s({ preconditionTimeoutMin: 30 });
  // Precondition threshold ~3.0 V/cell (Junlee blog "What are the stages of charging a lithium-ion battery", ElectroDragon wiki "< 3 V, pre-charge 0.1C").
  assert.equal(profile.preconditionVPerCell, 3.0);
  const samples = history(1800, 2, () => ({ vbatV: 5.71, ibatA: 0.2, tempC: 24, vinV: 19, iinA: 0.1 }));
  const events = [phase(0, 'precondition'), critical(1800, 'precondition-timeout'), phase(1800, 'fault')];
  const d = diagnose({ profile, samples, events });
  assert.equal(d.t, 1800);
  assertTrueCauseFirst(d, 'damaged-cell');
  assert.ok(d.causes[0].confidence >= 0.6);
  const text = d.causes[0].evidence.join(' | ');
  assert.match(text, /stayed at 5\.71 V, below the 9\.00 V precondition threshold, for 30 min under 0\.20 A/);
  assert.match(d.causes[0].next.join(' '), /2\.5 V/);
});

test('damaged-cell: a pack hovering at the threshold until the precondition timer expired ranks first', () => {
  // The engine holds precondition until 1 % above the ~3.0 V/cell threshold (Junlee blog;
  // ElectroDragon wiki "Lithium Battery Charge"); this invented pack rises 8.40 -> 9.05 V (3S) at
  // C/10 and crosses 9.00 V but never clears 9.09 V in the 30 min limit: the timer expires.
  const profile = liion3s({ preconditionTimeoutMin: 30 });
  const samples = history(1800, 2, (t) => ({
    vbatV: 8.4 + (0.65 * t) / 1800,
    ibatA: 0.25,
    tempC: 24,
    vinV: 19,
  }));
  const events = [phase(0, 'precondition'), critical(1800, 'precondition-timeout'), phase(1800, 'fault')];
  const d = diagnose({ profile, samples, events });
  assertTrueCauseFirst(d, 'damaged-cell');
  assert.ok(d.causes[0].confidence >= 0.5, `damaged-cell at ${d.causes[0].confidence}`);
  assert.ok(!d.causes.some((c) => c.code === 'unknown'), 'the fault is explained');
  assert.match(
    d.causes[0].evidence.join(' | '),
    /the precondition timer expired: the pack stayed in precondition for 30 min/,
  );
});

test('damaged-cell: a pack above 3.0 V/cell is not held in precondition', () => {
  // 3.1 V/cell is above the ~3.0 V/cell precondition threshold (Junlee blog; ElectroDragon wiki "Lithium Battery Charge").
  const samples = history(1800, 2, () => ({ vbatV: 9.3, ibatA: 0.2, tempC: 24 }));
  const d = diagnose({ profile: liion3s({ preconditionTimeoutMin: 30 }), samples, events: [phase(0, 'cc')] });
  assert.ok(conf(d, 'damaged-cell') < 0.3);
});

test('damaged-cell: the pack voltage collapses by a cell while the current holds', () => {
  const samples = history(3600, 2, (t) => ({
    vbatV: t < 2400 ? 11.4 + t / 10000 : 7.7,
    ibatA: 1,
    tempC: 28,
  }));
  const events = [phase(0, 'cc'), critical(3600, 'fault-pin'), phase(3600, 'fault')];
  const d = diagnose({ profile: liion3s(), samples, events });
  assertTrueCauseFirst(d, 'damaged-cell');
  assert.match(d.causes[0].evidence.join(' '), /collapsed from 11\.64 V to 7\.70 V/);
});

test('weak-source: a panel at its set point that cannot give the set current, ending on the timer', () => {
  const profile = liion3s({ inputSetpointV: 14.5, timerMin: 240 });
  const samples = history(240 * 60, 10, (t) => ({
    vbatV: 10.8 + (1.4 * t) / 14400,
    ibatA: 0.38,
    tempC: 27,
    vinV: 14.45,
    iinA: 0.33,
  }));
  const events = [phase(0, 'cc'), critical(14400, 'timer'), phase(14400, 'fault')];
  const d = diagnose({ profile, samples, events });
  // The panel is the physical cause; the timer only ended a charge the source could not finish.
  assertTrueCauseFirst(d, 'weak-source');
  assert.equal(d.causes[1].code, 'timer-expired');
  assert.match(d.causes[0].evidence.join(' '), /14\.50 V input set point/);
});

test('overtemperature: a pack that heats past the 45 °C window top under charge', () => {
  const profile = liion3s();
  // Charge window top 45 °C (TI E2E design note "JEITA Battery Temperature Standard", pre-JEITA window 0–45 °C).
  assert.equal(profile.tempWindowC[1], 45);
  const samples = history(3600, 5, (t) => ({
    vbatV: 11.2 + t / 5000,
    ibatA: 1,
    tempC: 28 + (18.5 * t) / 3600,
  }));
  const alarmT = 3310; // first 5 s sample above 45 °C (45.01 °C)
  const events = [phase(0, 'cc'), critical(alarmT, 'overtemp'), phase(alarmT, 'fault')];
  const d = diagnose({ profile, samples, events });
  assertTrueCauseFirst(d, 'overtemperature');
  assert.match(d.causes[0].evidence[0], /above the 45\.0 °C top of the charge window/);
  assert.match(d.causes[0].evidence.join(' '), /1\.00 A was flowing/);
});

test('overtemperature: a peak of 44 °C, under the 45 °C window top, is not a cause', () => {
  // 45 °C top of the standard charge window (TI E2E design note "JEITA Battery Temperature Standard").
  const samples = history(3600, 5, (t) => ({
    vbatV: 11.2 + t / 5000,
    ibatA: 1,
    tempC: 28 + (16 * t) / 3600,
  }));
  const d = diagnose({ profile: liion3s(), samples, events: [phase(0, 'cc')] });
  assert.ok(conf(d, 'overtemperature') <= 0.3);
});

test('thermistor-fault: raw ntc pinned at the ADC top rail, temperature jumping 60 °C in a second', () => {
  const profile = liion3s({
    thermistor: { model: 'beta', r25: 10000, beta: 3435, pullupOhm: 10000, adcMax: 4095 },
  });
  const samples = history(1200, 1, (t) =>
    t < 1000
      ? { vbatV: 11.5, ibatA: 1, tempC: 26, ntcRaw: 2048 }
      : { vbatV: 11.5, ibatA: 1, tempC: -35, ntcRaw: 4095 },
  );
  const events = [phase(0, 'cc'), critical(1000, 'undertemp'), phase(1000, 'fault')];
  const d = diagnose({ profile, samples, events });
  assert.equal(d.t, 1000);
  assertTrueCauseFirst(d, 'thermistor-fault');
  assert.match(d.causes[0].evidence.join(' '), /4095 counts, pinned at the ADC top rail/);
  assert.match(d.causes[0].evidence.join(' '), /jumped from 26\.0 °C to -35\.0 °C in 1\.0 s/);
});

test('thermistor-fault: a shorted NTC reads hot by a jump, and is not called overtemperature', () => {
  const profile = liion3s({
    thermistor: { model: 'beta', r25: 10000, beta: 3435, pullupOhm: 10000, adcMax: 4095 },
  });
  const samples = history(1200, 1, (t) =>
    t < 1000
      ? { vbatV: 11.5, ibatA: 1, tempC: 26, ntcRaw: 2048 }
      : { vbatV: 11.5, ibatA: 1, tempC: 118, ntcRaw: 0 },
  );
  const events = [phase(0, 'cc'), critical(1000, 'overtemp'), phase(1000, 'fault')];
  const d = diagnose({ profile, samples, events });
  assertTrueCauseFirst(d, 'thermistor-fault');
  assert.ok(conf(d, 'overtemperature') < 0.3, 'a jump to 118 °C in a second is the sensor, not the pack');
});

test('timer-expired: a pack bigger than the profile says runs out the timer at full current', () => {
  const profile = liion3s({ timerMin: 180 });
  // 3 h at 1 A into a "2.5 Ah" pack that is really ~3.5 Ah: still in CC when the timer ends.
  const samples = history(180 * 60, 10, (t) => ({
    vbatV: 11 + (1.3 * t) / 10800,
    ibatA: 1,
    tempC: 29,
    vinV: 19,
    iinA: 0.8,
  }));
  const events = [phase(0, 'cc'), critical(10800, 'timer'), phase(10800, 'fault')];
  const d = diagnose({ profile, samples, events });
  assertTrueCauseFirst(d, 'timer-expired');
  assert.match(d.causes[0].evidence.join(' '), /3\.00 Ah went in, more than the profile's 2\.50 Ah/);
  assert.ok(conf(d, 'weak-source') < 0.3, 'the source gave the full set current');
});

test('overvoltage: CV regulation drifting above the 4.25 V/cell upper limit', () => {
  const profile = liion3s();
  // Li-ion CV 4.20 V/cell ±50 mV (Battery University BU-409 "Charging Lithium-ion"); upper-limit charge voltage 4.25 V/cell (TI E2E JEITA note).
  assert.equal(profile.regulationVPerCell, 4.2);
  assert.equal(profile.overvoltageVPerCell, 4.25);
  const ccEnd = 3600;
  const samples = history(7200, 5, (t) =>
    t < ccEnd
      ? { vbatV: 11.2 + (1.4 * t) / ccEnd, ibatA: 1, tempC: 28 }
      : { vbatV: 12.6 + (0.2 * (t - ccEnd)) / 3600, ibatA: 0.5, tempC: 28 },
  );
  const crossT = ccEnd + (0.15 / 0.2) * 3600; // 12.75 V = 4.25 V/cell
  const events = [
    phase(0, 'cc'),
    phase(ccEnd, 'cv'),
    critical(crossT, 'overvoltage'),
    phase(crossT, 'fault'),
  ];
  const d = diagnose({ profile, samples, events });
  assertTrueCauseFirst(d, 'overvoltage');
  assert.match(d.causes[0].evidence.join(' '), /regulation rose from 12\.6\d V to 12\.7\d V/);
});

test('overvoltage: regulation within 4.20 V/cell ± 50 mV is not a cause', () => {
  // 4.24 V/cell sits inside BU-409's 4.20 V/cell ± 50 mV ("Charging Lithium-ion").
  const samples = history(7200, 5, (t) => ({
    vbatV: t < 3600 ? 11.2 + (1.52 * t) / 3600 : 12.72,
    ibatA: t < 3600 ? 1 : 0.4,
  }));
  const d = diagnose({ profile: liion3s(), samples, events: [phase(0, 'cc'), phase(3600, 'cv')] });
  assert.ok(conf(d, 'overvoltage') <= 0.3);
});

test('overvoltage: a pack held at 4.27 V/cell, above the 4.25 V/cell JEITA upper limit, is a cause', () => {
  // 4.27 V/cell > 4.25 V/cell upper-limit charge voltage (TI E2E design note "JEITA Battery Temperature Standard").
  const samples = history(7200, 5, (t) => ({
    vbatV: t < 3600 ? 11.2 + (1.61 * t) / 3600 : 12.81,
    ibatA: t < 3600 ? 1 : 0.4,
  }));
  const events = [phase(0, 'cc'), phase(3600, 'cv'), critical(7200, 'overvoltage'), phase(7200, 'fault')];
  const d = diagnose({ profile: liion3s(), samples, events });
  assertTrueCauseFirst(d, 'overvoltage');
  assert.ok(d.causes[0].confidence > 0.5);
});

test('connection: voltage steps with no current step, and telemetry dropouts', () => {
  const samples = history(3600, 2, (t) => {
    const open = Math.floor(t / 300) % 2 === 1 && t % 300 < 20; // a contact bouncing every 10 min
    return { vbatV: 11.3 + t / 20000 + (open ? 0.6 : 0), ibatA: 1, tempC: 27 };
  }).filter((s) => !(s.t > 2000 && s.t < 2040) && !(s.t > 3000 && s.t < 3030));
  const events: EngineEvent[] = [
    phase(0, 'cc'),
    { type: 'gap', t: 2000, endT: 2040, reason: 'no line for 40 s' },
    critical(3600, 'fault-pin'),
    phase(3600, 'fault'),
  ];
  const d = diagnose({ profile: liion3s(), samples, events });
  assertTrueCauseFirst(d, 'connection');
  assert.match(d.causes[0].evidence.join(' '), /stepped \d+ time\(s\) by more than 0\.15 V/);
  assert.match(d.causes[0].evidence.join(' '), /telemetry stopped/);
});

test('unknown: a fault output with nothing in the history carries what is known', () => {
  const { samples, events } = cleanCharge();
  samples[samples.length - 1].flt = true;
  const d = diagnose({ profile: liion3s(), samples, events });
  assert.equal(top(d), 'unknown');
  assert.match(d.causes[0].evidence[0], /fault output \(flt\) asserted/);
});

test('atT: only the history up to the diagnosed time counts', () => {
  const samples = history(3600, 5, (t) => ({
    vbatV: 11.2 + t / 5000,
    ibatA: 1,
    tempC: t < 1800 ? 28 : 28 + (t - 1800) / 60,
  }));
  const events = [phase(0, 'cc'), critical(2820, 'overtemp'), phase(2820, 'fault')];
  const early = diagnose({ profile: liion3s(), samples, events, atT: 1500 });
  assert.equal(early.t, 1500);
  assert.ok(conf(early, 'overtemperature') === 0, 'the heating after t = 1500 s is not history yet');
  const first = diagnose({ profile: liion3s(), samples, events });
  assert.equal(first.t, 2820);
  assert.equal(top(first), 'overtemperature');
});

test('a 7-day 1 Hz history (604,800 samples) is diagnosed in one pass', (t) => {
  const n = 7 * 24 * 3600;
  const samples: TimedSample[] = new Array(n);
  for (let i = 0; i < n; i++) {
    const day = (i % 86400) / 86400;
    samples[i] = {
      t: i,
      rxS: i,
      extra: {},
      vbatV: 12.5 + 0.05 * Math.sin(day * 6.28),
      ibatA: 0.05,
      tempC: 24,
      vinV: 18,
      iinA: 0.05,
    };
  }
  const started = performance.now();
  const d = diagnose({ profile: liion3s({ timerMin: null }), samples, events: [phase(0, 'done')] });
  const ms = performance.now() - started;
  t.diagnostic(`diagnose on ${n} samples: ${ms.toFixed(0)} ms`);
  assert.equal(d.t, n - 1);
  for (const c of d.causes) assert.ok(c.confidence <= 0.3);
});

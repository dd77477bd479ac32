/**
 * Every alarm code of docs/codes.md on synthetic sequences (invented data): raised with its
 * level once per episode, debounced, cleared when the condition is gone, with numbers in the message.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { profileFromChemistry } from '@shared/chemistry/profile';
import { createRunEngine } from '@shared/engine/run-engine';
import { ALARM_CODES, type AlarmEvent, type EngineEvent } from '@shared/engine/types';
import { ALARM_RULES } from '@shared/engine/alarms';
import { alarmsOf, noise, phasesOf, pushAll, steady } from './engine-synthetic';

// Invented demo pack: a 3S Li-ion garden-sensor pack, 2.5 Ah at 1 A.
const li = (overrides = {}) =>
  profileFromChemistry('li-ion', 3, { capacityAh: 2.5, chargeCurrentA: 1, terminationA: 0.1, ...overrides });

const clears = (events: EngineEvent[], code: string) =>
  events.filter((e) => e.type === 'alarm-clear' && e.code === code);
const only = (events: EngineEvent[], code: string): AlarmEvent => {
  const raised = alarmsOf(events).filter((a) => a.code === code);
  assert.equal(raised.length, 1, `exactly one ${code}: ${JSON.stringify(alarmsOf(events))}`);
  return raised[0];
};

test('levels: critical only where someone must act (docs/codes.md)', () => {
  const critical = ALARM_CODES.filter((c) => ALARM_RULES[c].level === 'critical').sort();
  assert.deepEqual(critical, [
    'fault-pin',
    'overtemp',
    'overvoltage',
    'precondition-timeout',
    'sensor-fault',
    'timer',
  ]);
  // contact is raised as a warning and escalated only when it keeps repeating.
  assert.equal(ALARM_RULES.contact.level, 'warn');
  assert.equal(ALARM_RULES['input-low'].level, 'warn');
  assert.equal(ALARM_RULES.undertemp.level, 'warn');
  assert.equal(ALARM_RULES['reverse-current'].level, 'warn');
});

test('a hot pack raises one critical overtemp with the numbers; it clears only back inside the window', () => {
  // TI E2E JEITA note: pre-JEITA charge window 0–45 °C.
  const engine = createRunEngine(li());
  pushAll(engine, steady(0, 60, 1, { vbatV: 11.4, ibatA: 1, tempC: 40 }));
  const hot = pushAll(engine, steady(60, 1800, 1, { vbatV: 11.4, ibatA: 1, tempC: 47.3 }));
  const a = only(hot, 'overtemp');
  assert.equal(a.level, 'critical');
  assert.ok(a.t >= 63 && a.t <= 64, `raised at ${a.t} after the 3 s debounce`);
  assert.match(a.message, /47\.3 °C, above the 45 °C charge limit/);
  assert.match(a.message, /let it cool/);
  assert.equal(
    engine
      .state()
      .activeAlarms.map((x) => x.code)
      .join(),
    'overtemp',
  );
  // 44.5 °C is inside the window but inside the 1 °C hysteresis: still active.
  assert.equal(
    clears(pushAll(engine, steady(1860, 60, 1, { vbatV: 11.4, ibatA: 0.2, tempC: 44.5 })), 'overtemp').length,
    0,
  );
  const cool = pushAll(engine, steady(1920, 60, 1, { vbatV: 11.4, ibatA: 0.2, tempC: 40 }));
  assert.equal(clears(cool, 'overtemp').length, 1);
  assert.deepEqual(engine.state().activeAlarms, []);
});

test('one hot sample is not an alarm (debounce)', () => {
  const engine = createRunEngine(li());
  const events = pushAll(engine, [
    ...steady(0, 30, 1, { vbatV: 11.4, ibatA: 1, tempC: 30 }),
    ...steady(30, 1, 1, { vbatV: 11.4, ibatA: 1, tempC: 80 }),
    ...steady(31, 30, 1, { vbatV: 11.4, ibatA: 1, tempC: 30 }),
  ]);
  assert.deepEqual(alarmsOf(events), []);
});

test('a cold pack while charging is an undertemp warning; not charging, no alarm', () => {
  const engine = createRunEngine(li());
  const a = only(pushAll(engine, steady(0, 60, 1, { vbatV: 11.4, ibatA: 1, tempC: -2.1 })), 'undertemp');
  assert.equal(a.level, 'warn');
  assert.match(a.message, /-2\.1 °C, below the 0 °C charge limit/);
  const idle = createRunEngine(li());
  assert.deepEqual(
    alarmsOf(pushAll(idle, steady(0, 60, 1, { vbatV: 11.4, ibatA: 0, src: 'none', tempC: -5 }))),
    [],
  );
});

test('overvoltage above 4.25 V/cell is critical and clears below the limit', () => {
  // TI E2E JEITA note: 4.25 V/cell upper limit.
  const engine = createRunEngine(li());
  pushAll(engine, steady(0, 30, 1, { vbatV: 12.6, ibatA: 0.5 }));
  const high = pushAll(engine, steady(30, 30, 1, { vbatV: 12.9, ibatA: 0.5 }));
  const a = only(high, 'overvoltage');
  assert.equal(a.level, 'critical');
  assert.match(a.message, /12\.90 V \(4\.300 V\/cell\), above the 4\.25 V\/cell limit/);
  assert.equal(
    clears(pushAll(engine, steady(60, 30, 1, { vbatV: 12.6, ibatA: 0.3 })), 'overvoltage').length,
    1,
  );
});

test('a pack stuck below the precondition threshold: precondition-timeout (critical) and fault', () => {
  // Junlee / ElectroDragon: precondition below ≈ 3.0 V/cell at ≤ C/10. docs/codes.md: timeout 30 min without a timer.
  const engine = createRunEngine(li());
  const events = pushAll(
    engine,
    steady(0, 3600, 1, { vbatV: 7.5, ibatA: 0.25, chg: true, flt: false, tempC: 25 }),
  );
  assert.deepEqual(phasesOf(events), ['precondition', 'fault']);
  const a = only(events, 'precondition-timeout');
  assert.equal(a.level, 'critical');
  assert.equal(a.t, 1800);
  assert.match(
    a.message,
    /below the 3\.00 V\/cell precondition threshold \(now 2\.500 V\/cell\) after 30 min/,
  );
  // The charger stops: still a fault (it is the charger's latched timeout), not idle.
  assert.deepEqual(
    phasesOf(pushAll(engine, steady(3600, 60, 1, { vbatV: 7.4, ibatA: 0, chg: false, flt: false }))),
    [],
  );
  assert.equal(engine.state().phase, 'fault');
});

test('with a safety timer the precondition timeout is timerMin/8 (docs/codes.md)', () => {
  const engine = createRunEngine(li({ timerMin: 80 }));
  const a = only(pushAll(engine, steady(0, 1200, 1, { vbatV: 7.5, ibatA: 0.25 })), 'precondition-timeout');
  assert.equal(a.t, 600); // 80 min / 8 = 10 min
});

test('the fault pin during precondition raises precondition-timeout at once, with fault-pin', () => {
  const engine = createRunEngine(li());
  pushAll(engine, steady(0, 120, 1, { vbatV: 7.8, ibatA: 0.25, chg: true, flt: false }));
  const events = engine.push({ t: 120, rxS: 120, vbatV: 7.8, ibatA: 0, chg: false, flt: true, extra: {} });
  assert.deepEqual(
    alarmsOf(events)
      .map((a) => a.code)
      .sort(),
    ['fault-pin', 'precondition-timeout'],
  );
  assert.match(
    only(events, 'precondition-timeout').message,
    /fault output during precondition at 2\.600 V\/cell/,
  );
  assert.deepEqual(phasesOf(events), ['fault']);
});

test('the safety timer expires without termination: timer (critical) and fault', () => {
  const engine = createRunEngine(li({ timerMin: 60 }));
  const events = pushAll(engine, steady(0, 4000, 1, { vbatV: 12.6, ibatA: 0.4, tempC: 25 }));
  const a = only(events, 'timer');
  assert.equal(a.level, 'critical');
  assert.equal(a.t, 3600);
  assert.match(a.message, /60 min safety timer .*\(now 0\.400 A, ends at 0\.100 A\)/);
  assert.deepEqual(phasesOf(events), ['cv', 'fault']);
});

test('stall: the charger says charging but neither voltage nor charge rises for stallMin; noise is not progress', () => {
  const engine = createRunEngine(li({ stallMin: 20 }));
  pushAll(engine, steady(0, 120, 1, { vbatV: 11.4, ibatA: 1, chg: true }));
  const rnd = noise(3);
  const stuck = [];
  for (let t = 120; t < 120 + 1500; t++) {
    // Nothing flows (an open pack lead), the voltage reading jitters by ±20 mV.
    stuck.push({ t, rxS: t, vbatV: 11.4 + 0.04 * rnd(), ibatA: 0.003 * rnd(), chg: true, extra: {} });
  }
  const events = pushAll(engine, stuck);
  const a = only(events, 'stall');
  assert.equal(a.level, 'warn');
  // 20 min after the last progress, which was within the last 0.2 % of capacity (18 s at 1 A) before t = 120 s.
  assert.ok(a.t >= 120 + 1200 - 18 && a.t < 120 + 1210, `stall at ${a.t}`);
  assert.match(a.message, /No progress for 20 min in cc/);
  // Current returns: the stall clears.
  assert.equal(
    clears(pushAll(engine, steady(1620, 60, 1, { vbatV: 11.5, ibatA: 1, chg: true })), 'stall').length,
    1,
  );
  // A real charge with a flat voltage (the LiFePO4 plateau) makes progress in charge: no stall.
  const flat = createRunEngine(profileFromChemistry('lifepo4', 4, { capacityAh: 20, stallMin: 20 }));
  assert.deepEqual(alarmsOf(pushAll(flat, steady(0, 3600, 1, { vbatV: 13.3, ibatA: 10 }))), []);
});

test('input-low: source at the set point or under the pack is a warning; missing vin never raises it', () => {
  const engine = createRunEngine(li({ inputSetpointV: 14.5 }));
  const events = pushAll(engine, steady(0, 60, 1, { vbatV: 11.4, ibatA: 0.6, vinV: 14.4, iinA: 0.5 }));
  const a = only(events, 'input-low');
  assert.equal(a.level, 'warn');
  assert.equal(a.t, 10);
  assert.match(a.message, /14\.40 V is at or under the 14\.5 V input set point/);
  assert.equal(
    clears(pushAll(engine, steady(60, 60, 1, { vbatV: 11.4, ibatA: 1, vinV: 17 })), 'input-low').length,
    1,
  );
  // Adapter board with no vin/iin: nothing to judge.
  const noVin = createRunEngine(li({ inputSetpointV: 14.5 }));
  assert.deepEqual(alarmsOf(pushAll(noVin, steady(0, 120, 1, { vbatV: 11.4, ibatA: 0.6 }))), []);
  // No set point: under the pack voltage counts.
  const under = createRunEngine(li());
  assert.match(
    only(pushAll(under, steady(0, 60, 1, { vbatV: 11.4, ibatA: 0.6, vinV: 11 })), 'input-low').message,
    /under the pack voltage 11\.40 V/,
  );
  // Done: no input-low.
  const done = createRunEngine(li({ inputSetpointV: 14.5 }));
  assert.deepEqual(alarmsOf(pushAll(done, steady(0, 120, 1, { vbatV: 12.6, ibatA: 0.05, vinV: 14 }))), []);
});

test('reverse-current below -C/50 with a source present is a warning; without a source it is not raised', () => {
  // docs/codes.md: ibat below −C/50 = −0.05 A for 2.5 Ah.
  const engine = createRunEngine(li());
  const a = only(
    pushAll(engine, steady(0, 60, 1, { vbatV: 11.4, ibatA: -0.08, src: 'adapter', vinV: 15 })),
    'reverse-current',
  );
  assert.equal(a.level, 'warn');
  assert.match(a.message, /-0\.080 A \(limit -0\.050 A, C\/50\)/);
  const night = createRunEngine(li());
  assert.deepEqual(
    alarmsOf(pushAll(night, steady(0, 60, 1, { vbatV: 11.4, ibatA: -0.08, src: 'none' }))),
    [],
  );
  const small = createRunEngine(li());
  assert.deepEqual(
    alarmsOf(pushAll(small, steady(0, 60, 1, { vbatV: 11.4, ibatA: -0.03, src: 'adapter' }))),
    [],
  );
});

test('silence: raised once by tick after silenceS, cleared by the next sample', () => {
  const engine = createRunEngine(li());
  pushAll(engine, steady(0, 10, 1, { vbatV: 11.4, ibatA: 1 }));
  assert.deepEqual(engine.tick(15), []);
  const raised = engine.tick(20);
  assert.equal(only(raised, 'silence').level, 'warn');
  assert.match(only(raised, 'silence').message, /No telemetry for 11 s \(limit 10 s\)/);
  assert.deepEqual(engine.tick(30), []);
  assert.deepEqual(engine.tick(60), []);
  const back = engine.push({ t: 61, rxS: 61, vbatV: 11.4, ibatA: 1, extra: {} });
  assert.equal(clears(back, 'silence').length, 1);
});

test('silence in a replayed file (no ticks): a hole in the data is a gap; it raises and clears silence', () => {
  const engine = createRunEngine(li());
  pushAll(engine, steady(0, 10, 1, { vbatV: 11.4, ibatA: 1 }));
  const ahBefore = engine.summary().ah;
  const events = engine.push({ t: 70, rxS: 70, vbatV: 11.4, ibatA: 1, extra: {} });
  assert.deepEqual(
    events.map((e) => [e.type, e.t]),
    [
      ['alarm', 19],
      ['gap', 9],
      ['alarm-clear', 70],
    ],
  );
  const gap = events.find((e) => e.type === 'gap');
  assert.equal(gap?.type === 'gap' && gap.durationS, 61);
  // Nothing is integrated across the 61 s gap: no charge, no phase time.
  assert.equal(engine.summary().ah, ahBefore);
  assert.equal(engine.summary().durationS, 70);
  const phaseS = Object.values(engine.summary().phaseS).reduce((a, b) => a + (b ?? 0), 0);
  assert.equal(phaseS, 9);
});

test('a reported gap is recorded once and is not also a silence or a stall; its stretch is not integrated', () => {
  const engine = createRunEngine(li({ stallMin: 5 }));
  pushAll(engine, steady(0, 100, 1, { vbatV: 11.4, ibatA: 1 }));
  const ahBefore = engine.summary().ah;
  const opened = engine.gap(99.5, null, 'port unplugged');
  assert.deepEqual(opened, [{ type: 'gap', t: 99.5, endT: null, reason: 'port unplugged' }]);
  assert.deepEqual(engine.gap(99.5, null, 'port unplugged'), []);
  for (let t = 100; t < 1000; t += 1) assert.deepEqual(engine.tick(t), []);
  const closed = engine.gap(99.5, 1000, 'port back');
  assert.deepEqual(closed, [{ type: 'gap', t: 99.5, endT: 1000, durationS: 900.5, reason: 'port back' }]);
  assert.deepEqual(engine.gap(99.5, 1000, 'port back'), []);
  const after = pushAll(engine, steady(1000, 60, 1, { vbatV: 11.4, ibatA: 1 }));
  assert.deepEqual(after, []);
  // Only the 59 s after the gap were added: 1 A × 59 s.
  assert.ok(Math.abs(engine.summary().ah - ahBefore - 59 / 3600) < 1e-9);
});

test('a gap reported after silence was raised does not raise a second silence', () => {
  const engine = createRunEngine(li());
  pushAll(engine, steady(0, 10, 1, { vbatV: 11.4, ibatA: 1 }));
  assert.equal(alarmsOf(engine.tick(25)).length, 1);
  const gap = engine.gap(9, null, 'port unplugged');
  assert.deepEqual(
    gap.map((e) => e.type),
    ['gap'],
  );
  for (let t = 26; t < 300; t += 5) assert.deepEqual(engine.tick(t), []);
  engine.gap(9, 300, 'port back');
  const back = engine.push({ t: 300, rxS: 300, vbatV: 11.4, ibatA: 1, extra: {} });
  // The one silence clears; no new one for the 9..300 s stretch.
  assert.deepEqual(
    back.map((e) => e.type),
    ['alarm-clear'],
  );
  assert.equal(alarmsOf(back).length, 0);
});

test('the same alarm is raised once per episode and again after it cleared', () => {
  const engine = createRunEngine(li());
  const events = pushAll(engine, [
    ...steady(0, 600, 1, { vbatV: 11.4, ibatA: 1, tempC: 46 }),
    ...steady(600, 60, 1, { vbatV: 11.4, ibatA: 1, tempC: 40 }),
    ...steady(660, 600, 1, { vbatV: 11.4, ibatA: 1, tempC: 46 }),
  ]);
  assert.equal(alarmsOf(events).filter((a) => a.code === 'overtemp').length, 2);
  assert.equal(clears(events, 'overtemp').length, 1);
});

test('a reported gap is not announced twice when the first line after it was a time glitch', () => {
  const engine = createRunEngine(li());
  pushAll(engine, steady(0, 5, 1, { vbatV: 11.4, ibatA: 1 }));
  assert.equal(engine.gap(4.5, null, 'port unplugged').length, 1);
  // The time base placed the first line back with no elapsed time (its device clock jumped).
  const glitch = engine.push({ t: 4, rxS: 4, vbatV: 11.4, ibatA: 1, extra: {} });
  const next = engine.push({ t: 21, rxS: 21, vbatV: 11.4, ibatA: 1, extra: {} });
  assert.deepEqual(
    [...glitch, ...next].filter((e) => e.type === 'gap'),
    [],
  );
  // Nothing integrated over the interruption: 4 s of charge before it only.
  assert.ok(Math.abs(engine.summary().ah - 4 / 3600) < 1e-12);
});

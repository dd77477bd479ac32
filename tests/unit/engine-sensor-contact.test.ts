/**
 * The live alarms for a blind temperature sensor (`sensor-fault`) and an intermittent contact
 * (`contact`), on invented sequences of a 3S garden-sensor pack charged at 1 A.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { profileFromChemistry } from '@shared/chemistry/profile';
import { createPipeline } from '@shared/engine/pipeline';
import { createRunEngine } from '@shared/engine/run-engine';
import type { EngineEvent, TimedSample } from '@shared/engine/types';
import { alarmsOf, pushAll, steady } from './engine-synthetic';

const li = profileFromChemistry('li-ion', 3, { capacityAh: 2.5, chargeCurrentA: 1, terminationA: 0.1 });

test('sensor-fault: an open NTC (4095 counts on a 12-bit pull-up divider) while charging is critical', () => {
  // Pull-up divider: full scale = open NTC (the divider has lost the NTC). Beta model R25 10 kΩ,
  // B 3435 K (MathWorks Simscape "Thermistor" block: Beta equation).
  const profile = profileFromChemistry('li-ion', 3, {
    capacityAh: 2.5,
    chargeCurrentA: 1,
    thermistor: { model: 'beta', r25: 10000, beta: 3435, pullupOhm: 10000, adcMax: 4095 },
  });
  const pipeline = createPipeline(profile, { receiveClock: 'lines' });
  const events: EngineEvent[] = [];
  // 2048 counts = 10 kΩ = 25 °C; then the wire breaks.
  for (let t = 0; t < 60; t++)
    events.push(...pipeline.pushLine(`t=${t} vbat=11.40 ibat=1.00 ntc=2048`, t).events);
  assert.deepEqual(alarmsOf(events), []);
  for (let t = 60; t < 80; t++)
    events.push(...pipeline.pushLine(`t=${t} vbat=11.40 ibat=1.00 ntc=4095`, t).events);
  const fault = alarmsOf(events).find((a) => a.code === 'sensor-fault');
  assert.ok(fault, 'sensor-fault raised');
  assert.equal(fault.level, 'critical');
  assert.ok(fault.t >= 63 && fault.t <= 64, `after the 3 s filter: ${fault.t}`);
  assert.match(fault.message, /ntc=4095 reads at the ADC rail: the thermistor is open/);
  assert.match(fault.message, /stop charging/);
  // The reading comes back: cleared after 10 s.
  for (let t = 80; t < 100; t++)
    events.push(...pipeline.pushLine(`t=${t} vbat=11.40 ibat=1.00 ntc=2048`, t).events);
  assert.ok(events.some((e) => e.type === 'alarm-clear' && e.code === 'sensor-fault'));
});

test('sensor-fault is not raised while nothing charges', () => {
  const profile = profileFromChemistry('li-ion', 3, {
    capacityAh: 2.5,
    chargeCurrentA: 1,
    thermistor: { model: 'beta', r25: 10000, beta: 3435, pullupOhm: 10000, adcMax: 4095 },
  });
  const pipeline = createPipeline(profile, { receiveClock: 'lines' });
  const events: EngineEvent[] = [];
  for (let t = 0; t < 60; t++)
    events.push(...pipeline.pushLine(`t=${t} vbat=11.40 ibat=0 ntc=4095 src=none`, t).events);
  assert.deepEqual(alarmsOf(events), []);
});

/** A charge at 1 A with contact openings (current to 0 for openS, voltage up to 12.6 V) at the given times. */
function withOpenings(durationS: number, openings: number[], openS = 5): TimedSample[] {
  const out: TimedSample[] = [];
  for (let t = 0; t < durationS; t++) {
    const open = openings.some((o) => t >= o && t < o + openS);
    out.push({ t, rxS: t, vbatV: open ? 12.6 : 11.4 + t / 36000, ibatA: open ? 0 : 1, vinV: 15, extra: {} });
  }
  return out;
}

test('contact: two dropouts that recover warn; a third within 10 min makes it critical; quiet clears it', () => {
  const engine = createRunEngine(li);
  const events = pushAll(engine, withOpenings(3600, [300, 540, 780]));
  const contact = alarmsOf(events).filter((a) => a.code === 'contact');
  assert.deepEqual(
    contact.map((a) => [a.level, a.t]),
    [
      ['warn', 545],
      ['critical', 785],
    ],
  );
  assert.match(contact[0].message, /the current dropped to zero and came back 2 time\(s\)/);
  assert.match(contact[1].message, /keeps repeating/);
  assert.match(contact[1].message, /check the pack connector, crimps and screw terminals/);
  // 15 min after the last episode with no new one, the alarm clears.
  const clear = events.find((e) => e.type === 'alarm-clear' && e.code === 'contact');
  assert.ok(clear && clear.t > 780 + 900 && clear.t <= 785 + 901, `cleared at ${clear?.t}`);
});

test('contact: a single dropout, or a source that fades, is not a contact', () => {
  const one = alarmsOf(pushAll(createRunEngine(li), withOpenings(3600, [300])));
  assert.deepEqual(one, []);
  // A cloud: the panel voltage falls under the pack and the current stops, four times.
  const engine = createRunEngine(li);
  const samples: TimedSample[] = [];
  for (let t = 0; t < 3600; t++) {
    const shade = [300, 540, 780, 1020].some((o) => t >= o && t < o + 5);
    samples.push({ t, rxS: t, vbatV: 11.4, ibatA: shade ? 0 : 1, vinV: shade ? 9 : 15, extra: {} });
  }
  assert.ok(!alarmsOf(pushAll(engine, samples)).some((a) => a.code === 'contact'));
});

test('contact: repeated voltage steps with no current step raise it too', () => {
  const engine = createRunEngine(li);
  // The contact resistance jumps by 0.2 Ω and back: ±0.2 V at 1 A, every 3 min, the current held.
  const samples = steady(0, 1200, 1, { vbatV: 11.4, ibatA: 1, vinV: 15 }).map((s) =>
    Math.floor(s.t / 180) % 2 === 1 ? { ...s, vbatV: 11.6 } : s,
  );
  const contact = alarmsOf(pushAll(engine, samples)).filter((a) => a.code === 'contact');
  assert.ok(contact.length >= 1, 'contact raised');
  assert.match(contact[0].message, /the pack voltage stepped 2 time\(s\) with no current step/);
});

/**
 * Chemistry rules checked against their published sources: lead-acid float only after
 * absorption, lead-acid overvoltage limit compensated like the set points, NiMH overtemp
 * warning in the charge window and critical at the cut-off. Packs are invented demo hardware.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { profileFromChemistry } from '@shared/chemistry/profile';
import { createRunEngine } from '@shared/engine/run-engine';
import type { TimedSample } from '@shared/engine/types';
import { alarmsOf, phasesOf, pushAll, steady } from './engine-synthetic';

test('lead-acid: a bank rising through the float band under a weak bulk current is not done', () => {
  // Three-stage charge, bulk -> absorption -> float: BU-403 "Charging Lead Acid" (published).
  // Float 2.30 V/cell at 25 °C (BU-403; Haze HZB12-200 datasheet 2.25–2.30): 13.80 V for 6 cells.
  const profile = profileFromChemistry('lead-acid', 6, { capacityAh: 100, chargeCurrentA: 20 });
  assert.equal(profile.terminationA, 5); // 0.05C
  const engine = createRunEngine(profile);
  const samples: TimedSample[] = [];
  // Invented boat-house bank on a weak panel: 3 A (under the 5 A termination), rising 12.9 -> 14.1 V in 2 h.
  for (let t = 0; t <= 7200; t += 5)
    samples.push({ t, rxS: t, vbatV: 12.9 + (1.2 * t) / 7200, ibatA: 3, tempC: 25, extra: {} });
  const events = pushAll(engine, samples);
  assert.deepEqual(phasesOf(events), ['cc']);
  // Once absorption (2.40 V/cell = 14.40 V) was held (the panel now in full sun) and the current
  // tapered under termination, float follows.
  const later: TimedSample[] = [];
  let t = 7205;
  for (let k = 0; k < 720; k++, t += 5)
    later.push({ t, rxS: t, vbatV: 14.4, ibatA: 8 * Math.exp(-k / 150) + 0.5, tempC: 25, extra: {} });
  for (let k = 0; k < 240; k++, t += 5)
    later.push({ t, rxS: t, vbatV: 13.8, ibatA: 0.6, tempC: 25, extra: {} });
  assert.deepEqual(phasesOf(pushAll(engine, later)), ['cv', 'done']);
});

test('lead-acid: a gel bank compensated to −15 °C is not overvoltage; the same voltage at 25 °C is', () => {
  // Trojan User's Guide, gel: bulk 2.40 V/cell, float 2.25 V/cell, −5.0 mV/°C/cell (published).
  // At −15 °C: 2.40 + 0.005 × 40 = 2.60 V/cell = 15.60 V for 6 cells, above the 2.58 V/cell
  // uncompensated limit (Trojan boost range top, published) but at the compensated set point.
  const profile = profileFromChemistry('lead-acid', 6, {
    capacityAh: 100,
    chargeCurrentA: 20,
    floatVPerCell: 2.25,
    tempCompVPerCPerCell: -0.005,
  });
  assert.equal(profile.overvoltageVPerCell, 2.58);
  const cold = createRunEngine(profile);
  const coldEvents = pushAll(cold, steady(0, 1800, 5, { vbatV: 15.6, ibatA: 8, tempC: -15 }));
  assert.deepEqual(alarmsOf(coldEvents), []);
  assert.deepEqual(phasesOf(coldEvents), ['cv']);
  // At 25 °C 15.60 V is 0.02 V/cell over the 2.58 V/cell limit: critical overvoltage.
  const warm = createRunEngine(profile);
  const warmAlarms = alarmsOf(pushAll(warm, steady(0, 60, 5, { vbatV: 15.6, ibatA: 8, tempC: 25 })));
  assert.deepEqual(
    warmAlarms.map((a) => [a.code, a.level]),
    [['overvoltage', 'critical']],
  );
  // The limit at −15 °C is 2.58 + 0.20 = 2.78 V/cell: 16.80 V is over it, and the message says compensated.
  const over = alarmsOf(
    pushAll(createRunEngine(profile), steady(0, 60, 5, { vbatV: 16.9, ibatA: 8, tempC: -15 })),
  );
  assert.equal(over[0]?.code, 'overvoltage');
  assert.match(over[0].message, /above the 2\.78 V\/cell limit .*compensated to -15\.0 °C/);
});

test('NiMH: over the 40 °C charge window is a warning; critical only past the 55 °C cut-off', () => {
  // Panasonic "Charge Methods for Nickel Metal Hydride Batteries" (published): rapid charge
  // within 0–40 °C; absolute temperature cut-off 55 °C for A, AA and D cells.
  const profile = profileFromChemistry('nimh', 4, { capacityAh: 2, chargeCurrentA: 1 });
  assert.deepEqual(profile.tempWindowC, [0, 40]);
  const engine = createRunEngine(profile);
  const warm = alarmsOf(pushAll(engine, steady(0, 300, 1, { vbatV: 5.6, ibatA: 1, tempC: 44 })));
  assert.deepEqual(
    warm.map((a) => [a.code, a.level]),
    [['overtemp', 'warn']],
  );
  assert.match(warm[0].message, /above the 40 °C top of the charge window .*cut-off 55 °C/);
  const hot = alarmsOf(pushAll(engine, steady(300, 60, 1, { vbatV: 5.6, ibatA: 1, tempC: 56 })));
  assert.deepEqual(
    hot.map((a) => [a.code, a.level]),
    [['overtemp', 'critical']],
  );
  assert.match(hot[0].message, /above the 55 °C charge cut-off/);
  // Li-ion keeps its window top as the critical limit (pre-JEITA 0–45 °C, TI E2E JEITA note).
  const li = createRunEngine(profileFromChemistry('li-ion', 3, { capacityAh: 2.5, chargeCurrentA: 1 }));
  const liHot = alarmsOf(pushAll(li, steady(0, 60, 1, { vbatV: 11.4, ibatA: 1, tempC: 46 })));
  assert.deepEqual(
    liHot.map((a) => [a.code, a.level]),
    [['overtemp', 'critical']],
  );
});

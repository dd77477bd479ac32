import { test } from 'node:test';
import assert from 'node:assert/strict';
import {
  adcFromResistance,
  betaResistanceOhm,
  betaTemperatureC,
  resistanceFromAdc,
  steinhartHartResistanceOhm,
  steinhartHartTemperatureC,
  thermistorReading,
  thermistorTemperature,
} from '@shared/chemistry/thermistor';
import type { ThermistorModel } from '@shared/telemetry/types';

const near = (actual: number, expected: number, tol: number, what: string) =>
  assert.ok(Math.abs(actual - expected) <= tol, `${what}: ${actual} is not within ${tol} of ${expected}`);

test('Beta equation check values, R25 = 10 kΩ', () => {
  // Derived from the Beta equation of the MathWorks Simscape "Thermistor" block
  // (R = R25·exp[B(1/T − 1/T0)], T0 = 298.15 K): B = 3435 K -> 28 704 / 4 101 / 987 Ω.
  near(betaResistanceOhm(0, 10000, 3435), 28704, 1, 'B3435 at 0 °C');
  near(betaResistanceOhm(50, 10000, 3435), 4101, 1, 'B3435 at 50 °C');
  near(betaResistanceOhm(100, 10000, 3435), 987, 1, 'B3435 at 100 °C');
  // Same row: B = 3950 K -> 33 621 / 3 588 / 698 Ω.
  near(betaResistanceOhm(0, 10000, 3950), 33621, 1, 'B3950 at 0 °C');
  near(betaResistanceOhm(50, 10000, 3950), 3588, 1, 'B3950 at 50 °C');
  near(betaResistanceOhm(100, 10000, 3950), 698, 1, 'B3950 at 100 °C');
  // Definition: R(25 °C) = R25 exactly (MathWorks Simscape "Thermistor", T0 = 298.15 K).
  near(betaResistanceOhm(25, 10000, 3435), 10000, 1e-9, 'R at T0');
});

test('EPCOS B57330V2103 table read with Beta 3435 shows the documented model deviations', () => {
  // Table values: Linux drivers/hwmon/ntc_thermistor.c, table b57330v2103 (EPCOS datasheet),
  // Deviations (+1.07 °C at 0 °C, -0.42 °C at 50 °C, +0.58 °C at 100 °C)
  // computed from the Beta equation at the table's points (derived). Tolerance 0.01 °C (values given to 0.01).
  near(betaTemperatureC(27326, 10000, 3435), 0 + 1.07, 0.01, 'EPCOS 0 °C point');
  near(betaTemperatureC(10000, 10000, 3435), 25, 1e-9, 'EPCOS 25 °C point');
  near(betaTemperatureC(4158, 10000, 3435), 50 - 0.42, 0.01, 'EPCOS 50 °C point');
  near(betaTemperatureC(973, 10000, 3435), 100 + 0.58, 0.01, 'EPCOS 100 °C point');
});

test('Steinhart–Hart 10 kΩ "Type II / 10K3" coefficients', () => {
  // A = 1.129148e-3, B = 2.34125e-4, C = 8.76741e-8 (IDUINO sensor
  // manual) -> 10 000 Ω = 25.00 °C, 32 650 Ω = 0.00 °C, 3 601 Ω = 50.0 °C.
  const [a, b, c] = [1.129148e-3, 2.34125e-4, 8.76741e-8];
  near(steinhartHartTemperatureC(10000, a, b, c), 25.0, 0.005, '10 kΩ');
  near(steinhartHartTemperatureC(32650, a, b, c), 0.0, 0.005, '32 650 Ω');
  near(steinhartHartTemperatureC(3601, a, b, c), 50.0, 0.05, '3 601 Ω');
  // Same row: the 0 °C point is 32 650.9 Ω in Campbell Scientific 109SS manual Table C-1.
  near(steinhartHartResistanceOhm(0, a, b, c), 32650.9, 1, 'inverse at 0 °C');
});

test('Steinhart–Hart set common in tutorials gives 24.68 °C at 10 kΩ', () => {
  // A set common in tutorials, computed here (derived): A = 1.009249522e-3,
  // B = 2.378405444e-4, C = 2.019202697e-7 -> 24.68 °C at 10 kΩ, R25 = 9 877 Ω.
  const [a, b, c] = [1.009249522e-3, 2.378405444e-4, 2.019202697e-7];
  near(steinhartHartTemperatureC(10000, a, b, c), 24.68, 0.005, 'tutorial set at 10 kΩ');
  near(steinhartHartResistanceOhm(25, a, b, c), 9877, 1, 'tutorial set R25');
});

test('inverse functions round-trip (derived: each is the algebraic inverse of the other)', () => {
  const sh: ThermistorModel = { model: 'steinhart-hart', a: 1.129148e-3, b: 2.34125e-4, c: 8.76741e-8 };
  for (let tempC = -40; tempC <= 125; tempC += 5) {
    near(betaTemperatureC(betaResistanceOhm(tempC, 10000, 3950), 10000, 3950), tempC, 1e-9, `beta ${tempC}`);
    const r = steinhartHartResistanceOhm(tempC, sh.a, sh.b, sh.c);
    near(steinhartHartTemperatureC(r, sh.a, sh.b, sh.c), tempC, 1e-9, `S-H ${tempC}`);
  }
});

test('ADC divider: pull-up (NTC to ground) and pull-down (NTC on top)', () => {
  // Voltage divider, ratiometric ADC: counts/adcMax = R_ntc / (R_fixed + R_ntc) for a pull-up
  // (common practice; docs/profile.md defines the two wirings).
  const up = { position: 'pullup' as const, fixedOhm: 10000, adcMax: 4095 };
  const down = { position: 'pulldown' as const, fixedOhm: 10000, adcMax: 4095 };
  const r1 = resistanceFromAdc(2047.5, up);
  assert.ok(r1.ok);
  near(r1.ohm, 10000, 1e-9, 'mid-scale pull-up = R_fixed');
  const r2 = resistanceFromAdc(1000, down);
  assert.ok(r2.ok);
  near(r2.ohm, (10000 * 3095) / 1000, 1e-9, 'pull-down');
  near(adcFromResistance(28704, up), (4095 * 28704) / 38704, 1e-9, 'inverse pull-up');
  const r3 = resistanceFromAdc(adcFromResistance(4101, down), down);
  assert.ok(r3.ok);
  near(r3.ohm, 4101, 1e-6, 'pull-down round trip');
});

test('open and shorted thermistors are flagged, never converted to a wild number', () => {
  const up: ThermistorModel = { model: 'beta', r25: 10000, beta: 3435, pullupOhm: 10000, adcMax: 4095 };
  const down: ThermistorModel = { model: 'beta', r25: 10000, beta: 3435, pulldownOhm: 10000, adcMax: 1023 };
  const ohms: ThermistorModel = { model: 'beta', r25: 10000, beta: 3435 };
  assert.deepEqual(thermistorTemperature(up, 4095), { ok: false, reason: 'open', ohm: Infinity }); // at the top rail
  assert.deepEqual(thermistorTemperature(up, 0), { ok: false, reason: 'short', ohm: 0 });
  assert.deepEqual(thermistorTemperature(down, 0), { ok: false, reason: 'open', ohm: Infinity });
  assert.deepEqual(thermistorTemperature(down, 1023), { ok: false, reason: 'short', ohm: 0 });
  assert.equal(thermistorTemperature(up, 5000).ok, false); // beyond full scale
  assert.equal(thermistorTemperature(ohms, 0).ok, false);
  assert.equal(thermistorTemperature(ohms, -5).ok, false);
  assert.equal(thermistorTemperature(ohms, NaN).ok, false);
  assert.ok(Number.isNaN(betaTemperatureC(0, 10000, 3435)));
  assert.ok(Number.isNaN(steinhartHartTemperatureC(-1, 1e-3, 2e-4, 1e-7)));
  const bad = { model: 'beta', r25: 0, beta: 3435 } as ThermistorModel;
  assert.deepEqual(thermistorTemperature(bad, 10000), { ok: false, reason: 'bad-model', ohm: 10000 });
});

test('temperature -> reading -> temperature for the simulator', () => {
  const model: ThermistorModel = { model: 'beta', r25: 10000, beta: 3435, pullupOhm: 10000, adcMax: 4095 };
  const counts = thermistorReading(model, 25);
  assert.equal(counts, 2048); // 4095 * 10k / 20k = 2047.5, rounded half up
  for (const tempC of [0, 10, 25, 40, 60]) {
    const back = thermistorTemperature(model, thermistorReading(model, tempC));
    assert.ok(back.ok);
    near(back.tempC, tempC, 0.1, `12-bit quantisation at ${tempC} °C`); // one count ≈ 0.03 °C near 25 °C
  }
  const ohmsModel: ThermistorModel = { model: 'beta', r25: 10000, beta: 3435 };
  // No divider: the reading is ohms; 28 704 Ω at 0 °C for B3435 (Beta equation, MathWorks Simscape "Thermistor"; derived).
  near(thermistorReading(ohmsModel, 0), 28704, 1, 'no divider: the reading is ohms');
  const ohmReading = thermistorTemperature(model, 28704.29, true);
  assert.ok(ohmReading.ok);
  near(ohmReading.tempC, 0, 0.001, 'a reading in ohms bypasses the divider');
});

/** Chemistry defaults against their published values (the source named beside each check). */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { CHEMISTRY_DEFAULTS, DEFAULT_SILENCE_S } from '@shared/chemistry/defaults';
import { compensatedVPerCell, profileFromChemistry } from '@shared/chemistry/profile';

test('regulation voltages per cell match the published values', () => {
  // Battery University BU-409 "Charging Lithium-ion": 4.20 V/cell.
  assert.equal(CHEMISTRY_DEFAULTS['li-ion'].regulationVPerCell, 4.2);
  // Zufek blog "CC/CV charging protocol"; Higherwire 4.35 V cells: 4.35 V/cell.
  assert.equal(CHEMISTRY_DEFAULTS['li-ion-hv'].regulationVPerCell, 4.35);
  // RightBattery "LiPo/LiIon/LiFe Batteries": 3.6 V/cell.
  assert.equal(CHEMISTRY_DEFAULTS.lifepo4.regulationVPerCell, 3.6);
  // BU-403 "Charging Lead Acid": absorption 2.40 V/cell.
  assert.equal(CHEMISTRY_DEFAULTS['lead-acid'].regulationVPerCell, 2.4);
});

test('lead-acid float is inside the datasheet float range 2.25-2.30 V/cell', () => {
  // Haze HZB12-200 / HZY12-110 datasheets; Trojan guide: float 2.25–2.30 V/cell.
  const floatV = CHEMISTRY_DEFAULTS['lead-acid'].floatVPerCell;
  assert.ok(floatV !== null && floatV >= 2.25 && floatV <= 2.3);
  for (const c of ['li-ion', 'li-ion-hv', 'lifepo4', 'nimh'] as const)
    assert.equal(CHEMISTRY_DEFAULTS[c].floatVPerCell, null);
});

test('lead-acid temperature compensation: 6 x (2.30 - 0.030) = 13.62 V at 35 °C', () => {
  // BU-403 "Charging Lead Acid": −3 mV/°C/cell; worked check 12 V AGM float at 35 °C = 13.62 V (derived).
  assert.equal(CHEMISTRY_DEFAULTS['lead-acid'].tempCompVPerCPerCell, -0.003);
  const p = profileFromChemistry('lead-acid', 6, { capacityAh: 100 });
  assert.ok(Math.abs(compensatedVPerCell(p, 2.3, 35) * 6 - 13.62) < 1e-9);
  // BU-403: 2.30 V @25 °C -> 2.27 V @35 °C, 2.33 V @15 °C.
  assert.ok(Math.abs(compensatedVPerCell(p, 2.3, 15) - 2.33) < 1e-9);
  assert.equal(compensatedVPerCell(p, 2.3, 25), 2.3);
  // Without a temperature reading, the 25 °C set point stands.
  assert.equal(compensatedVPerCell(p, 2.3, undefined), 2.3);
  // Li-ion has no compensation.
  assert.equal(compensatedVPerCell(profileFromChemistry('li-ion', 1), 4.2, 40), 4.2);
});

test('NiMH: -ΔV ~5 mV/cell and the 1.6 V/cell charge limit', () => {
  // cheali-charger docs "nimh_nicd_charging": −ΔV ≈ 5 mV/cell; 1.6 V/cell safety limit.
  assert.equal(CHEMISTRY_DEFAULTS.nimh.minusDeltaVPerCell, 0.005);
  assert.equal(CHEMISTRY_DEFAULTS.nimh.overvoltageVPerCell, 1.6);
  // Panasonic "Charge Methods for NiMH": rapid charge 0.5–1C, window 0–40 °C.
  assert.ok(CHEMISTRY_DEFAULTS.nimh.chargeCurrentC >= 0.5 && CHEMISTRY_DEFAULTS.nimh.chargeCurrentC <= 1);
  assert.deepEqual(CHEMISTRY_DEFAULTS.nimh.tempWindowC, [0, 40]);
  assert.equal(CHEMISTRY_DEFAULTS.nimh.hasCv, false);
});

test('Li-ion precondition ~3.0 V/cell at <= C/10, termination C/10..C/20', () => {
  // Junlee blog / ElectroDragon wiki: pre-charge below ≈ 3 V at max 0.1C.
  for (const c of ['li-ion', 'li-ion-hv'] as const) {
    assert.equal(CHEMISTRY_DEFAULTS[c].preconditionVPerCell, 3.0);
    assert.ok(CHEMISTRY_DEFAULTS[c].preconditionC <= 0.1);
    // Zufek blog: termination C/10 … C/20.
    assert.ok(CHEMISTRY_DEFAULTS[c].terminationC <= 0.1 && CHEMISTRY_DEFAULTS[c].terminationC >= 0.05);
  }
  // Sunland IFR26650PE spec: LiFePO4 termination ≤ 0.05C.
  assert.ok(CHEMISTRY_DEFAULTS.lifepo4.terminationC <= 0.05);
});

test('temperature windows: 0-45 °C for lithium (pre-JEITA, LFP spec)', () => {
  // TI E2E "JEITA Battery Temperature Standard": pre-JEITA window 0–45 °C; AA Portable Power LFP spec 0–45 °C.
  for (const c of ['li-ion', 'li-ion-hv', 'lifepo4'] as const)
    assert.deepEqual(CHEMISTRY_DEFAULTS[c].tempWindowC, [0, 45]);
  // TI E2E JEITA note: 4.25 V/cell upper limit in the standard band.
  assert.equal(CHEMISTRY_DEFAULTS['li-ion'].overvoltageVPerCell, 4.25);
});

test('every chemistry orders its voltages precondition < float < regulation < overvoltage', () => {
  for (const [name, d] of Object.entries(CHEMISTRY_DEFAULTS)) {
    assert.ok(d.preconditionVPerCell < d.regulationVPerCell, name);
    assert.ok(d.regulationVPerCell < d.overvoltageVPerCell, name);
    if (d.floatVPerCell !== null)
      assert.ok(d.preconditionVPerCell < d.floatVPerCell && d.floatVPerCell < d.regulationVPerCell, name);
    assert.ok(d.terminationC < d.chargeCurrentC, name);
    assert.ok(d.tempWindowC[0] < d.tempWindowC[1], name);
  }
  // docs/codes.md: silence default 10 s.
  assert.equal(DEFAULT_SILENCE_S, 10);
});

/** Profile validation (docs/profile.md): defaults filled in, and a bad profile names its bad key. */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import {
  parseProfile,
  profileFromChemistry,
  profileSchema,
  PROFILE_CAUTION,
} from '@shared/chemistry/profile';
import { CHEMISTRIES } from '@shared/chemistry/types';

// The example profile of docs/profile.md (an invented garden-sensor pack).
const example = {
  name: 'garden-sensor 3S Li-ion',
  chemistry: 'li-ion',
  cells: 3,
  capacityAh: 2.5,
  chargeCurrentA: 1.0,
  terminationA: 0.1,
  timerMin: 240,
  tempWindowC: [0, 45],
  inputSetpointV: 14.5,
  fields: { vbat: { key: 'vb', unit: 'mV' } },
  thermistor: { model: 'beta', r25: 10000, beta: 3435, pullupOhm: 10000, adcMax: 4095 },
};

function refused(input: unknown): { key: string; error: string } {
  const r = parseProfile(input);
  assert.equal(r.ok, false, `expected a refusal for ${JSON.stringify(input)}`);
  if (r.ok) throw new Error('unreachable');
  return r;
}

test('the docs/profile.md example profile is accepted as written', () => {
  const r = parseProfile(example);
  assert.ok(r.ok);
  assert.equal(r.profile.name, 'garden-sensor 3S Li-ion');
  assert.equal(r.profile.chargeCurrentA, 1.0);
  assert.equal(r.profile.inputSetpointV, 14.5);
  assert.deepEqual(r.profile.fields, { vbat: { key: 'vb', unit: 'mV' } });
  // Units the telemetry layer knows are accepted on their fields.
  const units = { ibat: { key: 'i', unit: 'mA' }, ntc: { key: 'n', unit: 'kOhm' } };
  assert.ok(parseProfile({ chemistry: 'li-ion', cells: 1, fields: units }).ok);
  assert.equal(r.profile.thermistor?.model, 'beta');
  // docs/codes.md: precondition timeout defaults to timerMin/8 when a timer is set: 240/8 = 30 min.
  assert.equal(r.profile.preconditionTimeoutMin, 30);
});

test('only chemistry and cells are required; every other limit is filled per chemistry', () => {
  for (const chemistry of CHEMISTRIES) {
    const r = parseProfile({ chemistry, cells: 2 });
    assert.ok(r.ok, chemistry);
    const p = r.profile;
    assert.ok(p.terminationA < p.chargeCurrentA);
    assert.ok(p.preconditionVPerCell < p.regulationVPerCell && p.regulationVPerCell < p.overvoltageVPerCell);
    // docs/codes.md: silence 10 s; precondition timeout 30 min without a timer.
    assert.equal(p.silenceS, 10);
    assert.equal(p.preconditionTimeoutMin, 30);
    assert.equal(p.timerMin, null);
    assert.ok(p.defaulted?.includes('capacityAh'));
  }
  const li = profileFromChemistry('li-ion', 3, { capacityAh: 2.5 });
  // BU-409: 4.20 V/cell; Zufek: C/10 termination; common practice 0.5C charge current.
  assert.equal(li.regulationVPerCell, 4.2);
  assert.equal(li.terminationA, 0.25);
  assert.equal(li.chargeCurrentA, 1.25);
  // Junlee / ElectroDragon: precondition at ≤ 0.1C.
  assert.equal(li.preconditionA, 0.25);
  const lead = profileFromChemistry('lead-acid', 6, { capacityAh: 100 });
  // BU-403: float 2.30 V/cell, −3 mV/°C/cell.
  assert.equal(lead.floatVPerCell, 2.3);
  assert.equal(lead.tempCompVPerCPerCell, -0.003);
  const nimh = profileFromChemistry('nimh', 4, { capacityAh: 2 });
  // cheali-charger docs: −ΔV ≈ 5 mV/cell.
  assert.equal(nimh.minusDeltaVPerCell, 0.005);
  assert.equal(nimh.floatVPerCell, null);
});

test('capacity follows from the charge current when only that is given (0.5C, common practice)', () => {
  const p = profileFromChemistry('li-ion', 1, { chargeCurrentA: 0.8 });
  assert.equal(p.capacityAh, 1.6);
  assert.ok(p.defaulted?.includes('capacityAh'));
  assert.ok(!profileFromChemistry('li-ion', 1, { capacityAh: 3 }).defaulted?.includes('capacityAh'));
});

test('an unknown key is refused by name, at top level and nested', () => {
  let r = refused({ chemistry: 'li-ion', cells: 3, capcityAh: 2 });
  assert.equal(r.key, 'capcityAh');
  assert.match(r.error, /^capcityAh: unknown key; known keys here are .*capacityAh/);
  r = refused({ chemistry: 'li-ion', cells: 3, fields: { vbatt: { key: 'vb' } } });
  assert.equal(r.key, 'fields.vbatt');
  assert.match(r.error, /vbat, ibat/);
  r = refused({ chemistry: 'li-ion', cells: 3, fields: { vbat: { key: 'vb', units: 'mV' } } });
  assert.equal(r.key, 'fields.vbat.units');
  r = refused({
    chemistry: 'li-ion',
    cells: 3,
    thermistor: { model: 'beta', r25: 1e4, beta: 3435, pullup: 1e4 },
  });
  assert.equal(r.key, 'thermistor.pullup');
});

test('each bad value names its key and says why, with what was given', () => {
  const base = { chemistry: 'li-ion', cells: 3 };
  const cases: Array<[unknown, string, RegExp]> = [
    [{ cells: 3 }, 'chemistry', /chemistry: must be one of "li-ion".*\(got nothing\)/],
    [{ chemistry: 'lithium', cells: 3 }, 'chemistry', /\(got "lithium"\)/],
    [{ chemistry: 'li-ion' }, 'cells', /cells: is required/],
    [{ ...base, cells: 2.5 }, 'cells', /cells: must be a whole number \(got 2\.5\)/],
    [{ ...base, cells: 0 }, 'cells', /cells: must be at least 1 \(got 0\)/],
    [{ ...base, cells: 65 }, 'cells', /cells: must be at most 64 \(got 65\)/],
    [{ ...base, cells: '3' }, 'cells', /cells: must be a number \(got "3"\)/],
    [{ ...base, capacityAh: -2 }, 'capacityAh', /capacityAh: must be above 0 \(got -2\)/],
    [{ ...base, chargeCurrentA: 0 }, 'chargeCurrentA', /above 0/],
    [{ ...base, timerMin: -5 }, 'timerMin', /above 0/],
    [
      { ...base, tempWindowC: [45, 0] },
      'tempWindowC',
      /low limit must be below the high limit \(got \[45,0\]\)/,
    ],
    [{ ...base, tempWindowC: [0] }, 'tempWindowC', /tempWindowC/],
    [{ ...base, tempWindowC: [0, 150] }, 'tempWindowC', /-40\.\.80/],
    [
      { ...base, capacityAh: 2, chargeCurrentA: 0.2, terminationA: 0.3 },
      'terminationA',
      /below chargeCurrentA 0\.2 A/,
    ],
    [{ ...base, chargeCurrentA: 1, preconditionA: 2 }, 'preconditionA', /must not exceed chargeCurrentA/],
    [
      { ...base, preconditionVPerCell: 4.3 },
      'preconditionVPerCell',
      /must be below regulationVPerCell 4\.2 V \(default/,
    ],
    [
      { ...base, regulationVPerCell: 4.3 },
      'regulationVPerCell',
      /overvoltageVPerCell 4\.25 V \(default for li-ion\)/,
    ],
    [{ ...base, overvoltageVPerCell: 4.1 }, 'overvoltageVPerCell', /\(got 4\.1\)/],
    [{ ...base, floatVPerCell: 4.1 }, 'floatVPerCell', /only lead-acid has a float stage/],
    [{ ...base, minusDeltaVPerCell: 0.005 }, 'minusDeltaVPerCell', /NiMH only/],
    [
      { chemistry: 'lead-acid', cells: 6, floatVPerCell: 2.45 },
      'floatVPerCell',
      /below the absorption voltage/,
    ],
    [{ chemistry: 'lead-acid', cells: 6, tempCompVPerCPerCell: 0.003 }, 'tempCompVPerCPerCell', /at most 0/],
    [{ ...base, silenceS: 0 }, 'silenceS', /above 0/],
    [{ ...base, stallMin: 'long' }, 'stallMin', /must be a number/],
    [{ ...base, name: '' }, 'name', /at least 1 characters/],
    [{ ...base, fields: { vbat: { key: '' } } }, 'fields.vbat.key', /fields\.vbat\.key:/],
    [{ ...base, fields: { vbat: { key: 'vb', scale: 'x' } } }, 'fields.vbat.scale', /must be a number/],
    [
      { ...base, fields: { ibat: { key: 'ib', unit: 'mV' } } },
      'fields.ibat.unit',
      /"mV" is not a unit of this field/,
    ],
    [{ ...base, fields: { chg: { key: 'c', unit: 'V' } } }, 'fields.chg.unit', /takes no unit/],
    [
      { ...base, fields: { vbat: { key: 'v' }, vin: { key: 'v' } } },
      'fields.vin.key',
      /already mapped to vbat/,
    ],
    [
      { ...base, thermistor: { model: 'ntc', r25: 1e4 } },
      'thermistor.model',
      /"beta", "steinhart-hart" \(got "ntc"\)/,
    ],
    [
      { ...base, thermistor: { model: 'beta', r25: 1e4, beta: -3435 } },
      'thermistor.beta',
      /above 0 \(got -3435\)/,
    ],
    [{ ...base, thermistor: { model: 'beta', beta: 3435 } }, 'thermistor.r25', /is required/],
    [{ ...base, thermistor: { model: 'steinhart-hart', a: 1e-3, b: 2e-4 } }, 'thermistor.c', /is required/],
    [
      {
        ...base,
        thermistor: { model: 'beta', r25: 1e4, beta: 3435, pullupOhm: 1e4, pulldownOhm: 1e4, adcMax: 4095 },
      },
      'thermistor.pulldownOhm',
      /not both/,
    ],
    [
      { ...base, thermistor: { model: 'beta', r25: 1e4, beta: 3435, adcMax: 4095 } },
      'thermistor.adcMax',
      /read as ohms/,
    ],
    [
      { ...base, thermistor: { model: 'beta', r25: 1e4, beta: 3435, pullupOhm: 1e4, adcMax: 40.5 } },
      'thermistor.adcMax',
      /whole number/,
    ],
  ];
  for (const [input, key, message] of cases) {
    const r = refused(input);
    assert.equal(r.key, key, `key for ${JSON.stringify(input)}: ${r.error}`);
    assert.ok(r.error.startsWith(`${key}: `), r.error);
    assert.match(r.error, message);
  }
});

test('input that is not an object is refused, never thrown', () => {
  for (const input of [null, 42, 'li-ion', [1, 2]]) {
    const r = refused(input);
    assert.equal(r.key, 'profile');
    assert.match(r.error, /^profile: must be an object \(got /);
  }
});

test('profileSchema is strict zod and profileFromChemistry throws with the key', () => {
  assert.equal(profileSchema.safeParse({ chemistry: 'nimh', cells: 4, extra: 1 }).success, false);
  assert.throws(() => profileFromChemistry('li-ion', 3, { regulationVPerCell: 4.4 }), /regulationVPerCell/);
});

test('the caution defers to the datasheet and local codes and warns of fire', () => {
  assert.match(PROFILE_CAUTION, /fire/);
  assert.match(PROFILE_CAUTION, /datasheet/);
  assert.match(PROFILE_CAUTION, /local/);
  assert.match(PROFILE_CAUTION, /unattended/);
  assert.match(PROFILE_CAUTION, /lead-acid/);
});

/** refused() for inputs too deep to print in an assertion message. */
function refusedQuiet(input: unknown): { key: string; error: string } {
  const r = parseProfile(input);
  if (r.ok) throw new Error('expected a refusal');
  return r;
}

test('a profile nested 5,000 levels deep is refused by the key where it nests, never a stack overflow', () => {
  let deepObject: unknown = 1;
  let deepArray: unknown = 1;
  for (let i = 0; i < 5000; i++) {
    deepObject = { a: deepObject };
    deepArray = [deepArray];
  }
  const cases: [unknown, string][] = [
    [deepObject, 'a.a.a.a'],
    [{ chemistry: 'li-ion', cells: 1, tempWindowC: deepArray }, 'tempWindowC.0.0.0'],
    [{ chemistry: 'li-ion', cells: 1, fields: { vbat: deepObject } }, 'fields.vbat.a.a'],
    [{ chemistry: 'li-ion', cells: 1, thermistor: deepObject }, 'thermistor.a.a.a'],
  ];
  for (const [input, key] of cases) {
    const r = refusedQuiet(input);
    assert.equal(r.key, key);
    assert.match(r.error, /nested deeper than any profile key/);
  }
  // A whole file that is one deep array: "must be an object", its value described, not printed.
  const top = refusedQuiet(deepArray);
  assert.equal(top.key, 'profile');
  assert.match(top.error, /must be an object \(got a nested array\)/);
});

test('a value so large that derived limits would overflow is refused by its own key', () => {
  const base = { chemistry: 'li-ion', cells: 3 };
  for (const key of [
    'capacityAh',
    'chargeCurrentA',
    'terminationA',
    'timerMin',
    'regulationVPerCell',
    'silenceS',
  ]) {
    const r = refusedQuiet({ ...base, [key]: 1e308 });
    assert.equal(r.key, key, r.error);
    assert.match(r.error, /must be at most/);
  }
});

test('Steinhart-Hart with a=b=c=0, a curve that is no NTC, and a zero field scale are refused by key', () => {
  const base = { chemistry: 'li-ion', cells: 1 };
  const zero = refusedQuiet({ ...base, thermistor: { model: 'steinhart-hart', a: 0, b: 0, c: 0 } });
  assert.equal(zero.key, 'thermistor.a');
  assert.match(zero.error, /all 0/);
  // b negative: resistance would rise with temperature (a PTC), not the NTC the model is for.
  const ptc = refusedQuiet({ ...base, thermistor: { model: 'steinhart-hart', a: 1e-3, b: -2e-4, c: 0 } });
  assert.equal(ptc.key, 'thermistor.b');
  const scale = refusedQuiet({ ...base, fields: { ntc: { key: 'ntc', scale: 0 } } });
  assert.equal(scale.key, 'fields.ntc.scale');
  assert.match(scale.error, /must not be 0/);
  // Coefficients of a common 10 kΩ NTC (a = 1.129e-3, b = 2.341e-4, c = 8.775e-8, from memory) are accepted.
  const ok = parseProfile({
    ...base,
    thermistor: { model: 'steinhart-hart', a: 1.129e-3, b: 2.341e-4, c: 8.775e-8 },
  });
  assert.ok(ok.ok, ok.ok ? '' : ok.error);
});

test('a small charger on a big pack: the default termination is capped below the charge current', () => {
  // 100 Ah at C/10 would terminate at 10 A, above the 0.5 A the charger gives: capped at half of it.
  const r = parseProfile({ chemistry: 'li-ion', cells: 4, capacityAh: 100, chargeCurrentA: 0.5 });
  assert.ok(r.ok, r.ok ? '' : r.error);
  if (r.ok) {
    assert.equal(r.profile.terminationA, 0.25);
    assert.ok(r.profile.preconditionA <= r.profile.chargeCurrentA);
  }
  // At the usual charge current the C-rate default is unchanged (C/10 of 2.5 Ah).
  const usual = parseProfile({ chemistry: 'li-ion', cells: 3, capacityAh: 2.5 });
  assert.ok(usual.ok && usual.profile.terminationA === 0.25);
});

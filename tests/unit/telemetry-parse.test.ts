import { test } from 'node:test';
import assert from 'node:assert/strict';
import { createLineParser } from '@shared/telemetry/parse-line';
import { appendChecksum } from '@shared/telemetry/checksum';
import type { LineResult, ParserOptions, Sample } from '@shared/telemetry/types';

function sampleOf(result: LineResult): Sample {
  assert.equal(result.kind, 'sample', `expected a sample, got ${JSON.stringify(result)}`);
  return (result as { kind: 'sample'; sample: Sample }).sample;
}

function rejection(result: LineResult): { reason: string; detail: string } {
  assert.equal(result.kind, 'rejected', `expected a rejection, got ${JSON.stringify(result)}`);
  return result as { kind: 'rejected'; reason: string; detail: string };
}

const near = (actual: number | undefined, expected: number, tol: number) =>
  assert.ok(actual !== undefined && Math.abs(actual - expected) <= tol, `${actual} vs ${expected} ± ${tol}`);

test('key=value: the docs/telemetry.md example line', () => {
  const p = createLineParser({});
  const s = sampleOf(p.parse('t=812.5 vbat=8.214 ibat=0.598 temp=27.1 vin=17.9 iin=0.31 chg=1 flt=0', 1000));
  assert.deepEqual(s, {
    rxS: 1000,
    extra: {},
    deviceS: 812.5,
    vbatV: 8.214,
    ibatA: 0.598,
    tempC: 27.1,
    vinV: 17.9,
    iinA: 0.31,
    chg: true,
    flt: false,
  });
});

test('key=value separated by commas, tabs, semicolons, and `key = value`', () => {
  const p = createLineParser({});
  for (const line of [
    'vbat=8.2,ibat=0.5',
    'vbat=8.2\tibat=0.5',
    'vbat=8.2; ibat=0.5',
    'vbat = 8.2 , ibat = 0.5',
  ]) {
    const s = sampleOf(p.parse(line, 0));
    assert.equal(s.vbatV, 8.2, line);
    assert.equal(s.ibatA, 0.5, line);
  }
});

test('CSV after a header line (docs/telemetry.md example), header replaced by a new one', () => {
  const p = createLineParser({});
  assert.deepEqual(p.parse('t,vbat,ibat,temp', 0), { kind: 'header', fields: ['t', 'vbat', 'ibat', 'temp'] });
  const s = sampleOf(p.parse('812.5,8.214,0.598,27.1', 1));
  assert.deepEqual([s.deviceS, s.vbatV, s.ibatA, s.tempC], [812.5, 8.214, 0.598, 27.1]);
  const width = rejection(p.parse('812.5,8.214', 2));
  assert.equal(width.reason, 'csv-width');
  assert.match(width.detail, /2 cells .* has 4/);
  assert.equal(p.parse('vin,iin', 3).kind, 'header');
  const s2 = sampleOf(p.parse('17.9,0.31', 4));
  assert.deepEqual([s2.vinV, s2.iinA, s2.vbatV], [17.9, 0.31, undefined]);
  // An empty cell is a missing value; quoted cells are read by the CSV library.
  p.parse('t,vbat,src,note', 5);
  const s3 = sampleOf(p.parse('1,,"panel","charging, slowly"', 6));
  assert.deepEqual(
    [s3.deviceS, s3.vbatV, s3.src, s3.extra.note],
    [1, undefined, 'panel', 'charging, slowly'],
  );
});

test('bare CSV numbers before any header are csv-no-header; reset() forgets the header', () => {
  const p = createLineParser({});
  assert.equal(rejection(p.parse('812.5,8.214,0.598', 0)).reason, 'csv-no-header');
  p.parse('t,vbat', 0);
  assert.equal(p.parse('1,2', 0).kind, 'sample');
  assert.deepEqual(p.csvHeader(), ['t', 'vbat']);
  p.reset();
  assert.equal(p.csvHeader(), null);
  assert.equal(rejection(p.parse('1,2', 0)).reason, 'csv-no-header');
});

test('JSON object (docs/telemetry.md example); bad JSON and non-objects are bad-json', () => {
  const p = createLineParser({});
  const s = sampleOf(p.parse('{"t":812.5,"vbat":8.214,"ibat":0.598}', 0));
  assert.deepEqual([s.deviceS, s.vbatV, s.ibatA], [812.5, 8.214, 0.598]);
  const s2 = sampleOf(
    p.parse('{"vbat":"8214mV","chg":true,"flt":0,"src":"adapter","fw":"1.2","n":3,"ok":false}', 0),
  );
  assert.deepEqual([s2.vbatV, s2.chg, s2.flt, s2.src], [8.214, true, false, 'adapter']);
  assert.deepEqual(s2.extra, { fw: 1.2, n: 3, ok: 0 });
  assert.equal(rejection(p.parse('{"t":', 0)).reason, 'bad-json');
  assert.equal(rejection(p.parse('{not json}', 0)).reason, 'bad-json');
  assert.equal(rejection(p.parse('{"vbat":[1,2]}', 0)).reason, 'bad-value');
  assert.equal(rejection(p.parse('{"vbat":true}', 0)).reason, 'bad-value');
});

test('unit suffixes convert to the base unit of the field (docs/telemetry.md)', () => {
  const p = createLineParser({});
  const s = sampleOf(p.parse('vbat=8214mV ibat=598mA iin=0.6A temp=27.1C vin=17900mV t=1500ms', 0));
  near(s.vbatV, 8.214, 1e-12);
  near(s.ibatA, 0.598, 1e-12);
  assert.equal(s.iinA, 0.6);
  assert.equal(s.tempC, 27.1);
  near(s.vinV, 17.9, 1e-12);
  near(s.deviceS, 1.5, 1e-12);
  near(sampleOf(p.parse('temp=27.1°C', 0)).tempC, 27.1, 1e-12);
  near(sampleOf(p.parse('temp=300.15K', 0)).tempC, 27, 1e-9); // kelvin: SI definition, 0 °C = 273.15 K
  near(sampleOf(p.parse('temp=212F', 0)).tempC, 100, 1e-9); // °F = °C * 9/5 + 32 (definition)
});

test('a unit of the wrong quantity is bad-unit, a non-number is bad-value, each naming key and value', () => {
  const p = createLineParser({});
  const unit = rejection(p.parse('vbat=8.2 ibat=3V', 0));
  assert.equal(unit.reason, 'bad-unit');
  assert.match(unit.detail, /ibat=3V/);
  assert.match(unit.detail, /voltage/);
  assert.equal(rejection(p.parse('vbat=8.2furlongs', 0)).reason, 'bad-unit');
  const value = rejection(p.parse('vbat=abc ibat=1', 0));
  assert.equal(value.reason, 'bad-value');
  assert.match(value.detail, /vbat=abc/);
  for (const line of ['vbat=', 'vbat=nan', 'vbat=Infinity', 'vbat=0x10', 'chg=2', 'flt=yes', 'src=battery']) {
    assert.equal(rejection(p.parse(line, 0)).reason, 'bad-value', line);
  }
});

test('chg/flt accept 0/1 and true/false; src accepts panel, adapter, none', () => {
  const p = createLineParser({});
  const s = sampleOf(p.parse('chg=true flt=FALSE src=Panel', 0));
  assert.deepEqual([s.chg, s.flt, s.src], [true, false, 'panel']);
  assert.equal(sampleOf(p.parse('src=none', 0)).src, 'none');
  assert.equal(sampleOf(p.parse('src=adapter chg=0 flt=1', 0)).flt, true);
});

test('profile field mapping: device key, default unit, calibration; canonical keys still accepted', () => {
  const options: ParserOptions = {
    fields: {
      vbat: { key: 'vb', unit: 'mV' }, // docs/profile.md example mapping
      ibat: { key: 'I_chg', unit: 'mA', scale: 1.02, offset: -0.001 },
      temp: { key: 't' }, // a device that prints temperature as `t`
    },
  };
  const p = createLineParser(options);
  const s = sampleOf(p.parse('vb=8214 I_chg=500 t=31.5 vin=12 ibat=0.1', 0));
  near(s.vbatV, 8.214, 1e-12);
  near(s.ibatA, 0.1, 1e-12); // the later canonical key wins over the mapped one
  near(s.tempC, 31.5, 1e-12);
  assert.equal(s.deviceS, undefined); // `t` is the device's temperature key here
  assert.equal(s.vinV, 12);
  const s2 = sampleOf(p.parse('vb=8.3V I_chg=500', 0)); // a suffix wins over the profile unit
  near(s2.vbatV, 8.3, 1e-12);
  near(s2.ibatA, 0.5 * 1.02 - 0.001, 1e-12);
  // Keys are matched case-insensitively when there is no exact match.
  near(sampleOf(p.parse('VB=8000 VIN=12.5', 0)).vbatV, 8, 1e-12);
});

test('a profile unit that does not fit the field rejects that key with a message naming the profile key', () => {
  const p = createLineParser({ fields: { vbat: { key: 'vb', unit: 'mA' } } });
  const r = rejection(p.parse('vb=8214', 0));
  assert.equal(r.reason, 'bad-unit');
  assert.match(r.detail, /fields\.vbat\.unit "mA"/);
});

test('ntc is converted to tempC through the thermistor model, ntcRaw kept', () => {
  const p = createLineParser({
    thermistor: { model: 'beta', r25: 10000, beta: 3435, pullupOhm: 10000, adcMax: 4095 }, // docs/profile.md example
  });
  // Pull-up divider at counts c: R = 10k * c / (4095 - c). R = 28 704 Ω is 0 °C for B3435
  // (Beta equation of the MathWorks Simscape "Thermistor" block, R25 = 10 kΩ,
  // B = 3435 K; derived): c = 4095 * 28704 / 38704 = 3036.97.
  const s = sampleOf(p.parse('ntc=3037 vbat=8', 0));
  assert.equal(s.ntcRaw, 3037);
  near(s.tempC, 0, 0.05);
  // `temp` wins when both are present.
  assert.equal(sampleOf(p.parse('ntc=3037 temp=5', 0)).tempC, 5);
  // Pinned at a rail: open NTC with a pull-up reads full scale; tempC stays undefined.
  const open = sampleOf(p.parse('ntc=4095 vbat=8', 0));
  assert.equal(open.ntcRaw, 4095);
  assert.equal(open.tempC, undefined);
  assert.equal(sampleOf(p.parse('ntc=0', 0)).tempC, undefined);
  // A reading printed in ohms bypasses the divider: 4 101 Ω is 50 °C for B3435 (Beta equation,
  // MathWorks Simscape "Thermistor"; derived).
  const ohm = sampleOf(p.parse('ntc=4.101kOhm', 0));
  assert.equal(ohm.ntcRaw, 4101);
  near(ohm.tempC, 50, 0.01);
  near(sampleOf(p.parse('ntc=4.101k', 0)).tempC, 50, 0.01);
});

test('the byte path (replay) reads a profile unit as the text path does: ntc in ohms, mV, -0', () => {
  const p = createLineParser({
    fields: { ntc: { key: 'ntc', unit: 'Ohm' }, vbat: { key: 'mv', unit: 'mV' } },
    thermistor: { model: 'beta', r25: 10000, beta: 3435, pullupOhm: 10000, adcMax: 4095 },
  });
  const line = 'ntc=4101 mv=8214 ibat=-0 chg=1';
  const bytes = new TextEncoder().encode(line);
  const fromBytes = sampleOf(p.parseBytes(bytes, 0, bytes.length, 7));
  assert.deepEqual(fromBytes, sampleOf(p.parse(line, 7)));
  // 4 101 Ω is 50 °C for B3435 (as above): the unit says ohms, so the divider is not applied.
  assert.equal(fromBytes.ntcRaw, 4101);
  near(fromBytes.tempC, 50, 0.01);
  assert.equal(fromBytes.vbatV, 8.214);
  assert.ok(Object.is(fromBytes.ibatA, 0), 'ibat=-0 is stored as 0');
});

test('ntc without a divider is ohms; Steinhart–Hart model', () => {
  // A, B, C of the 10 kΩ "Type II / 10K3" curve (IDUINO analog temperature sensor manual), 32 650 Ω
  // = 0.00 °C as in Campbell Scientific 109SS manual Table C-1.
  const p = createLineParser({
    thermistor: { model: 'steinhart-hart', a: 1.129148e-3, b: 2.34125e-4, c: 8.76741e-8 },
  });
  near(sampleOf(p.parse('ntc=32650', 0)).tempC, 0, 0.005);
  near(sampleOf(p.parse('{"ntc":10000}', 0)).tempC, 25, 0.005);
  const noModel = createLineParser({});
  const s = sampleOf(noModel.parse('ntc=1234', 0));
  assert.deepEqual([s.ntcRaw, s.tempC], [1234, undefined]);
});

test('unknown keys are kept as extra channels, numbers when numeric', () => {
  const p = createLineParser({});
  const s = sampleOf(p.parse('vbat=8 duty=0.42 mode=MPPT pin=1200mW note="sun out" __proto__=1', 0));
  assert.deepEqual(s.extra, { duty: 0.42, mode: 'MPPT', pin: 1.2, note: 'sun out', ['__proto__']: 1 });
  assert.equal(Object.getPrototypeOf(s.extra), Object.prototype);
});

test('firmware messages, blank lines, control bytes, too-long lines', () => {
  const p = createLineParser({});
  assert.deepEqual(p.parse('# charger boot, fw 1.4', 0), { kind: 'firmware', text: 'charger boot, fw 1.4' });
  assert.deepEqual(p.parse('', 0), { kind: 'blank' });
  assert.deepEqual(p.parse('   \t ', 0), { kind: 'blank' });
  assert.equal(rejection(p.parse('vbat=8\u0000\u0013', 0)).reason, 'not-text');
  assert.equal(rejection(p.parse('vb\ufffdat=8', 0)).reason, 'not-text');
  // Wherever the control byte hides: in a value, an extra, at either end, before a checksum.
  for (const line of ['vbat=8\u0007', 'x=\u0001 vbat=1', '\u000bvbat=1', 'vbat=1\u000c', 'vbat=1\u000b*00']) {
    assert.equal(rejection(p.parse(line, 0)).reason, 'not-text', JSON.stringify(line));
  }
  assert.equal(rejection(p.parse(appendChecksum('vbat=1\u000b'), 0)).reason, 'not-text');
  p.parse('t,vbat', 0);
  assert.equal(rejection(p.parse('1,8\u0007', 0)).reason, 'not-text');
  assert.equal(rejection(p.parse('1\u0085,8', 0)).reason, 'not-text'); // C1 control (NEL)
  const long = rejection(p.parse('vbat=8.2', 0, true));
  assert.equal(long.reason, 'line-too-long');
  assert.match(long.detail, /4096 bytes/);
  assert.equal(rejection(p.parse('hello there', 0)).reason, 'no-fields');
  assert.equal(rejection(p.parse('8.214', 0)).reason, 'no-fields');
  assert.equal(rejection(p.parse('vbat=8 charging', 0)).reason, 'no-fields');
});

test('checksum checked first: ok lines parse (with or without $), bad lines are bad-checksum', () => {
  const p = createLineParser({});
  const line = appendChecksum('t=1 vbat=8.2');
  assert.equal(sampleOf(p.parse(line, 0)).vbatV, 8.2);
  assert.equal(sampleOf(p.parse(appendChecksum('$vbat=8.3'), 0)).vbatV, 8.3); // `$` delimiter as in NMEA
  assert.equal(sampleOf(p.parse(appendChecksum('{"vbat":8.4}'), 0)).vbatV, 8.4);
  p.parse(appendChecksum('t,vbat'), 0);
  assert.equal(sampleOf(p.parse(appendChecksum('1,8.5'), 0)).vbatV, 8.5);
  const bad = rejection(p.parse('t=1 vbat=8.2*00', 0));
  assert.equal(bad.reason, 'bad-checksum');
  assert.match(bad.detail, /\*00/);
  // Bad vector printed on a web page whose XOR is really 0x22 (NMEA 0183 XOR rule, computed here), through the parser.
  assert.equal(rejection(p.parse('$HEHDT,178.3,T*1E', 0)).reason, 'bad-checksum');
});

test('every result is a fresh object (the pipeline adds `t` to samples)', () => {
  const p = createLineParser({});
  const a = sampleOf(p.parse('vbat=1', 0));
  const b = sampleOf(p.parse('vbat=1', 0));
  assert.notEqual(a, b);
  assert.notEqual(a.extra, b.extra);
});

test('CSV rows: spaces around cells, extra columns, bad values, too many cells', () => {
  const p = createLineParser({ fields: { vbat: { key: 'vb', unit: 'mV' } } });
  p.parse('t, vb, duty, mode', 0);
  const s = sampleOf(p.parse(' 12.5 , 8214 , 0.4 , bulk ', 0));
  assert.deepEqual([s.deviceS, s.vbatV, s.extra], [12.5, 8.214, { duty: 0.4, mode: 'bulk' }]);
  assert.equal(rejection(p.parse('1,2,3,4,5', 0)).reason, 'csv-width');
  assert.equal(rejection(p.parse('1,x,3,4', 0)).reason, 'bad-value');
  assert.equal(rejection(p.parse('1,8A,3,4', 0)).reason, 'bad-unit');
  assert.equal(sampleOf(p.parse('1,8.3V,3,4', 0)).vbatV, 8.3);
});

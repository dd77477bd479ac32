/** Dirty lines: UTF-8 checksums, values that are not numbers after conversion, and lines with nothing in them. */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { Buffer } from 'node:buffer';
import { appendChecksum, nmeaChecksum } from '@shared/telemetry/checksum';
import { createLineParser } from '@shared/telemetry/parse-line';
import type { LineResult, Sample } from '@shared/telemetry/types';

function sampleOf(result: LineResult): Sample {
  assert.equal(result.kind, 'sample', `expected a sample, got ${JSON.stringify(result)}`);
  return (result as { kind: 'sample'; sample: Sample }).sample;
}

function rejection(result: LineResult): { reason: string; detail: string } {
  assert.equal(result.kind, 'rejected', `expected a rejection, got ${JSON.stringify(result)}`);
  return result as { kind: 'rejected'; reason: string; detail: string };
}

const xorOfUtf8 = (text: string) => Buffer.from(text, 'utf8').reduce((sum, byte) => sum ^ byte, 0);

test('the *HH checksum is the XOR of the UTF-8 bytes: a line carrying °C', () => {
  const body = 'temp=25.0°C';
  // By hand: 74 65 6D 70 3D 32 35 2E 30 C2 B0 43 (° is C2 B0 in UTF-8, RFC 3629) XOR to 0x19;
  // XOR of the UTF-16 code units (° = 0xB0 alone) would give 0xDB instead.
  assert.equal(nmeaChecksum(body), 0x19);
  assert.equal(nmeaChecksum(body), xorOfUtf8(body));
  assert.equal(appendChecksum(body), 'temp=25.0°C*19');
  const p = createLineParser({});
  assert.equal(sampleOf(p.parse('temp=25.0°C*19', 0)).tempC, 25);
  assert.equal(rejection(p.parse('temp=25.0°C*DB', 0)).reason, 'bad-checksum');
  // Ω is CE A9; a character beyond the BMP (a surrogate pair in JS) is four bytes.
  for (const text of ['ntc=10kΩ', 'note=µΩ°', 'note=\u{1F50B}', '$vbat=8.2']) {
    assert.equal(nmeaChecksum(text), text.startsWith('$') ? xorOfUtf8(text.slice(1)) : xorOfUtf8(text), text);
  }
  const ohm = createLineParser({ thermistor: { model: 'beta', r25: 10000, beta: 3435 } });
  const s = sampleOf(ohm.parse(appendChecksum('ntc=10kΩ'), 0));
  assert.equal(s.ntcRaw, 10000);
  assert.ok(Math.abs((s.tempC ?? NaN) - 25) < 1e-9); // R25 of the beta model is 25 °C by definition
});

test('a value that is not finite after unit conversion is rejected as implausible, never a sample', () => {
  const p = createLineParser({ fields: { ibat: { key: 'ib', unit: 'mA', scale: 1e300 } } });
  for (const line of [
    'vbat=1e306kV',
    'vbat=1e400',
    'vbat=-1e400',
    '{"vbat":"1e306kV"}',
    'ib=1e12',
    't,vbat',
  ]) {
    const r = p.parse(line, 0);
    if (r.kind === 'header') continue;
    const bad = rejection(r);
    assert.equal(bad.reason, 'implausible', line);
    assert.match(bad.detail, /not a finite number after unit conversion/);
  }
  assert.equal(rejection(p.parse('1,1e306kV', 0)).reason, 'implausible'); // CSV under the header above
  // An extra channel that overflows keeps its text rather than becoming Infinity.
  assert.deepEqual(sampleOf(p.parse('vbat=8 pin=1e306kW', 0)).extra, { pin: '1e306kW' });
});

test('a decimal comma and a unit after a space are named as such', () => {
  const p = createLineParser({});
  const comma = rejection(p.parse('vbat=1,2', 0));
  assert.equal(comma.reason, 'bad-value');
  assert.match(comma.detail, /decimal comma/);
  assert.match(comma.detail, /vbat=1\.2/);
  const json = rejection(p.parse('{"vbat":"1,2"}', 0));
  assert.match(json.detail, /decimal comma/);
  for (const line of ['vbat=8.2 V', 'ibat=598 mA', 't=1 vbat=8.2 V ibat=0.5']) {
    const unit = rejection(p.parse(line, 0));
    assert.equal(unit.reason, 'bad-value', line);
    assert.match(unit.detail, /a unit after a space/, line);
    assert.match(unit.detail, /joined to the number/, line);
  }
  // A stray word that is no unit is still "not key=value".
  assert.match(rejection(p.parse('vbat=8 charging', 0)).detail, /"charging" is not key=value/);
});

test('a line with no field that has a value is rejected, not an empty sample', () => {
  const p = createLineParser({});
  for (const line of ['{}', 'abc=', '{"vbat":null}', 'a= b= c=', '{"note":null}']) {
    const r = rejection(p.parse(line, 0));
    assert.equal(r.reason, 'no-fields', line);
    assert.match(r.detail, /no field with a value/);
  }
  // An unknown key with a value is an extra channel, as the line format says.
  assert.deepEqual(sampleOf(p.parse('duty=0.4', 0)).extra, { duty: 0.4 });
  assert.deepEqual(sampleOf(p.parse('abc= duty=1', 0)).extra, { duty: 1 });
  p.parse('t,vbat', 0);
  assert.equal(rejection(p.parse(' , ', 0)).reason, 'no-fields');
});

test('parseBytes gives what parse gives, for the fast ASCII path and every fallback', () => {
  const options = {
    fields: { vbat: { key: 'vb', unit: 'mV' } },
    thermistor: { model: 'beta' as const, r25: 10000, beta: 3435, pullupOhm: 10000, adcMax: 4095 },
  };
  const lines = [
    't=0.009 vb=10989 ibat=0.251 temp=24.0 vin=14.95 iin=0.199 chg=1 flt=0 src=adapter',
    't=1;vb=-0.5;src=panel;chg=0',
    'ntc=2048 src=none',
    'ntc=4095',
    'VB=8214 mode=bulk',
    'vbat=1,2',
    'vbat=8.2 V',
    'chg=2',
    'src=solar',
    'vb=12e3',
    ' vb=1 ',
    '# booting',
    '{"vb":8214}',
    'vb=8214*' + nmeaChecksum('vb=8214').toString(16).toUpperCase().padStart(2, '0'),
    'temp=25.0°C',
    'vb=1\u0007',
    ',,,',
    'vb=',
    'abc=',
    '',
  ];
  const byText = createLineParser(options);
  const byBytes = createLineParser(options);
  for (const line of lines) {
    const framed = Buffer.from(`xx${line}yy`, 'utf8'); // the line in the middle of a larger buffer
    const r = byBytes.parseBytes(framed, 2, framed.length - 2, 7);
    assert.deepEqual(r, byText.parse(line, 7), line);
  }
  assert.equal(rejection(byBytes.parseBytes(Buffer.from('vb=1'), 0, 4, 0, true)).reason, 'line-too-long');
});

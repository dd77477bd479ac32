import { test } from 'node:test';
import assert from 'node:assert/strict';
import fc from 'fast-check';
import {
  keyConversion,
  parseExtraValue,
  parseFieldValue,
  parsePlainNumber,
  scanDecimal,
} from '@shared/telemetry/units';

const valueOf = (text: string, field: Parameters<typeof parseFieldValue>[1]) => {
  const r = parseFieldValue(text, field, field);
  assert.ok(r.ok, `${text}: ${JSON.stringify(r)}`);
  return r.value;
};
const near = (a: number, b: number, tol = 1e-12) => assert.ok(Math.abs(a - b) <= tol, `${a} vs ${b}`);

test('SI prefixes into base units: m = 1e-3, u/µ = 1e-6, k = 1e3 (SI Brochure, BIPM, prefixes table)', () => {
  near(valueOf('8214mV', 'vbat'), 8.214); // docs/telemetry.md example
  near(valueOf('598mA', 'ibat'), 0.598); // docs/telemetry.md example
  near(valueOf('0.6A', 'ibat'), 0.6); // docs/telemetry.md example
  near(valueOf('250uA', 'iin'), 250e-6);
  near(valueOf('250µA', 'iin'), 250e-6);
  near(valueOf('1500ms', 't'), 1.5);
  near(valueOf('2min', 't'), 120); // 1 min = 60 s (SI Brochure, non-SI units accepted for use)
  near(valueOf('1h', 't'), 3600);
  near(valueOf('10kOhm', 'ntc'), 10000);
  near(valueOf('10k', 'ntc'), 10000);
  near(valueOf('10K', 'ntc'), 10000); // thermistor shorthand "10K" = 10 kΩ (common practice)
  near(valueOf('4700Ω', 'ntc'), 4700);
  near(valueOf('8.2 V', 'vbat'), 8.2); // a space before the unit is allowed
});

test('temperatures: C, °C, K and °F (K = °C + 273.15; °F = °C · 9/5 + 32, SI Brochure / definition)', () => {
  near(valueOf('27.1C', 'temp'), 27.1); // docs/telemetry.md example
  near(valueOf('27.1°C', 'temp'), 27.1);
  near(valueOf('273.15K', 'temp'), 0, 1e-9);
  near(valueOf('32F', 'temp'), 0, 1e-9);
  near(valueOf('-40°F', 'temp'), -40, 1e-9); // the scales cross at -40
});

test('a unit of another quantity is bad-unit and names it; garbage is bad-value', () => {
  const r = parseFieldValue('3V', 'ibat', 'ibat');
  assert.deepEqual(r.ok, false);
  if (!r.ok) {
    assert.equal(r.reason, 'bad-unit');
    assert.match(r.detail, /voltage unit; ibat is in A/);
  }
  const k = parseFieldValue('10k', 'vbat', 'vb');
  assert.ok(!k.ok && k.reason === 'bad-unit'); // `k` alone only means kΩ for a thermistor
  for (const text of ['', 'abc', 'V3', '--1', '0x10']) {
    const bad = parseFieldValue(text, 'vbat', 'vbat');
    assert.ok(!bad.ok && bad.reason === 'bad-value', text);
  }
  // A literal beyond the range of doubles, or a conversion that leaves it, is not a reading.
  for (const text of ['1e999', '1e306kV', '-1e306kV']) {
    const bad = parseFieldValue(text, 'vbat', 'vbat');
    assert.ok(!bad.ok && bad.reason === 'implausible', text);
  }
});

test('profile default unit and calibration (docs/profile.md "unit": "mV")', () => {
  const conv = keyConversion('vbat', { key: 'vb', unit: 'mV' });
  assert.ok(typeof conv !== 'string');
  near((parseFieldValue('8214', 'vbat', 'vb', conv) as { value: number }).value, 8.214);
  // A suffix on the value wins over the profile's unit.
  near((parseFieldValue('8.3V', 'vbat', 'vb', conv) as { value: number }).value, 8.3);
  const cal = keyConversion('ibat', { key: 'i', unit: 'mA', scale: 2, offset: 0.5 });
  assert.ok(typeof cal !== 'string');
  near((parseFieldValue('100', 'ibat', 'i', cal) as { value: number }).value, 0.1 * 2 + 0.5);
  assert.match(keyConversion('vbat', { key: 'vb', unit: 'mA' }) as string, /fields\.vbat\.unit "mA"/);
  assert.match(keyConversion('chg', { key: 'c', unit: 'V' }) as string, /takes no unit/);
});

test('extra channels: numbers, numbers in base units, else text', () => {
  assert.equal(parseExtraValue('0.42'), 0.42);
  near(parseExtraValue('1200mW') as number, 1.2);
  near(parseExtraValue('2.5W') as number, 2.5);
  near(parseExtraValue('150mAh') as number, 0.15);
  assert.equal(parseExtraValue('MPPT'), 'MPPT');
  assert.equal(parseExtraValue('3 apples'), '3 apples');
});

test('plain numbers: decimal only, finite only', () => {
  assert.equal(parsePlainNumber('8.214'), 8.214);
  assert.equal(parsePlainNumber('-1e-3'), -0.001);
  for (const text of ['', ' ', 'Infinity', '-Infinity', '0x1f', '0b1', '0o7', 'NaN', '1,5']) {
    assert.ok(Number.isNaN(parsePlainNumber(text)), text);
  }
});

test('the in-place decimal scanner agrees exactly with Number() (ECMAScript StringToNumber)', () => {
  fc.assert(
    fc.property(
      fc.oneof(
        fc.double({ noNaN: true, noDefaultInfinity: true }).map((v) => String(v)),
        fc
          .tuple(fc.integer({ min: -99999, max: 99999 }), fc.integer({ min: 0, max: 9 }))
          .map(([m, d]) => (m / 10 ** d).toFixed(d)),
        fc.stringMatching(/^[-+]?[0-9]{0,9}\.?[0-9]{0,9}$/),
      ),
      (text) => {
        const scanned = scanDecimal(`x=${text};`, 2, 2 + text.length);
        if (Number.isNaN(scanned)) return; // not the fast path: the general path handles it
        assert.ok(Object.is(scanned, Number(text)), `${text}: ${scanned} vs ${Number(text)}`);
      },
    ),
    { numRuns: 5000 },
  );
  assert.equal(scanDecimal('8.214', 0, 5), 8.214);
  assert.ok(Number.isNaN(scanDecimal('1e3', 0, 3))); // exponents take the general path
  assert.ok(Number.isNaN(scanDecimal('-', 0, 1)));
  assert.ok(Number.isNaN(scanDecimal('.', 0, 1)));
  assert.ok(Number.isNaN(scanDecimal('', 0, 0)));
});

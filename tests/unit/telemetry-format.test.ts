import { test } from 'node:test';
import assert from 'node:assert/strict';
import fc from 'fast-check';
import { csvHeaderLine, formatTelemetryLine, type LineValue } from '@shared/telemetry/format-line';
import { createLineParser } from '@shared/telemetry/parse-line';
import { splitChecksum } from '@shared/telemetry/checksum';
import type { LineResult, Sample } from '@shared/telemetry/types';

const EXAMPLE = {
  t: 812.5,
  vbat: 8.214,
  ibat: 0.598,
  temp: 27.1,
  vin: 17.9,
  iin: 0.31,
  chg: true,
  flt: false,
};

test('prints the docs/telemetry.md examples in each shape', () => {
  assert.equal(
    formatTelemetryLine(EXAMPLE, 'kv'),
    't=812.5 vbat=8.214 ibat=0.598 temp=27.1 vin=17.9 iin=0.31 chg=1 flt=0', // docs/telemetry.md key=value example
  );
  const four = { t: 812.5, vbat: 8.214, ibat: 0.598, temp: 27.1 };
  assert.equal(csvHeaderLine(Object.keys(four)), 't,vbat,ibat,temp'); // docs/telemetry.md CSV example
  assert.equal(formatTelemetryLine(four, 'csv'), '812.5,8.214,0.598,27.1');
  assert.equal(
    formatTelemetryLine({ t: 812.5, vbat: 8.214, ibat: 0.598 }, 'json'),
    '{"t":812.5,"vbat":8.214,"ibat":0.598}', // docs/telemetry.md JSON example
  );
});

test('digits, checksum, strings that need quoting', () => {
  assert.equal(
    formatTelemetryLine({ vbat: 8.2, ibat: 0.5 }, 'kv', { digits: { vbat: 3 } }),
    'vbat=8.200 ibat=0.5',
  );
  assert.equal(formatTelemetryLine({ vbat: 8.21449 }, 'json', { digits: { vbat: 3 } }), '{"vbat":8.214}');
  const line = formatTelemetryLine({ vbat: 8.2 }, 'kv', { checksum: true });
  assert.equal(splitChecksum(line).checksum, 'ok');
  assert.equal(formatTelemetryLine({ note: 'sun out', src: 'panel' }, 'kv'), 'note="sun out" src=panel');
  assert.equal(formatTelemetryLine({ note: 'a,b', n: 1 }, 'csv'), '"a,b",1'); // RFC 4180 quoting by csv-stringify
  // XOR of "t,vbat": 0x74 ^ 0x2c ^ 0x76 ^ 0x62 ^ 0x61 ^ 0x74 = 0x59 (computed by hand, NMEA 0183 rule, Vaisala WXT530 User's Guide).
  assert.equal(csvHeaderLine(['t', 'vbat'], { checksum: true }), 't,vbat*59');
});

/** What the parser should read back for a printed value of a canonical or extra key. */
function readBack(result: LineResult): Record<string, LineValue> {
  assert.equal(result.kind, 'sample', JSON.stringify(result));
  const s = (result as { sample: Sample }).sample;
  const out: Record<string, LineValue> = { ...s.extra };
  const pairs: [string, LineValue | undefined][] = [
    ['t', s.deviceS],
    ['vbat', s.vbatV],
    ['ibat', s.ibatA],
    ['temp', s.tempC],
    ['vin', s.vinV],
    ['iin', s.iinA],
    ['chg', s.chg],
    ['flt', s.flt],
    ['src', s.src],
  ];
  for (const [k, v] of pairs) if (v !== undefined) out[k] = v;
  return out;
}

const finite = fc.double({ noNaN: true, noDefaultInfinity: true, min: -1e6, max: 1e6 });
const valuesArb = fc.record(
  {
    t: finite,
    vbat: finite,
    ibat: finite,
    temp: finite,
    vin: finite,
    iin: finite,
    chg: fc.boolean(),
    flt: fc.boolean(),
    src: fc.constantFrom('panel', 'adapter', 'none'),
    duty: finite,
    // Text of an extra channel: not a number, inner spaces only (CSV cells are trimmed).
    mode: fc.stringMatching(/^[A-Za-z]([A-Za-z_ ]{0,12}[A-Za-z])?$/),
  },
  { requiredKeys: [] },
);

for (const shape of ['kv', 'csv', 'json'] as const) {
  test(`round trip: format -> parse gives the same values (${shape})`, () => {
    fc.assert(
      fc.property(valuesArb, fc.boolean(), (values, checksum) => {
        fc.pre(Object.keys(values).length > (shape === 'csv' ? 1 : 0)); // a CSV header needs 2 fields
        const parser = createLineParser({});
        if (shape === 'csv') {
          const header = parser.parse(csvHeaderLine(Object.keys(values), { checksum }), 0);
          assert.equal(header.kind, 'header');
        }
        const line = formatTelemetryLine(values, shape, { checksum });
        const expected: Record<string, LineValue> = { ...values };
        const got = readBack(parser.parse(line, 0));
        for (const key of Object.keys(got)) if (Object.is(got[key], -0)) got[key] = 0;
        for (const key of Object.keys(expected)) if (Object.is(expected[key], -0)) expected[key] = 0;
        assert.deepEqual(got, expected, line);
      }),
      { numRuns: 1500 },
    );
  });
}

test('round trip with fixed digits reads back the rounded value', () => {
  const parser = createLineParser({});
  const line = formatTelemetryLine({ vbat: 8.21449, ibat: -0.0004 }, 'kv', { digits: { vbat: 3, ibat: 3 } });
  assert.equal(line, 'vbat=8.214 ibat=-0.000');
  const got = readBack(parser.parse(line, 0));
  assert.equal(got.vbat, 8.214);
  assert.ok(got.ibat === 0); // -0.000 reads back as zero
});

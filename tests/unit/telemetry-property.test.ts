import { test } from 'node:test';
import assert from 'node:assert/strict';
import fc from 'fast-check';
import { appendChecksum } from '@shared/telemetry/checksum';
import { LineFramer } from '@shared/telemetry/framer';
import { createLineParser } from '@shared/telemetry/parse-line';
import { MAX_LINE_BYTES, type LineResult, type ParserOptions } from '@shared/telemetry/types';

const OPTIONS: ParserOptions = {
  fields: { vbat: { key: 'vb', unit: 'mV' } },
  thermistor: { model: 'beta', r25: 10000, beta: 3435, pullupOhm: 10000, adcMax: 4095 },
};

interface Tally {
  framed: number;
  sample: number;
  rejected: number;
  blank: number;
  firmware: number;
  header: number;
}

function run(chunks: Uint8Array[], maxBytes?: number): Tally {
  const parser = createLineParser(OPTIONS);
  const tally: Tally = { framed: 0, sample: 0, rejected: 0, blank: 0, firmware: 0, header: 0 };
  const framer = new LineFramer((text, tooLong) => {
    tally.framed++;
    const result: LineResult = parser.parse(text, tally.framed, tooLong);
    tally[result.kind]++;
    if (result.kind === 'rejected') assert.ok(result.detail.length > 0, 'a rejection says why');
    if (tooLong) assert.equal(result.kind, 'rejected');
  }, maxBytes);
  for (const c of chunks) {
    framer.push(c);
    assert.ok(framer.bufferedBytes <= (maxBytes ?? MAX_LINE_BYTES) + 1);
  }
  framer.end();
  return tally;
}

const accounted = (t: Tally) => t.sample + t.rejected + t.blank + t.firmware + t.header;

// Bytes that look like telemetry often enough to reach every branch of the parser.
const tokenArb = fc.oneof(
  fc.constantFrom(
    't=1 ',
    'vbat=8.2 ',
    'vb=8214 ',
    'ibat=598mA ',
    'ntc=4095 ',
    'chg=1 ',
    'src=panel ',
    'x=abc ',
    't,vbat,ibat\n',
    '1,2,3\n',
    '{"vbat":8.1}\n',
    '{"t":',
    '# boot\n',
    '*2A',
    '*00\n',
    '\r\n',
    '\n',
    ',',
    ';',
    '"',
    '=',
    '°C',
  ),
  fc.uint8Array({ maxLength: 12 }).map((b) => String.fromCharCode(...b)),
);
const streamArb = fc
  .array(tokenArb, { maxLength: 60 })
  .map((parts) => new TextEncoder().encode(parts.join('')));

test('random bytes through framer and parser: never throws, every framed line is accounted for', () => {
  fc.assert(
    fc.property(
      fc.oneof(streamArb, fc.uint8Array({ maxLength: 600 })),
      fc.integer({ min: 1, max: 64 }),
      fc.integer({ min: 8, max: 200 }),
      (bytes, chunkSize, maxBytes) => {
        const chunks: Uint8Array[] = [];
        for (let pos = 0; pos < bytes.length; pos += chunkSize)
          chunks.push(bytes.subarray(pos, pos + chunkSize));
        const tally = run(chunks, maxBytes);
        assert.equal(accounted(tally), tally.framed);
        // docs/telemetry.md: one line per newline, plus a last unterminated one.
        const newlines = bytes.reduce((n, b) => n + (b === 10 ? 1 : 0), 0);
        const tail = bytes.length > 0 && bytes[bytes.length - 1] !== 10 ? 1 : 0;
        assert.equal(tally.framed, newlines + tail);
      },
    ),
    { numRuns: 3000 },
  );
});

test('the parser alone never throws on any string, with any flags', () => {
  const parser = createLineParser(OPTIONS);
  fc.assert(
    fc.property(fc.string({ unit: 'binary', maxLength: 200 }), fc.boolean(), (text, tooLong) => {
      const result = parser.parse(text, 0, tooLong);
      assert.ok(['sample', 'rejected', 'blank', 'firmware', 'header'].includes(result.kind));
    }),
    { numRuns: 5000 },
  );
});

test('a 10 MB burst without newline keeps memory bounded and costs one rejected line', () => {
  const burst = new Uint8Array(10 * 1024 * 1024).fill(0x37); // '7' repeated: no newline
  const chunks: Uint8Array[] = [];
  for (let pos = 0; pos < burst.length; pos += 16384) chunks.push(burst.subarray(pos, pos + 16384));
  chunks.push(new TextEncoder().encode('\nvbat=8.2\n'));
  const tally = run(chunks); // asserts bufferedBytes <= 4097 after every chunk (docs/telemetry.md: 4096-byte lines)
  assert.deepEqual(tally, { framed: 2, sample: 1, rejected: 1, blank: 0, firmware: 0, header: 0 });
});

test('the fast key=value path and the general scan give the same result', () => {
  // A line with one kind of separator takes the fast path; the same pairs joined by
  // ", " (two kinds) take the general scan. Both must read the same sample or rejection.
  const keyArb = fc.constantFrom(
    't',
    'vbat',
    'vb',
    'ibat',
    'temp',
    'ntc',
    'chg',
    'flt',
    'src',
    'Vin',
    'duty',
    'x_1',
  );
  const valueArb = fc.oneof(
    fc.double({ noNaN: true, noDefaultInfinity: true }).map(String),
    fc.integer({ min: -5000, max: 5000 }).map(String),
    fc.constantFrom(
      '0',
      '1',
      'true',
      'panel',
      'none',
      '8214mV',
      '598mA',
      '27.1°C',
      '10k',
      'abc',
      '3V',
      '',
      '1e3',
      '.5',
    ),
  );
  fc.assert(
    fc.property(fc.array(fc.tuple(keyArb, valueArb), { minLength: 1, maxLength: 10 }), (pairs) => {
      const tokens = pairs.map(([k, v]) => `${k}=${v}`);
      const fast = createLineParser(OPTIONS).parse(tokens.join(' '), 5);
      const general = createLineParser(OPTIONS).parse(tokens.join(', '), 5);
      assert.deepEqual(fast, general);
    }),
    { numRuns: 3000 },
  );
});

test('the fast CSV row path and the CSV library path give the same result', () => {
  // An unquoted row takes the fast path; the same cells each in quotes go through csv-parse.
  const cellArb = fc.oneof(
    fc.double({ noNaN: true, noDefaultInfinity: true }).map(String),
    fc.constantFrom('0', '1', '', ' 2.5 ', '8214mV', 'abc', '3V', 'panel', '-0', '4095'),
  );
  const header = 't,vb,ibat,ntc,chg,src,duty';
  fc.assert(
    fc.property(fc.array(cellArb, { minLength: 2, maxLength: 9 }), (cells) => {
      fc.pre(!/^[A-Za-z_]/.test(cells[0].trim())); // a row starting with a word may be a header
      const fastParser = createLineParser(OPTIONS);
      const libParser = createLineParser(OPTIONS);
      fastParser.parse(header, 0);
      libParser.parse(header, 0);
      const fast = fastParser.parse(cells.join(','), 1);
      const lib = libParser.parse(cells.map((c) => `"${c.trim()}"`).join(','), 1);
      assert.deepEqual(fast, lib);
    }),
    { numRuns: 3000 },
  );
});

test('a control byte anywhere in an otherwise good line makes it not-text', () => {
  const lines = [
    't=812.5 vbat=8.214 ibat=0.598 temp=27.1 vin=17.9 iin=0.31 chg=1 flt=0',
    'vb=8214,ibat=0.5,duty=0.4',
    '812.5,8.214,0.598',
    '{"vbat":8.1,"src":"panel"}',
    '# firmware says hi',
  ];
  const controlArb = fc.oneof(
    fc.integer({ min: 0, max: 8 }),
    fc.integer({ min: 11, max: 31 }),
    fc.integer({ min: 127, max: 159 }),
    fc.constant(0xfffd),
  );
  fc.assert(
    fc.property(
      fc.constantFrom(...lines),
      fc.nat(),
      controlArb,
      fc.boolean(),
      (line, at, code, withChecksum) => {
        const parser = createLineParser(OPTIONS);
        parser.parse('t,vbat,ibat', 0);
        const pos = at % (line.length + 1);
        let bad = line.slice(0, pos) + String.fromCharCode(code) + line.slice(pos);
        if (withChecksum) bad = appendChecksum(bad);
        const result = parser.parse(bad, 0);
        assert.equal(result.kind, 'rejected', JSON.stringify(bad));
        assert.equal((result as { reason: string }).reason, 'not-text', JSON.stringify(bad));
      },
    ),
    { numRuns: 3000 },
  );
});

test('bytes mode (replay) and text mode frame and parse every line the same, each line once', () => {
  fc.assert(
    fc.property(
      fc.oneof(streamArb, fc.uint8Array({ maxLength: 600 })),
      fc.integer({ min: 1, max: 64 }),
      fc.integer({ min: 8, max: 200 }),
      (bytes, chunkSize, maxBytes) => {
        const textParser = createLineParser(OPTIONS);
        const byteParser = createLineParser(OPTIONS);
        const fromText: LineResult[] = [];
        const fromBytes: LineResult[] = [];
        const textFramer = new LineFramer((text, tooLong) => {
          fromText.push(textParser.parse(text, fromText.length, tooLong));
        }, maxBytes);
        const byteFramer = LineFramer.ofBytes((b, from, to, tooLong) => {
          fromBytes.push(byteParser.parseBytes(b, from, to, fromBytes.length, tooLong));
        }, maxBytes);
        for (let pos = 0; pos < bytes.length; pos += chunkSize) {
          textFramer.push(bytes.subarray(pos, pos + chunkSize));
          byteFramer.push(bytes.subarray(pos, pos + chunkSize));
        }
        textFramer.end();
        byteFramer.end();
        assert.deepEqual(fromBytes, fromText);
        assert.equal(byteFramer.lines, fromBytes.length);
        const newlines = bytes.reduce((n, b) => n + (b === 10 ? 1 : 0), 0);
        const tail = bytes.length > 0 && bytes[bytes.length - 1] !== 10 ? 1 : 0;
        assert.equal(fromBytes.length, newlines + tail);
      },
    ),
    { numRuns: 2000 },
  );
});

test('a value that is not finite after conversion never becomes a sample; every sample is finite', () => {
  // 1e305kV is 1e308 V (finite); 1e306kV, 1e400 and 9e307kOhm are beyond the range of doubles.
  const overflowArb = fc.constantFrom(
    '1e306kV',
    '1e400',
    '-1e999',
    '2e308',
    '1e305kV',
    '9e307kOhm',
    '1e303MOhm',
  );
  const goodArb = fc.oneof(
    fc.double({ noNaN: true, noDefaultInfinity: true, min: -1e6, max: 1e6 }).map(String),
    fc.constantFrom('8214mV', '0.6A', '27.1C', '10k', '1', '0'),
  );
  const keyArb = fc.constantFrom('t', 'vbat', 'vb', 'ibat', 'temp', 'ntc', 'vin', 'iin', 'duty');
  const pairArb = fc.tuple(keyArb, fc.oneof(goodArb, overflowArb));
  fc.assert(
    fc.property(
      fc.array(pairArb, { minLength: 1, maxLength: 8 }),
      fc.constantFrom('kv', 'json'),
      (pairs, shape) => {
        const parser = createLineParser(OPTIONS);
        // JSON keeps the last value of a repeated key; key=value reads every pair.
        const read = shape === 'json' ? Object.entries(Object.fromEntries(pairs)) : pairs;
        const line =
          shape === 'kv'
            ? pairs.map(([k, v]) => `${k}=${v}`).join(' ')
            : JSON.stringify(Object.fromEntries(pairs));
        const result = parser.parse(line, 0);
        // Each pair judged alone: one implausible pair makes the whole line a rejection.
        const alone = read.map(([k, v]) => createLineParser(OPTIONS).parse(`${k}=${v}`, 0));
        if (alone.some((r) => r.kind === 'rejected' && r.reason === 'implausible')) {
          assert.equal(result.kind, 'rejected', line);
        }
        if (result.kind === 'sample') {
          const s = result.sample;
          for (const v of [s.deviceS, s.vbatV, s.ibatA, s.tempC, s.ntcRaw, s.vinV, s.iinA])
            if (v !== undefined) assert.ok(Number.isFinite(v), `${line}: ${v}`);
          for (const v of Object.values(s.extra))
            if (typeof v === 'number') assert.ok(Number.isFinite(v), line);
        }
      },
    ),
    { numRuns: 3000 },
  );
});

test('key=value lines read from bytes and from text give the same result (the replay fast path)', () => {
  const keyArb = fc.constantFrom(
    't',
    'vbat',
    'vb',
    'VB',
    'vbatx',
    'ibat',
    'temp',
    'ntc',
    'chg',
    'flt',
    'src',
    'Vin',
    'iin',
    'duty',
    'a_long_key',
  );
  const valueArb = fc.oneof(
    fc.double({ noNaN: true, noDefaultInfinity: true }).map(String),
    fc.integer().map(String),
    fc.constantFrom(
      '0',
      '1',
      '2',
      '-',
      '+',
      '.',
      '1.',
      '.5',
      '-.5',
      '+3',
      '00012',
      '1234567890123456',
      '0.1234567890123456789012',
      'panel',
      'adapter',
      'none',
      'Panel',
      'solar',
      '8214mV',
      '',
      '1,5',
    ),
  );
  const sepArb = fc.constantFrom(' ', ',', ';', '\t', '  ', ', ');
  fc.assert(
    fc.property(fc.array(fc.tuple(keyArb, valueArb, sepArb), { minLength: 1, maxLength: 10 }), (pairs) => {
      const line = pairs.map(([k, v, sep], i) => (i === 0 ? '' : sep) + `${k}=${v}`).join('');
      const bytes = new TextEncoder().encode(line);
      const fromBytes = createLineParser(OPTIONS).parseBytes(bytes, 0, bytes.length, 3);
      assert.deepEqual(fromBytes, createLineParser(OPTIONS).parse(line, 3), line);
    }),
    { numRuns: 4000 },
  );
});

/**
 * Property: every line the firmware library builds (firmware/src/taperline_line.h, through
 * the host CLI firmware/host/tl_cli.c built with gcc) is byte for byte the line a reference
 * printer written here expects, is accepted by Taperline's own framer and parser with a valid
 * checksum, and reads back with the exact values; a line the library refuses is one that
 * would not fit its buffer or Taperline's 4096-byte limit.
 */
import { after, before, test } from 'node:test';
import assert from 'node:assert/strict';
import fc from 'fast-check';
import { LineFramer } from '@shared/telemetry/framer';
import { createLineParser } from '@shared/telemetry/parse-line';
import { MAX_LINE_BYTES, type LineResult, type Sample } from '@shared/telemetry/types';
import { buildPath, LineCli, make } from './firmware-build';
import { longArb, requestArb, requestText, type Item, type Request, type Shape } from './line-requests';

// ---- the reference printer (written from the contract, not from the C code) ----

/** milli / 10^(3-d) rounded half away from zero, as text with d decimals. */
function fixedText(milli: number, decimals: number): string {
  const d = Math.min(decimals, 3);
  const div = 10n ** BigInt(3 - d);
  const neg = milli < 0;
  const mag = BigInt(Math.abs(milli));
  const q = mag / div + (mag % div >= div / 2n && div > 1n ? 1n : 0n);
  let digits = q.toString().padStart(d + 1, '0');
  if (d > 0) digits = `${digits.slice(0, -d)}.${digits.slice(-d)}`;
  return neg && q !== 0n ? `-${digits}` : digits;
}

/** The value the parser must read from that text: the same integer over the same power of ten. */
function fixedValue(milli: number, decimals: number): number {
  const d = Math.min(decimals, 3);
  const div = 10n ** BigInt(3 - d);
  const mag = BigInt(Math.abs(milli));
  const q = Number(mag / div + (mag % div >= div / 2n && div > 1n ? 1n : 0n));
  const v = d === 0 ? q : q / 10 ** d;
  return milli < 0 && q !== 0 ? -v : v;
}

function valueText(item: Item, shape: Shape): string | null {
  switch (item.kind) {
    case 't':
      return fixedText(item.ms, 3);
    case 'm':
      return fixedText(item.milli, item.decimals);
    case 'i':
      return String(item.value);
    case 'f':
      return item.on ? '1' : '0';
    case 'w':
      return shape === 'json' ? `"${item.word}"` : item.word;
    case 'x':
      return null;
  }
}

const xorHex = (body: string): string => {
  let x = 0;
  for (const b of Buffer.from(body, 'utf8')) x ^= b;
  return x.toString(16).toUpperCase().padStart(2, '0');
};

/** The lines the board should send for a request, or '!<bits>' where it must refuse. */
function expectedOutput(r: Request): string[] {
  const cap = Math.min(Math.max(r.size - 2, 0), MAX_LINE_BYTES);
  const finish = (body: string, empty: boolean): string => {
    const line = `${body}*${xorHex(body)}`;
    // Error bits as the library reports them: 1 = does not fit, 8 = nothing to send.
    const bits = (Buffer.byteLength(line) > cap ? 1 : 0) | (empty ? 8 : 0);
    return bits === 0 ? line : `!${bits}`;
  };
  if (r.shape === 'csv') {
    const header = finish(r.items.map((i) => i.key).join(','), r.items.length < 2);
    if (header.startsWith('!')) return [header];
    const row = finish(
      r.items.map((i) => valueText(i, 'csv') ?? '').join(','),
      r.items.every((i) => i.kind === 'x'),
    );
    return [header, row];
  }
  if (r.shape === 'json') {
    const body = `{${r.items
      .filter((i) => i.kind !== 'x')
      .map((i) => `"${i.key}":${valueText(i, 'json')}`)
      .join(',')}}`;
    return [
      finish(
        body,
        r.items.every((i) => i.kind === 'x'),
      ),
    ];
  }
  const pairs = r.items.filter((i) => i.kind !== 'x').map((i) => `${i.key}=${valueText(i, 'kv')}`);
  return [finish(pairs.join(' '), pairs.length === 0)];
}

// ---- what the parser must read back ----

const MILLI_FIELD: Record<string, keyof Sample> = {
  vbat: 'vbatV',
  ibat: 'ibatA',
  temp: 'tempC',
  vin: 'vinV',
  iin: 'iinA',
};

function checkSample(sample: Sample, items: Item[]): void {
  const extraWant: Record<string, number | string> = {};
  for (const item of items) {
    if (item.kind === 't') assert.equal(sample.deviceS, fixedValue(item.ms, 3), 't');
    else if (item.kind === 'x') {
      if (item.key in MILLI_FIELD) assert.equal(sample[MILLI_FIELD[item.key]], undefined, item.key);
      else assert.equal(Object.hasOwn(sample.extra, item.key), false, `${item.key} is missing`);
    } else if (item.key in MILLI_FIELD && item.kind === 'm')
      assert.equal(sample[MILLI_FIELD[item.key]], fixedValue(item.milli, item.decimals), item.key);
    else if (item.key === 'ntc' && item.kind === 'i') assert.equal(sample.ntcRaw, item.value, 'ntc');
    else if ((item.key === 'chg' || item.key === 'flt') && item.kind === 'f')
      assert.equal(sample[item.key], item.on, item.key);
    else if (item.key === 'src' && item.kind === 'w') assert.equal(sample.src, item.word, 'src');
    else if (item.kind === 'm') extraWant[item.key] = fixedValue(item.milli, item.decimals);
    else if (item.kind === 'i') extraWant[item.key] = item.value;
    else if (item.kind === 'f') extraWant[item.key] = item.on ? 1 : 0;
    else if (item.kind === 'w') extraWant[item.key] = item.word;
  }
  assert.deepEqual({ ...sample.extra }, extraWant, 'extra channels');
}

/** Frames the board's bytes and parses every line, as a station does. */
function readBack(bytes: string): LineResult[] {
  const parser = createLineParser({});
  const results: LineResult[] = [];
  const framer = new LineFramer((text, tooLong) => results.push(parser.parse(text, 0, tooLong)));
  framer.push(Buffer.from(bytes, 'utf8'));
  framer.end();
  return results;
}

let cli: LineCli;
before(() => {
  make(['host']);
  cli = new LineCli(buildPath('build', 'host', 'tl_cli'));
});
after(() => cli.close());

async function checkRequest(r: Request): Promise<void> {
  const out = await cli.request(requestText(r));
  const lines = out.split('\n').filter((l, k, all) => k < all.length - 1 || l !== '');
  const want = expectedOutput(r);
  assert.deepEqual(lines, want, `request ${requestText(r).slice(0, 200)}`);
  const sent = lines.filter((l) => !l.startsWith('!'));
  for (const l of sent) assert.ok(Buffer.byteLength(l) <= MAX_LINE_BYTES, 'within the line limit');
  if (sent.length === 0) return;
  const results = readBack(sent.map((l) => `${l}\n`).join(''));
  const samples = results.filter((res) => res.kind === 'sample');
  for (const res of results)
    assert.notEqual(res.kind, 'rejected', `rejected: ${res.kind === 'rejected' ? res.detail : ''} in ${out}`);
  if (r.shape === 'csv') {
    assert.equal(results[0].kind, 'header');
    if (sent.length === 1) return; // header sent, row did not fit
  }
  assert.equal(samples.length, 1);
  const sample = samples[0];
  if (sample.kind === 'sample') checkSample(sample.sample, r.items);
}

test('every line the library builds is the reference line, passes the parser and reads back exactly', async () => {
  await fc.assert(fc.asyncProperty(requestArb, checkRequest), { numRuns: 3000 });
});

test('lines at Taperline 4096-byte limit: sent whole when they fit, refused (never cut) when not', async () => {
  let sent = 0;
  let refused = 0;
  await fc.assert(
    fc.asyncProperty(longArb, async (r) => {
      await checkRequest(r);
      const want = expectedOutput(r);
      if (want[want.length - 1].startsWith('!')) refused++;
      else sent++;
    }),
    { numRuns: 150 },
  );
  assert.ok(
    sent > 0 && refused > 0,
    `both sides of the limit were reached (${sent} sent, ${refused} refused)`,
  );
});

test('the start-up line carries the board id and firmware version as "# board=<id> fw=<version>"', async () => {
  const out = await cli.request('board 64 GS-0042 1.4.2');
  assert.equal(out, '# board=GS-0042 fw=1.4.2\n');
  const [res] = readBack(out);
  assert.deepEqual(res, { kind: 'firmware', text: 'board=GS-0042 fw=1.4.2' });
  assert.equal(await cli.request('board 64 GS 1.4 x'), '# board=GS fw=1.4\n');
  assert.equal(await cli.request('board 20 GS-0042 1.4.2'), '!1\n', 'does not fit 20 bytes: not sent');
});

/**
 * End to end on an emulated board: the ChargerAvr sketch, built with avr-gcc against the
 * Arduino AVR core, runs in simavr (firmware/sim/charge_harness.c) with its UART on a pty
 * and its ADC pins and status pins fed from a scripted 2S Li-ion charge; `taperline record`
 * reads that pty. Every line arrives, every checksum is valid, every value is the one the
 * script's voltages give through the ADC and the sketch's integer arithmetic, and the
 * phases come out as scripted.
 *
 * The charge is invented test data (a trail-camera pack), not a measurement.
 */
import { after, test } from 'node:test';
import assert from 'node:assert/strict';
import { spawn, type ChildProcess } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { createInterface } from 'node:readline';
import { parseBoardLine } from '@shared/engine/checks/board-line';
import { openRunReader } from '../../main/recorder';
import { until } from '../integration/serial-pty';
import { buildPath, make } from './firmware-build';

const repo = resolve(__dirname, '..', '..');
const VREF_MV = 5000;

interface Row {
  vbatMv: number;
  ibatMa: number;
  ntcOhm: number;
  charging: boolean;
  fault: boolean;
}

// The script, one row per second. Phase lengths leave the engine's 5 s debounce room.
function script(): Row[] {
  const rows: Row[] = [];
  const ntcAt = (c: number) => Math.round(10000 * Math.exp(3435 * (1 / (c + 273.15) - 1 / 298.15)));
  for (let s = 0; s < 40; s++)
    rows.push({ vbatMv: 5600 + 5 * s, ibatMa: 100, ntcOhm: ntcAt(25), charging: true, fault: false });
  for (let s = 0; s < 120; s++)
    rows.push({
      vbatMv: 6400 + Math.round((1900 * s) / 120),
      ibatMa: 1000,
      ntcOhm: ntcAt(25 + s / 40),
      charging: true,
      fault: false,
    });
  for (let s = 0; s < 120; s++)
    rows.push({
      vbatMv: 8400,
      ibatMa: Math.round(1000 * Math.exp(-s / 45)),
      ntcOhm: ntcAt(28 - s / 60),
      charging: true,
      fault: false,
    });
  for (let s = 0; s < 50; s++)
    rows.push({ vbatMv: 8350, ibatMa: 0, ntcOhm: ntcAt(26), charging: false, fault: false });
  return rows;
}

// The sketch's wiring: 15 k / 10 k divider, amplifier 1 mV per mA, 10 k pull-up to the NTC.
function pinsMv(r: Row): [number, number, number] {
  return [Math.round((r.vbatMv * 10) / 25), r.ibatMa, Math.round((VREF_MV * r.ntcOhm) / (r.ntcOhm + 10000))];
}

// simavr's ADC model, measured with this harness: counts = floor(mV x 1023 / Vref), clipped
// at 1023 (the ATmega328P datasheet's own formula uses 1024; the emulator's differs slightly).
const counts = (mv: number) => Math.min(1023, Math.floor((mv * 1023) / VREF_MV));
// The sketch: four readings summed, then counts x full scale / 4096 rounded half up.
const scaled = (sum: number, fullScale: number) => Math.floor((sum * fullScale + 2048) / 4096);

function expected(r: Row): { vbatV: number; ibatA: number; ntc: number; chg: boolean; flt: boolean } {
  const [a0, a1, a2] = pinsMv(r).map(counts);
  return {
    vbatV: scaled(4 * a0, 12500) / 1000,
    ibatA: scaled(4 * a1, 5000) / 1000,
    ntc: Math.floor((4 * a2 + 2) / 4),
    chg: r.charging,
    flt: r.fault,
  };
}

const dir = mkdtempSync(join(tmpdir(), 'taperline-simavr-'));
const children: ChildProcess[] = [];
after(() => {
  for (const c of children) c.kill('SIGKILL');
  rmSync(dir, { recursive: true, force: true });
});

async function recordCharge(shape: 'TL_KV' | 'TL_CSV' | 'TL_JSON'): Promise<void> {
  const BUILD = `build-sim-${shape}`;
  make(['avr', 'sim'], { SKETCH_DEFS: `-DBOARD_ID=\\"TC-0007\\" -DTAPERLINE_SHAPE=${shape}` }, BUILD);
  // CSV: the header line comes once, after the board line.
  const head = shape === 'TL_CSV' ? 2 : 1;
  const rows = script();
  const scriptFile = join(dir, `charge-${shape}.txt`);
  writeFileSync(
    scriptFile,
    rows.map((r) => [...pinsMv(r), r.charging ? 0 : 1, r.fault ? 0 : 1].join(' ')).join('\n') + '\n',
  );
  const uartLog = join(dir, `uart-${shape}.log`);
  const profile = join(dir, `profile-${shape}.json`);
  writeFileSync(
    profile,
    JSON.stringify({
      name: 'trail camera 2S (invented)',
      chemistry: 'li-ion',
      cells: 2,
      capacityAh: 1,
      chargeCurrentA: 1,
      terminationA: 0.1,
      preconditionA: 0.1,
      thermistor: { model: 'beta', r25: 10000, beta: 3435, pullupOhm: 10000, adcMax: 1023 },
    }),
  );

  // 50 times real time: 330 s of charge in under 7 s.
  const harness = spawn(
    buildPath(BUILD, 'sim', 'charge_harness'),
    [buildPath(BUILD, 'avr', 'ChargerAvr.elf'), scriptFile, '50', uartLog],
    {
      stdio: ['pipe', 'pipe', 'pipe'],
    },
  );
  children.push(harness);
  let harnessOut = '';
  harness.stderr.on('data', (d: Buffer) => (harnessOut += d.toString()));
  const ptyPath = await new Promise<string>((res, rej) => {
    const rl = createInterface({ input: harness.stdout });
    rl.on('line', (l) => {
      harnessOut += `${l}\n`;
      const m = /^pty (\S+)$/.exec(l);
      if (m) res(m[1]);
    });
    harness.once('exit', (code) => rej(new Error(`harness exited ${code}: ${harnessOut}`)));
  });
  const harnessDone = new Promise<number | null>((res) => harness.once('exit', (code) => res(code)));

  const db = join(dir, `runs-${shape}.sqlite`);
  const rec = spawn(
    process.execPath,
    [
      '--import',
      'tsx',
      join(repo, 'main', 'cli', 'main.ts'),
      'record',
      '--port',
      ptyPath,
      '--db',
      db,
      '--profile',
      profile,
      '--status-every',
      '1',
    ],
    { cwd: repo, stdio: ['ignore', 'pipe', 'pipe'] },
  );
  children.push(rec);
  let recOut = '';
  rec.stdout.on('data', (d: Buffer) => (recOut += d.toString()));
  rec.stderr.on('data', (d: Buffer) => (recOut += d.toString()));
  await until(() => /open at 115200 baud/.test(recOut), 60_000, `record opening the pty: ${recOut}`);
  harness.stdin.write('go\n');
  await until(() => /^done /m.test(harnessOut) || harness.exitCode !== null, 300_000, 'the simulated charge');
  assert.equal(harness.exitCode, null, harnessOut);

  const sent = readFileSync(uartLog, 'utf8');
  const sentLines = sent.split('\n').slice(0, -1);
  assert.equal(sent.endsWith('\n'), true);
  assert.equal(
    sentLines.length,
    rows.length + head,
    'the board line (and CSV header), then one line a second',
  );
  assert.equal(sentLines[0], '# board=TC-0007 fw=1.4.2');
  // The status line is redrawn only as lines arrive: give the last ones a moment, then stop.
  await new Promise((res) => setTimeout(res, 2000));
  rec.kill('SIGTERM');
  await new Promise((res) => rec.once('exit', res));
  assert.match(
    recOut,
    new RegExp(`run 1 closed as stopped, ${rows.length + head} lines \\(0 rejected\\)`),
    recOut.slice(-800),
  );
  harness.stdin.end(); // unplug the board
  assert.equal(await harnessDone, 0, harnessOut);

  const reader = openRunReader(db);
  try {
    const runs = reader.listRuns();
    assert.equal(runs.length, 1, JSON.stringify(runs));
    const runId = runs[0].id;
    // The start-up line gives the run its board identity (as the board checks read it).
    assert.deepEqual(parseBoardLine(sentLines[0]), { board: 'TC-0007', firmware: '1.4.2' });
    // Every byte the board sent, in order, as the recorder kept it.
    const raw = reader.rawLines(runId, undefined, 100_000);
    assert.deepEqual(
      raw.map((l) => l.text),
      sentLines,
    );
    assert.deepEqual(
      raw.map((l) => l.kind),
      [...(head === 2 ? ['firmware', 'header'] : ['firmware']), ...rows.map(() => 'sample')],
      'no rejected line',
    );
    assert.equal(runs[0].lines, rows.length + head);
    // Values exact.
    const samples = reader.allSamples(runId);
    assert.equal(samples.length, rows.length);
    samples.forEach((s, k) => {
      const want = expected(rows[k]);
      const at = `row ${k}: ${sentLines[k + head]}`;
      assert.equal(s.deviceS !== undefined ? Math.floor(s.deviceS) : k, k, at);
      assert.equal(s.vbatV, want.vbatV, at);
      assert.equal(s.ibatA, want.ibatA, at);
      assert.equal(s.ntcRaw, want.ntc, at);
      assert.equal(s.chg, want.chg, at);
      assert.equal(s.flt, want.flt, at);
      // The wiring arithmetic is right: within two ADC steps of the scripted pack.
      assert.ok(
        Math.abs(s.vbatV! * 1000 - rows[k].vbatMv) <= 2 * (12500 / 1024) + 1,
        `${at} vs ${rows[k].vbatMv} mV`,
      );
    });
    // Phases as scripted.
    const phases = reader
      .events(runId)
      .filter((e) => e.type === 'phase')
      .map((e) => (e as { phase: string }).phase);
    assert.deepEqual(phases, ['precondition', 'cc', 'cv', 'done'], JSON.stringify(reader.events(runId)));
  } finally {
    reader.close();
  }
}

test('key=value: a charge run by the sketch in simavr is recorded by `taperline record` line for line, value for value', () =>
  recordCharge('TL_KV'));
test('CSV: the same charge, header once, recorded line for line, value for value', () =>
  recordCharge('TL_CSV'));
test('JSON: the same charge recorded line for line, value for value', () => recordCharge('TL_JSON'));

test('a line too long for the board buffer is never sent in part: the board says so in a # line', async () => {
  // A 24-byte buffer on the target: too small for any of the sketch's lines.
  const BUILD = 'build-sim-small';
  make(['avr', 'sim'], { SKETCH_DEFS: '-DLINE_BYTES=24' }, BUILD);
  const scriptFile = join(dir, 'charge-small.txt');
  writeFileSync(scriptFile, '3000 1000 2500 0 1\n'.repeat(3));
  const uartLog = join(dir, 'uart-small.log');
  const harness = spawn(
    buildPath(BUILD, 'sim', 'charge_harness'),
    [buildPath(BUILD, 'avr', 'ChargerAvr.elf'), scriptFile, '0', uartLog],
    { stdio: ['pipe', 'pipe', 'pipe'] },
  );
  children.push(harness);
  let out = '';
  harness.stdout.on('data', (d: Buffer) => (out += d.toString()));
  harness.stdin.write('go\n');
  await until(() => /^done /m.test(out), 60_000, `the harness: ${out}`);
  harness.stdin.end();
  await new Promise((res) => harness.once('exit', res));
  // The start-up line (26 bytes with its newline and NUL) does not fit either: not sent.
  assert.deepEqual(readFileSync(uartLog, 'utf8').split('\n').slice(0, -1), [
    '# line not sent, error 1',
    '# line not sent, error 1',
    '# line not sent, error 1',
  ]);
});

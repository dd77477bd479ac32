/**
 * The one table of source kinds: every kind's schema, label and factory; the request schema
 * and the Connect view's choices read from it; `tcp://` addresses; the file kind on a real
 * file; the one bounded "assume a profile" rule.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { MAX_ASSUME_LINES, ProfileAssumer } from '@shared/engine/assumed-profile';
import { stationConfigSchema } from '@shared/ipc/requests';
import {
  CONNECTABLE_KINDS,
  parseTcpAddress,
  sourceConfigSchema,
  sourceFromPort,
  type SourceConfig,
} from '@shared/sources/schemas';
import { createSource, sourceLabel, SOURCE_KINDS } from '../../main/sources';
import type { SourceLine } from '../../main/sources/types';

const SAMPLES: SourceConfig[] = [
  { kind: 'serial', path: '/dev/ttyUSB0', baudRate: 115200 },
  { kind: 'simulator', scenario: 'bench-liion-3s', speedup: 60 },
  { kind: 'tcp', host: '192.168.1.40', port: 4000 },
  { kind: 'replay', runId: 12, speed: 'max' },
  { kind: 'remote', url: 'mqtt://127.0.0.1:1883/lab', bench: 'shelf-2', station: 'slot-1' },
  { kind: 'file', path: '-' },
];

test('every kind of the table is its own entry with a schema that takes its config', () => {
  assert.deepEqual(Object.keys(SOURCE_KINDS).sort(), SAMPLES.map((s) => s.kind).sort());
  for (const config of SAMPLES) {
    const kind = SOURCE_KINDS[config.kind];
    assert.equal(kind.kind, config.kind);
    assert.ok(kind.schema.safeParse(config).success, config.kind);
    assert.ok(sourceConfigSchema.safeParse(config).success, config.kind);
    assert.ok(kind.title.length > 0);
  }
  assert.deepEqual(
    SAMPLES.map((s) => sourceLabel(s)),
    [
      '/dev/ttyUSB0',
      'simulator:bench-liion-3s',
      'tcp://192.168.1.40:4000',
      'replay:run 12',
      'remote:shelf-2/slot-1',
      'standard input',
    ],
  );
});

test('the Connect view offers, and stations.add takes, only the kinds a person can pick', () => {
  assert.deepEqual(CONNECTABLE_KINDS, ['serial', 'simulator', 'tcp']);
  const station = (source: SourceConfig) => ({ id: 'bench-1', source, profile: null });
  for (const config of SAMPLES) {
    const ok = stationConfigSchema.safeParse(station(config)).success;
    assert.equal(ok, (CONNECTABLE_KINDS as string[]).includes(config.kind), config.kind);
  }
  // A replay is asked for with runs.replay, never smuggled in as a scenario name.
  assert.ok(stationConfigSchema.safeParse(station({ kind: 'simulator', scenario: 'run:12:max' })).success);
  assert.throws(
    () => createSource({ kind: 'simulator', scenario: 'run:12:max' }, context()),
    /no scenario|unknown/i,
  );
});

function context() {
  return { now: () => Date.now() / 1000, reader: null, remote: null };
}

test('tcp:// addresses: host and port, IPv6 in brackets; anything else refused with the form to write', () => {
  assert.deepEqual(parseTcpAddress('tcp://rack-pi.local:2001'), {
    kind: 'tcp',
    host: 'rack-pi.local',
    port: 2001,
  });
  assert.deepEqual(parseTcpAddress('tcp://[::1]:4000'), { kind: 'tcp', host: '::1', port: 4000 });
  for (const bad of ['tcp://host', 'tcp://host:0', 'tcp://host:70000', 'tcp:host:1', 'http://host:80'])
    assert.equal(parseTcpAddress(bad), null, bad);
  assert.deepEqual(sourceFromPort('/dev/ttyACM0', 9600), {
    kind: 'serial',
    path: '/dev/ttyACM0',
    baudRate: 9600,
  });
  assert.throws(() => sourceFromPort('tcp://nowhere', 115200), /write tcp:\/\/HOST:PORT/);
});

test('a kind that needs what is not there says so: replay without a database, remote without a broker', () => {
  assert.throws(() => createSource(SAMPLES[3]!, context()), /needs the recording database/);
  assert.throws(() => createSource(SAMPLES[4]!, context()), /need a broker subscription/);
});

test('the file kind reads a real file through the shared framer on a synthetic clock', async (t) => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-file-source-'));
  t.after(() => rmSync(dir, { recursive: true, force: true }));
  const path = join(dir, 'boat-house.log');
  // Invented demo lines: a boat house battery's charger.
  writeFileSync(path, 'vbat=12.61 ibat=4.0\r\nvbat=12.63 ibat=3.9\n' + 'x'.repeat(5000) + '\nvbat=12.64');
  const source = createSource({ kind: 'file', path, intervalS: 0.5 }, context());
  assert.equal(source.recordedClock, true);
  const lines: SourceLine[] = [];
  source.on('line', (l) => lines.push(l));
  const closed = new Promise<string>((r) => source.on('status', (s) => s.state === 'closed' && r(s.detail)));
  source.start();
  assert.match(await closed, /read to the end \(4 lines\)/);
  assert.deepEqual(
    lines.map((l) => [l.text.slice(0, 12), l.rxS, l.tooLong]),
    [
      ['vbat=12.61 i', 0, false],
      ['vbat=12.63 i', 0.5, false],
      ['xxxxxxxxxxxx', 1, true],
      ['vbat=12.64', 1.5, false],
    ],
  );
});

test('a profile is assumed once, from the first pack voltage, and holding lines is bounded', () => {
  const assumer = new ProfileAssumer();
  assert.equal(assumer.push({ text: '# board=demo', rxS: 0, tooLong: false }), null);
  const decision = assumer.push({ text: 'vbat=11.10 ibat=1.0', rxS: 1, tooLong: false });
  assert.ok(decision);
  // 11.10 V / 3.7 V nominal per Li-ion cell (common practice) = 3 cells.
  assert.equal(decision.profile.cells, 3);
  assert.equal(decision.held.length, 2, 'the lines before the decision are handed back in order');

  const silent = new ProfileAssumer();
  let last = null;
  for (let i = 0; i < MAX_ASSUME_LINES && !last; i++)
    last = silent.push({ text: `ibat=1.0`, rxS: i, tooLong: false });
  assert.ok(last, `decided by line ${MAX_ASSUME_LINES}`);
  assert.equal(last.vbatV, null);
  assert.equal(last.profile.cells, 1);
  assert.equal(last.held.length, MAX_ASSUME_LINES);
});

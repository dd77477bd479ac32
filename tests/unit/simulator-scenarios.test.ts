/**
 * Scenario catalogue and line output of the simulated charger: names, errors, determinism,
 * the three line shapes read back by the real parser, checksums, raw NTC counts, and the
 * demo profile files kept equal to the scenario definitions.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { getScenario, listScenarios, SCENARIO_NAMES, simulatedLines } from '../../main/simulator';
import { createBench } from '../../main/simulator/bench';
import { parseProfile } from '@shared/chemistry/profile';
import { createLineParser } from '@shared/telemetry/parse-line';
import { nmeaChecksum } from '@shared/telemetry/checksum';
import { thermistorReading } from '@shared/chemistry/thermistor';
import type { Sample } from '@shared/telemetry/types';

const PROFILE_DIR = join(__dirname, '..', 'fixtures', 'profiles');

test('the sixteen scenarios are listed with one-line descriptions', () => {
  const list = listScenarios();
  assert.deepEqual(
    list.map((s) => s.name),
    [
      'bench-liion-3s',
      'solar-lifepo4-4s',
      'damaged-cell',
      'overheating',
      'weak-panel',
      'lead-acid-float',
      'nimh-4s',
      'open-thermistor',
      'loose-connection',
      'overvoltage-drift',
      'weak-panel-timer',
      'board-in-spec',
      'board-sense-low',
      'board-sense-high',
      'board-divider-high',
      'board-timer-cap-half',
    ],
  );
  for (const s of list) assert.ok(s.description.length > 20 && !s.description.includes('\n'), s.name);
});

test('an unknown scenario name is an error that lists the valid names', () => {
  assert.throws(
    () => getScenario('bench-liion-9s'),
    (err: Error) => {
      assert.match(err.message, /unknown scenario "bench-liion-9s"/);
      for (const name of SCENARIO_NAMES) assert.ok(err.message.includes(name), name);
      return true;
    },
  );
  // simulatedLines fails at the call, not at the first line.
  assert.throws(() => simulatedLines('nope', { shape: 'kv', sampleIntervalS: 1 }), /unknown scenario/);
  assert.throws(
    () => simulatedLines('bench-liion-3s', { shape: 'xml' as 'kv', sampleIntervalS: 1 }),
    /line shape/,
  );
  assert.throws(
    () => simulatedLines('bench-liion-3s', { shape: 'kv', sampleIntervalS: 0 }),
    /sample interval/,
  );
  assert.throws(
    () => simulatedLines('bench-liion-3s', { shape: 'kv', sampleIntervalS: 1, durationS: -1 }),
    /duration/,
  );
});

test('every demo profile file equals its scenario definition and is a valid profile', () => {
  const files = readdirSync(PROFILE_DIR).filter((f) => f.endsWith('.json'));
  assert.deepEqual(files.sort(), SCENARIO_NAMES.map((n) => `${n}.json`).sort());
  for (const name of SCENARIO_NAMES) {
    const onDisk: unknown = JSON.parse(readFileSync(join(PROFILE_DIR, `${name}.json`), 'utf8'));
    assert.deepEqual(onDisk, getScenario(name).profile, `${name}.json drifted from its definition`);
    const parsed = parseProfile(onDisk);
    assert.ok(parsed.ok, `${name}: ${parsed.ok ? '' : parsed.error}`);
  }
});

test('same seed, same lines; another seed, other noise', () => {
  const take = (seed: number): string[] => [
    ...simulatedLines('weak-panel', { shape: 'kv', sampleIntervalS: 30, seed }),
  ];
  const a = take(7);
  assert.deepEqual(take(7), a);
  assert.notDeepEqual(take(8), a);
});

function samplesOf(
  lines: Iterable<string>,
  thermistor = getScenario('bench-liion-3s').profile.thermistor,
): Sample[] {
  const parser = createLineParser({ thermistor });
  const samples: Sample[] = [];
  let i = 0;
  for (const line of lines) {
    const r = parser.parse(line, i++);
    assert.ok(r.kind !== 'rejected', `rejected: ${line} (${r.kind === 'rejected' ? r.detail : ''})`);
    if (r.kind === 'sample') samples.push(r.sample);
  }
  return samples;
}

test('kv, csv and json lines read back through the parser to the same samples', () => {
  const opts = { sampleIntervalS: 10, durationS: 1800 };
  const kv = samplesOf(simulatedLines('bench-liion-3s', { ...opts, shape: 'kv' }));
  const csv = samplesOf(simulatedLines('bench-liion-3s', { ...opts, shape: 'csv' }));
  const json = samplesOf(simulatedLines('bench-liion-3s', { ...opts, shape: 'json' }));
  assert.equal(kv.length, 180);
  for (const other of [csv, json]) {
    assert.equal(other.length, kv.length);
    for (let i = 0; i < kv.length; i++) {
      assert.equal(other[i].deviceS, kv[i].deviceS);
      assert.equal(other[i].vbatV, kv[i].vbatV);
      assert.equal(other[i].ibatA, kv[i].ibatA);
      assert.equal(other[i].chg, kv[i].chg);
      assert.equal(other[i].src, kv[i].src);
    }
  }
  const first = kv[0];
  assert.equal(first.deviceS, 10);
  assert.equal(first.src, 'adapter');
  for (const key of ['vbatV', 'ibatA', 'tempC', 'vinV', 'iinA'] as const)
    assert.equal(typeof first[key], 'number', key);
});

test('checksummed lines carry a correct NMEA XOR; firmware messages start with #', () => {
  let messages = 0;
  for (const line of simulatedLines('nimh-4s', { shape: 'csv', sampleIntervalS: 60, checksum: true })) {
    if (line.startsWith('#')) {
      messages++;
      continue;
    }
    // NMEA 0183 rule (Vaisala WXT530 User's Guide, "NMEA 0183 v3.0 Checksum Computation"): checksum = XOR of every character before the `*`, two hex digits.
    const m = /^(.*)\*([0-9A-F]{2})$/.exec(line);
    assert.ok(m, line);
    assert.equal(parseInt(m[2], 16), nmeaChecksum(m[1]));
  }
  assert.ok(messages >= 3, 'boot, config and the stage changes are printed');
});

test('raw ntc counts follow the thermistor divider; an open NTC pins them at the rail', () => {
  const s = getScenario('open-thermistor');
  const th = s.profile.thermistor;
  assert.ok(th && th.model === 'beta');
  // Beta equation (MathWorks Simscape "Thermistor"): at 25 C a 10 k NTC against a 10 k pull-up reads half scale (R = R25).
  assert.equal(thermistorReading(th, 25), Math.round(4095 / 2));
  const lines = [...simulatedLines('open-thermistor', { shape: 'kv', sampleIntervalS: 10 })];
  const samples = samplesOf(lines, th);
  const opensAtS = s.bench.thermistorOpensAtS ?? 0;
  const before = samples.filter((x) => (x.deviceS ?? 0) < opensAtS);
  const after = samples.filter((x) => (x.deviceS ?? 0) >= opensAtS);
  assert.ok(
    before.every(
      (x) => x.ntcRaw !== undefined && x.ntcRaw > 1500 && x.ntcRaw < 2600 && x.tempC !== undefined,
    ),
  );
  assert.ok(
    after.length > 0 && after.every((x) => x.ntcRaw === 4095),
    'pinned at adcMax after the wire breaks',
  );
  assert.ok(
    after.slice(1).every((x) => x.flt === true && x.ibatA === 0),
    'the charger faults and stops',
  );
  assert.ok(lines.some((l) => l.startsWith('# ') && l.includes('thermistor')));
  // The option switches any scenario to raw counts.
  const counted = samplesOf(
    simulatedLines('bench-liion-3s', { shape: 'kv', sampleIntervalS: 60, durationS: 600, ntc: true }),
  );
  assert.ok(
    counted.every((x) => x.ntcRaw !== undefined && x.tempC !== undefined && Math.abs(x.tempC - 25) < 3),
  );
});

test('the firmware outcome of each scenario comes from its physical cause', () => {
  const outcome = (name: string): { modes: string[]; fault: string | null; maxVPerCell: number } => {
    const s = getScenario(name);
    const bench = createBench(s.bench, 1, s.durationS);
    const modes: string[] = [];
    let maxV = 0;
    for (let t = 0; t < s.durationS; t += 2) {
      bench.step(2);
      const r = bench.readings();
      if (modes[modes.length - 1] !== r.mode) modes.push(r.mode);
      maxV = Math.max(maxV, r.vbatV / s.profile.cells);
    }
    return { modes, fault: bench.readings().fault, maxVPerCell: maxV };
  };
  const has = (modes: string[], seq: string[]): boolean => {
    let i = 0;
    for (const m of modes) if (m === seq[i]) i++;
    return i === seq.length;
  };
  assert.ok(has(outcome('bench-liion-3s').modes, ['cc', 'cv', 'done']));
  assert.equal(outcome('damaged-cell').fault, 'precondition-timeout');
  assert.deepEqual(outcome('damaged-cell').modes, ['precondition', 'fault']);
  assert.equal(outcome('overheating').fault, 'overtemp');
  assert.equal(outcome('open-thermistor').fault, 'thermistor-open');
  assert.equal(outcome('weak-panel-timer').fault, 'timer');
  const weak = outcome('weak-panel');
  assert.equal(weak.fault, null);
  assert.ok(has(weak.modes, ['sleep', 'cc', 'sleep', 'cc', 'sleep']));
  assert.ok(has(outcome('lead-acid-float').modes, ['cc', 'cv', 'done']));
  assert.ok(has(outcome('nimh-4s').modes, ['cc', 'done']));
  assert.ok(has(outcome('solar-lifepo4-4s').modes, ['cc', 'cv']));
  // 4.25 V/cell upper limit (TI E2E design note "JEITA Battery Temperature Standard"); the drifting reference pushes the pack past it.
  assert.ok(outcome('overvoltage-drift').maxVPerCell > 4.25);
  assert.ok(outcome('bench-liion-3s').maxVPerCell <= 4.2 + 0.01);
});

test('NiMH ends on -dV: the voltage falls 5 mV/cell from its peak while the pack warms', () => {
  const s = getScenario('nimh-4s');
  const bench = createBench(s.bench, 1, s.durationS);
  let peakV = 0;
  let atEnd: { v: number; tempC: number } | null = null;
  let tempAtPeak = 0;
  for (let t = 0; t < s.durationS && atEnd === null; t++) {
    bench.step(1);
    const r = bench.readings();
    if (r.mode === 'cc' && r.vbatV > peakV && t > 600) {
      peakV = r.vbatV;
      tempAtPeak = r.packTempC;
    }
    if (r.mode === 'done') atEnd = { v: peakV, tempC: r.packTempC };
  }
  assert.ok(atEnd, 'the charge ends');
  // The warming between peak and end is what turns into -dV (negative temperature coefficient).
  assert.ok(atEnd.tempC > tempAtPeak + 1);
  // Panasonic rapid-charge window 0-40 C ("Charge Methods for Nickel Metal Hydride Batteries"): the -dV end comes before it.
  assert.ok(atEnd.tempC < 40);
});

test('loose connection: voltage steps at constant current, then dropouts to zero current', () => {
  const lines = simulatedLines('loose-connection', { shape: 'kv', sampleIntervalS: 1, durationS: 3600 });
  const samples = samplesOf(lines);
  let steps = 0;
  let dropouts = 0;
  for (let i = 1; i < samples.length; i++) {
    const a = samples[i - 1];
    const b = samples[i];
    const dV = (b.vbatV ?? 0) - (a.vbatV ?? 0);
    const dI = (b.ibatA ?? 0) - (a.ibatA ?? 0);
    if (dV > 0.02 && Math.abs(dI) < 0.01 && (a.ibatA ?? 0) > 0.9) steps++;
    if ((a.ibatA ?? 0) > 0.5 && b.ibatA === 0 && b.chg === true) dropouts++;
  }
  assert.ok(steps >= 2, `voltage steps without a current step: ${steps}`);
  assert.ok(dropouts >= 3, `dropouts: ${dropouts}`);
});

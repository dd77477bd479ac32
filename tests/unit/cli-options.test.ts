/**
 * The one parser of numeric CLI options (main/cli/options.ts) and the one reader of profile
 * files (main/cli/profile-file.ts), which `record`, `serve` and the desktop app's backend share.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { startBackend } from '../../main/app/backend';
import { InputFileError } from '../../main/app/input-file-error';
import { stationsFromOptions } from '../../main/app/station-options';
import { UsageError } from '../../main/cli/errors';
import {
  nonNegativeNumber,
  portNumber,
  positiveInteger,
  positiveNumber,
  speedOrMax,
  wholeNumber,
} from '../../main/cli/options';
import { loadProfileFile, readValidatedProfileJson } from '../../main/cli/profile-file';

/** The refusal is a UsageError naming the option and quoting the text given. */
function refuses(fn: () => unknown, message: RegExp): void {
  assert.throws(fn, (err: unknown) => {
    assert.ok(err instanceof UsageError, `a UsageError, got ${String(err)}`);
    assert.match(err.message, message);
    return true;
  });
}

test('positiveNumber accepts numbers above zero and refuses blank, zero, negative and non-numbers', () => {
  assert.equal(positiveNumber('--interval', '0.5', 'seconds'), 0.5);
  assert.equal(positiveNumber('--speedup', '3600'), 3600);
  assert.equal(positiveNumber('--interval', '1e-3'), 0.001);
  refuses(
    () => positiveNumber('--interval', '', 'seconds'),
    /^--interval must be a positive number of seconds \(got ""\)$/,
  );
  refuses(() => positiveNumber('--interval', '   ', 'seconds'), /\(got " {3}"\)$/);
  refuses(() => positiveNumber('--interval', '0', 'seconds'), /^--interval must be a positive number/);
  refuses(() => positiveNumber('--speedup', '-2'), /^--speedup must be a positive number \(got "-2"\)$/);
  refuses(() => positiveNumber('--speedup', 'fast'), /\(got "fast"\)$/);
  refuses(() => positiveNumber('--speedup', 'Infinity'), /\(got "Infinity"\)$/);
  refuses(() => positiveNumber('--speedup', '5x'), /\(got "5x"\)$/);
});

test('nonNegativeNumber accepts zero but not blank text, which Number() would read as 0', () => {
  assert.equal(nonNegativeNumber('--at', '0', 'seconds'), 0);
  assert.equal(nonNegativeNumber('--resume-within', '600', 'seconds'), 600);
  refuses(
    () => nonNegativeNumber('--status-every', '', 'seconds'),
    /^--status-every must be a non-negative number of seconds \(got ""\)$/,
  );
  refuses(() => nonNegativeNumber('--at', '-1', 'seconds'), /^--at must be a non-negative number/);
  refuses(() => nonNegativeNumber('--duration', 'NaN'), /\(got "NaN"\)$/);
});

test('positiveInteger and wholeNumber refuse fractions; the example is shown in the refusal', () => {
  assert.equal(positiveInteger('--baud', '115200', '115200'), 115200);
  refuses(
    () => positiveInteger('--baud', 'fast', '115200'),
    /^--baud must be a positive whole number, e.g\. 115200 \(got "fast"\)$/,
  );
  refuses(() => positiveInteger('--baud', '9600.5'), /^--baud must be a positive whole number \(got/);
  refuses(() => positiveInteger('--baud', '0'), /\(got "0"\)$/);
  refuses(() => positiveInteger('--baud', ''), /\(got ""\)$/);
  assert.equal(wholeNumber('--seed', '-3'), -3);
  assert.equal(wholeNumber('--seed', '0'), 0);
  refuses(() => wholeNumber('--seed', 'abc'), /^--seed must be a whole number \(got "abc"\)$/);
  refuses(() => wholeNumber('--seed', '1.5'), /\(got "1\.5"\)$/);
  refuses(() => wholeNumber('--seed', ''), /\(got ""\)$/);
});

test('portNumber takes 0..65535 (TCP port numbers are 16 bits, RFC 793), 0 meaning any free port', () => {
  assert.equal(portNumber('--port', '0'), 0);
  assert.equal(portNumber('--port', '4870'), 4870);
  assert.equal(portNumber('--port', '65535'), 65535);
  refuses(
    () => portNumber('--port', '65536'),
    /^--port must be a whole number 0\.\.65535 .*\(got "65536"\)$/,
  );
  refuses(() => portNumber('--port', '-1'), /\(got "-1"\)$/);
  refuses(() => portNumber('--port', '80.5'), /\(got "80\.5"\)$/);
  refuses(() => portNumber('--port', ''), /\(got ""\)$/);
});

test('speedOrMax takes the word max or a positive multiple of real time', () => {
  assert.equal(speedOrMax('--speed', 'max'), 'max');
  assert.equal(speedOrMax('--speed', '20'), 20);
  refuses(() => speedOrMax('--speed', '0'), /^--speed must be a positive number or max \(got "0"\)$/);
  refuses(() => speedOrMax('--speed', 'MAX!'), /\(got "MAX!"\)$/);
  refuses(() => speedOrMax('--speed', ''), /\(got ""\)$/);
});

// Invented: a trail camera's 1S LiFePO4 cell.
const PROFILE = { name: 'trail camera 1S', chemistry: 'lifepo4', cells: 1, capacityAh: 1.5 };

test('readValidatedProfileJson returns the JSON as written and names the file, or the bad key', (t) => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-options-'));
  t.after(() => rmSync(dir, { recursive: true, force: true }));
  const good = join(dir, 'good.json');
  writeFileSync(good, JSON.stringify(PROFILE));
  // As written, not resolved: stations store this JSON with each run.
  assert.deepEqual(readValidatedProfileJson(good), PROFILE);
  assert.equal(loadProfileFile(good).chemistry, 'lifepo4');

  const badKey = join(dir, 'bad-key.json');
  writeFileSync(badKey, JSON.stringify({ ...PROFILE, capacityAhh: 2 }));
  refuses(
    () => readValidatedProfileJson(badKey),
    /^profile .*bad-key\.json refused: capacityAhh: unknown key/,
  );
  const notJson = join(dir, 'not.json');
  writeFileSync(notJson, '{ chemistry: lifepo4');
  refuses(() => readValidatedProfileJson(notJson), /^profile .*not\.json is not valid JSON: /);
  refuses(
    () => readValidatedProfileJson(join(dir, 'missing.json')),
    /^no such profile file: .*missing\.json$/,
  );
  // A folder where the file should be: read fails with EISDIR, said with the path.
  refuses(() => readValidatedProfileJson(dir), /^cannot read profile .*taperline-options-\S+: /);
});

test('the stations of serve and the desktop app refuse a bad profile file with the file and key named, before any port opens', async (t) => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-options-'));
  t.after(() => rmSync(dir, { recursive: true, force: true }));
  const badKey = join(dir, 'bench.json');
  writeFileSync(badKey, JSON.stringify({ ...PROFILE, cells: 0 }));
  const start = async (profilePath: string) =>
    startBackend({
      dbPath: null,
      stations: stationsFromOptions({ ports: [join(dir, 'no-such-port')], profilePath, simulate: [] }),
    });
  await assert.rejects(start(badKey), (err: unknown) => {
    assert.ok(err instanceof InputFileError);
    assert.match(err.message, /^profile .*bench\.json refused: cells: /);
    return true;
  });
  await assert.rejects(start(join(dir, 'gone.json')), (err: unknown) => {
    assert.ok(err instanceof InputFileError);
    assert.match(err.message, /^no such profile file: .*gone\.json$/);
    return true;
  });
});

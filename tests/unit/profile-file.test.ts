/** Profile files as editors save them: a UTF-8 byte-order mark is no reason to refuse a profile. */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { loadProfileFile, readValidatedProfileJson } from '../../main/cli/profile-file';

test('a profile file that starts with a UTF-8 byte-order mark (EF BB BF) is read as the JSON after it', (t) => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-bom-'));
  t.after(() => rmSync(dir, { recursive: true, force: true }));
  const path = join(dir, 'garden-sensor.json');
  // EF BB BF is U+FEFF in UTF-8 (the Unicode Standard, "Byte Order Mark").
  const json = { name: 'garden-sensor 1S (demo)', chemistry: 'li-ion', cells: 1, capacityAh: 2 };
  writeFileSync(path, Buffer.concat([Buffer.from([0xef, 0xbb, 0xbf]), Buffer.from(JSON.stringify(json))]));
  assert.equal(loadProfileFile(path).capacityAh, 2);
  assert.deepEqual(readValidatedProfileJson(path), json);
  // A mark that is not at the very start is not stripped: the JSON is then invalid and says so.
  writeFileSync(path, ` \ufeff${JSON.stringify(json)}`);
  assert.throws(() => loadProfileFile(path), /is not valid JSON/);
});

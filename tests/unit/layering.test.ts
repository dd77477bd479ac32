/**
 * The layering of the design is enforced by the lint rules, not hoped for: these cases feed
 * forbidden imports to ESLint as if they were files of each layer and expect them refused.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { join } from 'node:path';
import { ESLint } from 'eslint';

const ROOT = join(__dirname, '..', '..');
const eslint = new ESLint({ cwd: ROOT });

async function importErrors(file: string, code: string): Promise<string[]> {
  const [result] = await eslint.lintText(code, { filePath: join(ROOT, file) });
  return result.messages
    .filter((m) => m.ruleId === 'no-restricted-imports' || m.ruleId === 'no-restricted-globals')
    .map((m) => m.message);
}

const forbiddenInShared = [
  "import { readFileSync } from 'node:fs';",
  "import { readFileSync } from 'fs';",
  "import { app } from 'electron';",
  "import Database from 'better-sqlite3';",
  "import { SerialPort } from 'serialport';",
  "import { UsageError } from '../../main/cli/errors';",
  "import { x } from '../../renderer/app';",
];

for (const code of forbiddenInShared) {
  test(`shared/ refuses: ${code}`, async () => {
    const errors = await importErrors(
      'shared/engine/layering-probe.ts',
      `${code}\nexport const probe = 1;\n`,
    );
    assert.equal(errors.length, 1, `expected one layering error, got ${JSON.stringify(errors)}`);
  });
}

test('shared/ refuses clocks and DOM globals', async () => {
  const errors = await importErrors(
    'shared/engine/layering-probe.ts',
    'export const probe = () => [setTimeout, document, process];\n',
  );
  assert.equal(errors.length, 3, JSON.stringify(errors));
});

test('renderer/ refuses main/ and Node built-ins', async () => {
  for (const code of [
    "import { UsageError } from '../main/cli/errors';",
    "import { readFileSync } from 'node:fs';",
    "import { ipcRenderer } from 'electron';",
  ]) {
    const errors = await importErrors('renderer/layering-probe.ts', `${code}\nexport const probe = 1;\n`);
    assert.equal(errors.length, 1, `${code}: ${JSON.stringify(errors)}`);
  }
});

test('shared/ may import its own modules and pure libraries', async () => {
  const errors = await importErrors(
    'shared/engine/layering-probe.ts',
    "import { z } from 'zod';\nimport type { Sample } from '../telemetry/types';\nexport const probe: [typeof z, Sample | null] = [z, null];\n",
  );
  assert.deepEqual(errors, []);
});

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

const layering = async (file: string, code: string) => {
  const [result] = await eslint.lintText(`${code}\nexport const probe = 1;\n`, {
    filePath: join(ROOT, file),
  });
  return result.messages.filter((m) => m.ruleId === 'layering/allowed-imports').map((m) => m.message);
};

test('main/ folders import only what they list: app/ and report/ may not import cli/', async () => {
  for (const [file, code] of [
    ['main/app/layering-probe.ts', "import { UsageError } from '../cli/errors';"],
    ['main/report/layering-probe.ts', "import { runCli } from '../cli/index';"],
    ['main/station/layering-probe.ts', "import { startServer } from '../server';"],
    ['main/sources/kinds/layering-probe.ts', "import { startBackend } from '../../app/backend';"],
    ['main/recorder/layering-probe.ts', "export { createSource } from '../sources/registry';"],
  ]) {
    const errors = await layering(file, code);
    assert.equal(errors.length, 1, `${file}: ${code}: ${JSON.stringify(errors)}`);
    assert.match(errors[0]!, /may import only shared\//);
  }
});

test('main/ folders may import shared/, packages, built-ins and the folders they list', async () => {
  for (const [file, code] of [
    ['main/cli/layering-probe.ts', "import { startBackend } from '../app/backend';"],
    [
      'main/app/layering-probe.ts',
      "import { createSource } from '../sources';\nimport { readFileSync } from 'node:fs';",
    ],
    [
      'main/sources/kinds/layering-probe.ts',
      "import { createSerialSource } from '../../serial/serial-source';",
    ],
    [
      'main/station/layering-probe.ts',
      "import { parseProfile } from '@shared/chemistry/profile';\nimport { z } from 'zod';",
    ],
  ]) {
    assert.deepEqual(await layering(file, code), [], `${file}: ${code}`);
  }
});

test('a new folder of main/ is refused until it lists what it may import', async () => {
  const errors = await layering('main/newlayer/probe.ts', "import { createSource } from '../sources';");
  assert.equal(errors.length, 1);
  assert.match(errors[0]!, /is not in MAIN_LAYERS/);
});

test("shared/ refuses every Node built-in, read from node:module's builtinModules", async () => {
  const { builtinModules } = await import('node:module');
  for (const name of ['node:sqlite', 'node:test', 'perf_hooks', 'node:diagnostics_channel'].filter(
    (n) => builtinModules.includes(n.replace(/^node:/, '')) || builtinModules.includes(n),
  )) {
    const errors = await importErrors(
      'shared/engine/layering-probe.ts',
      `import * as x from '${name}';\nexport const probe = x;\n`,
    );
    assert.equal(errors.length, 1, `${name}: ${JSON.stringify(errors)}`);
  }
});

// Lint rules, including the layering of the design: the functional core (shared/) stays pure,
// and the renderer never reaches into the shell (main/).
import js from '@eslint/js';
import tseslint from 'typescript-eslint';
import globals from 'globals';
import { builtinModules } from 'node:module';
import { dirname, relative, resolve, sep } from 'node:path';
import { fileURLToPath } from 'node:url';

const ROOT = dirname(fileURLToPath(import.meta.url));

/**
 * The layers of main/, each listing what it may import (the way VS Code's own lint keeps
 * its layers): a folder of main/ may import shared/ and the folders named here, nothing
 * else. Packages and Node built-ins are not layers and stay allowed in main/.
 */
const MAIN_LAYERS = {
  sources: ['serial', 'simulator', 'recorder'],
  simulator: ['sources'],
  // serial and recorder still take two types from station/types (FeedLine, SerialSourceConfig).
  serial: ['sources', 'station'],
  recorder: ['station'],
  station: ['sources', 'recorder'],
  mqtt: ['sources', 'station'],
  report: ['sources', 'recorder'],
  app: ['sources', 'station', 'recorder', 'report', 'simulator', 'serial', 'mqtt'],
  server: ['app', 'recorder'],
  electron: ['app', 'server'],
  cli: ['app', 'server', 'station', 'sources', 'recorder', 'report', 'simulator', 'serial', 'mqtt'],
};

/** The layer of a file or import target: `main/<folder>`, `shared`, `renderer`, or null (outside). */
function layerOf(absPath) {
  const rel = relative(ROOT, absPath).split(sep);
  if (rel[0] === 'main' && rel.length >= 2) return `main/${rel[1]}`;
  if (rel[0] === 'shared' || rel[0] === 'renderer') return rel[0];
  return null;
}

const layeringPlugin = {
  rules: {
    'allowed-imports': {
      meta: { type: 'problem', schema: [] },
      create(context) {
        const file = context.filename;
        const from = layerOf(file);
        if (!from || !from.startsWith('main/')) return {};
        const folder = from.slice('main/'.length);
        const allowed = new Set(['shared', from, ...(MAIN_LAYERS[folder] ?? []).map((f) => `main/${f}`)]);
        const check = (node, source) => {
          if (typeof source !== 'string') return;
          let target;
          if (source.startsWith('@shared/')) target = 'shared';
          else if (source.startsWith('.')) target = layerOf(resolve(dirname(file), source));
          else return; // a package or a Node built-in
          if (target === null || allowed.has(target)) return;
          const known = Object.hasOwn(MAIN_LAYERS, folder);
          context.report({
            node,
            message: known
              ? `${from} may import only shared/ and ${[...allowed].filter((a) => a.startsWith('main/')).join(', ')}; not ${target} (see MAIN_LAYERS in eslint.config.mjs).`
              : `${from} is not in MAIN_LAYERS (eslint.config.mjs): list what it may import there.`,
          });
        };
        return {
          ImportDeclaration: (node) => check(node, node.source.value),
          ExportNamedDeclaration: (node) => node.source && check(node, node.source.value),
          ExportAllDeclaration: (node) => check(node, node.source.value),
          ImportExpression: (node) => node.source.type === 'Literal' && check(node, node.source.value),
        };
      },
    },
  },
};

// Every Node built-in, from Node itself (so a new one cannot slip past the list).
const nodeBuiltins = [...new Set(builtinModules.map((m) => m.replace(/^node:/, '')))];
const noNode = nodeBuiltins.flatMap((m) => [m, `node:${m}`, `${m}/*`, `node:${m}/*`]);

export default tseslint.config(
  { ignores: ['node_modules/', 'dist/', 'out/', 'test-results/', '.bench/'] },
  js.configs.recommended,
  ...tseslint.configs.recommended,
  {
    languageOptions: { globals: { ...globals.node } },
    rules: {
      '@typescript-eslint/no-unused-vars': ['error', { argsIgnorePattern: '^_', varsIgnorePattern: '^_' }],
    },
  },
  {
    files: ['main/**/*.ts'],
    plugins: { layering: layeringPlugin },
    rules: { 'layering/allowed-imports': 'error' },
  },
  {
    files: ['shared/**/*.ts'],
    rules: {
      'no-restricted-imports': [
        'error',
        {
          paths: [...noNode, 'electron', 'serialport', 'better-sqlite3', 'ws'].map((name) => ({
            name,
            message: 'shared/ is the pure functional core: no Node built-ins, Electron or I/O libraries.',
          })),
          patterns: [
            { group: ['**/main/**', '../main/*', '../../main/*'], message: 'shared/ must not import main/.' },
            {
              group: ['**/renderer/**', '../renderer/*', '../../renderer/*'],
              message: 'shared/ must not import renderer/.',
            },
          ],
        },
      ],
      'no-restricted-globals': [
        'error',
        'window',
        'document',
        'process',
        'require',
        'Buffer',
        'setTimeout',
        'setInterval',
      ],
    },
  },
  {
    files: ['renderer/**/*.ts'],
    languageOptions: { globals: { ...globals.browser } },
    rules: {
      'no-restricted-imports': [
        'error',
        {
          paths: [...noNode, 'electron'].map((name) => ({
            name,
            message: 'The renderer runs sandboxed: no Node or Electron imports.',
          })),
          patterns: [
            {
              group: ['**/main/**', '../main/*', '../../main/*'],
              message: 'renderer/ must not import main/.',
            },
          ],
        },
      ],
    },
  },
  {
    files: ['**/*.cjs'],
    languageOptions: { sourceType: 'commonjs', globals: { ...globals.node } },
    rules: { '@typescript-eslint/no-require-imports': 'off' },
  },
);

// Lint rules, including the layering of DESIGN: the functional core (shared/) stays pure,
// and the renderer never reaches into the shell (main/).
import js from '@eslint/js';
import tseslint from 'typescript-eslint';
import globals from 'globals';

const nodeBuiltins = [
  'fs',
  'path',
  'os',
  'child_process',
  'net',
  'http',
  'https',
  'stream',
  'worker_threads',
  'crypto',
  'events',
  'timers',
  'util',
  'url',
  'readline',
  'zlib',
  'dgram',
  'dns',
  'tls',
  'process',
  'buffer',
];
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

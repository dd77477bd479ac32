#!/usr/bin/env node
// Launcher for the bundled CLI; the bundle is made by `npm install` (prepare) or `npm run build`.
const path = require('node:path');
const fs = require('node:fs');
const bundle = path.join(__dirname, '..', 'dist', 'cli.cjs');
if (!fs.existsSync(bundle)) {
  process.stderr.write('taperline: the CLI is not built yet; run `npm run build` in the project folder.\n');
  process.exit(2);
}
require(bundle);

#!/usr/bin/env node
// Thin launcher: the CLI is bundled into dist/ by `npm run prepare` (run by npm ci).
// CommonJS (bin/package.json): a command starts without Node's ES module loader.
'use strict';
const { existsSync } = require('node:fs');
const path = require('node:path');

const launcher = path.join(__dirname, '..', 'dist', 'launch.cjs');
if (!existsSync(launcher)) {
  process.stderr.write('deflator: dist/launch.cjs is missing; run `npm run prepare` (or `npm ci`) in the project folder first.\n');
  process.exit(2);
}
require(launcher);

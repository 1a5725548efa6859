#!/usr/bin/env node
// Thin launcher: the CLI is bundled into dist/ by `npm run prepare` (run by npm ci).
import { existsSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import path from 'node:path';

const cli = path.join(path.dirname(fileURLToPath(import.meta.url)), '..', 'dist', 'cli.js');
if (!existsSync(cli)) {
  process.stderr.write('deflator: dist/cli.js is missing; run `npm run prepare` (or `npm ci`) in the project folder first.\n');
  process.exit(2);
}
await import(cli);

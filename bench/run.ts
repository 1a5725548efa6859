/**
 * Benchmark runner: `npm run bench` runs every bench/*.ts (except this file), each in its
 * own process so memory figures do not mix; `npm run bench -- import` runs only the
 * benchmarks whose file name contains "import", and options after the names go to each
 * (`npm run bench -- startup --rounds 15`). Benchmarks print their own figures.
 */
import { spawnSync } from 'node:child_process';
import { readdirSync } from 'node:fs';
import path from 'node:path';

const here = import.meta.dirname;
// `npm run bench -- NAME... [--option value...]`: names before the first option; the options go to each benchmark
const args = process.argv.slice(2);
const firstOption = args.findIndex((a) => a.startsWith('-'));
const filters = firstOption < 0 ? args : args.slice(0, firstOption);
const options = firstOption < 0 ? [] : args.slice(firstOption);
/** Run only when named (`npm run bench -- large`): the large-data checks take about ten minutes. */
const ON_REQUEST = new Set(['large.ts']);
const files = readdirSync(here)
  .filter((f) => f.endsWith('.ts') && f !== 'run.ts')
  .filter((f) => (filters.length === 0 ? !ON_REQUEST.has(f) : filters.some((x) => f.includes(x))))
  .sort();
if (files.length === 0) {
  process.stderr.write(`no benchmark matches ${filters.join(', ')}; available: ${readdirSync(here).filter((f) => f.endsWith('.ts') && f !== 'run.ts').join(', ')}\n`);
  process.exit(2);
}
let failed = 0;
for (const f of files) {
  process.stdout.write(`\n== bench/${f}\n`);
  const r = spawnSync(process.execPath, ['--import', 'tsx', path.join(here, f), ...options], { stdio: 'inherit', cwd: path.join(here, '..') });
  if (r.status !== 0) {
    failed++;
    process.stdout.write(`bench/${f} exited with ${r.status ?? r.signal}\n`);
  }
}
process.exit(failed ? 1 : 0);

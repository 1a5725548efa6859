// Bundles the Node-side entry points (CLI, worker, Electron main, preload) into dist/.
// Runs on `npm ci` (the package's prepare step) so that `npx deflator` works on a fresh clone.
import { build } from 'esbuild';
import { existsSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import path from 'node:path';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const external = ['better-sqlite3', 'electron', 'piscina', 'exceljs', 'playwright-core'];
const entries = [
  { in: 'src-main/cli/index.ts', out: 'cli' },
  { in: 'src-main/workers/worker.ts', out: 'worker' },
  { in: 'src-main/electron/main.ts', out: 'main' },
].filter((e) => existsSync(path.join(root, e.in)));

const banner = {
  js: "import { createRequire as __deflatorCreateRequire } from 'node:module'; const require = __deflatorCreateRequire(import.meta.url);",
};

// Code splitting: modules reached only through a dynamic import() (the worker pool and piscina,
// the XLSX writer and exceljs) land in their own chunks, so a command loads them only when used.
await build({
  absWorkingDir: root,
  entryPoints: entries,
  outdir: 'dist',
  bundle: true,
  splitting: true,
  chunkNames: 'chunks/[name]-[hash]',
  platform: 'node',
  format: 'esm',
  target: 'node20',
  sourcemap: true,
  external,
  banner,
  logLevel: 'warning',
});

if (existsSync(path.join(root, 'src-main/electron/preload.cts'))) {
  await build({
    absWorkingDir: root,
    entryPoints: ['src-main/electron/preload.cts'],
    outfile: 'dist/preload.cjs',
    bundle: true,
    platform: 'node',
    format: 'cjs',
    target: 'node20',
    external: ['electron'],
    logLevel: 'warning',
  });
}

// Bundles the Node-side entry points (CLI, worker, Electron main, preload) into dist/.
// Runs on `npm ci` (the package's prepare step) so that `npx deflator` works on a fresh clone.
import { build } from 'esbuild';
import { createHash } from 'node:crypto';
import { existsSync, readdirSync, readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import path from 'node:path';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const external = ['better-sqlite3', 'electron', 'piscina', 'exceljs', 'playwright-core'];
const entries = [
  { in: 'src-main/workers/worker.ts', out: 'worker' },
  { in: 'src-main/electron/main.ts', out: 'main' },
].filter((e) => existsSync(path.join(root, e.in)));

// The build's identity: a digest of every source file bundled from shared/ and src-main/
// (src-main/data/panel-cache.ts keys cached panels by it, so a changed program never reads a
// panel an earlier one built).
function sourceId() {
  const h = createHash('sha256');
  const walk = (dir) => {
    for (const e of readdirSync(path.join(root, dir), { withFileTypes: true }).sort((a, b) => (a.name < b.name ? -1 : 1))) {
      const rel = `${dir}/${e.name}`;
      if (e.isDirectory()) walk(rel);
      else if (/\.(ts|cts|mts)$/.test(e.name)) h.update(`${rel}\0`).update(readFileSync(path.join(root, rel))).update('\0');
    }
  };
  walk('shared');
  walk('src-main');
  return h.digest('hex').slice(0, 32);
}
const define = { __DEFLATOR_SOURCE_ID__: JSON.stringify(sourceId()) };

const banner = {
  js: "import { createRequire as __deflatorCreateRequire } from 'node:module'; const require = __deflatorCreateRequire(import.meta.url);",
};

// The command line: one CommonJS file (dist/cli.cjs) that the launcher (dist/cli.js,
// src-main/cli/launch.ts) runs with V8's code cache. Modules reached only through a dynamic
// import() (the worker pool and piscina, the XLSX writer and exceljs) are evaluated, and
// external packages loaded, only when a command uses them.
await build({
  absWorkingDir: root,
  entryPoints: ['src-main/cli/index.ts'],
  outfile: 'dist/cli.cjs',
  bundle: true,
  platform: 'node',
  format: 'cjs',
  target: 'node20',
  sourcemap: true,
  external,
  define: { ...define, 'import.meta.url': '__deflatorModuleUrl' },
  banner: { js: "const __deflatorModuleUrl = require('node:url').pathToFileURL(__filename).href;" },
  logLevel: 'warning',
});
const cliBuild = createHash('sha256').update(readFileSync(path.join(root, 'dist/cli.cjs'))).digest('hex').slice(0, 16);
await build({
  absWorkingDir: root,
  entryPoints: ['src-main/cli/launch.ts'],
  outfile: 'dist/cli.js',
  bundle: true,
  platform: 'node',
  format: 'esm',
  target: 'node20',
  define: { __DEFLATOR_CLI_BUILD__: JSON.stringify(cliBuild) },
  logLevel: 'warning',
});

// The worker and the Electron main. Code splitting: modules reached only through a dynamic
// import() land in their own chunks, so they are loaded only when used.
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
  define,
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

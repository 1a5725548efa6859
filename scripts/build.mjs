// Bundles the Node-side entry points (CLI, worker, Electron main, preload) into dist/.
// Runs on `npm ci` (the package's prepare step) so that `npx deflator` works on a fresh clone.
import { build } from 'esbuild';
import { createHash } from 'node:crypto';
import { existsSync, readdirSync, readFileSync, writeFileSync } from 'node:fs';
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

// zod's `locales` namespace (every language's error messages, about 400 kB of the bundle):
// only English is used (zod sets it as its default itself), so the namespace is bundled
// with English alone. The parsing, the schemas and their messages are unchanged.
const zodEnglishOnly = {
  name: 'zod-english-only',
  setup(b) {
    b.onResolve({ filter: /^\.\.\/locales\/index\.js$/ }, (args) =>
      /[\\/]zod[\\/]v4[\\/](classic|core|mini)$/.test(args.resolveDir) ? { path: path.join(args.resolveDir, '../locales/index.js'), namespace: 'zod-locales' } : undefined,
    );
    b.onLoad({ filter: /.*/, namespace: 'zod-locales' }, (args) => ({
      contents: 'export { default as en } from "./en.js";\n',
      resolveDir: path.dirname(args.path),
      loader: 'js',
    }));
  },
};

/**
 * Makes a bundle ASCII only. esbuild escapes non-ASCII characters in code (its default
 * charset), not in the comments it keeps; a single one makes Node decode the file as UTF-8
 * and V8 hold the whole source as two-byte text (twice the memory, a slower read at every
 * start). So each non-ASCII character left, in a comment, becomes '?' per UTF-16 unit
 * (the source map's columns are UTF-16 units, so they still point where they did).
 */
function asciiOnly(file) {
  const text = readFileSync(file, 'utf8');
  const ascii = text.replace(/[^\x00-\x7f]/g, '?');
  if (ascii !== text) writeFileSync(file, ascii);
}

// The command line: one CommonJS file (dist/cli.cjs) that the launcher (dist/cli.js,
// src-main/cli/launch.ts) runs with V8's code cache. Modules reached only through a dynamic
// import() (each command, the worker pool and piscina, the XLSX writer and exceljs) are
// evaluated, and external packages loaded, only when a command uses them.
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
  plugins: [zodEnglishOnly],
  logLevel: 'warning',
});
asciiOnly(path.join(root, 'dist/cli.cjs'));
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
  plugins: [zodEnglishOnly],
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

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

/**
 * commander requires node:child_process at load, for subcommands run as separate programs,
 * which deflator has none of; that module brings Node's net, dgram and stream modules with
 * it (a few ms at every start). In the bundle, the require is made on first use instead.
 */
const commanderLazyChildProcess = {
  name: 'commander-lazy-child-process',
  setup(b) {
    b.onLoad({ filter: /[\\/]commander[\\/]lib[\\/]command\.js$/ }, (args) => {
      const text = readFileSync(args.path, 'utf8');
      const line = "const childProcess = require('node:child_process');";
      if (!text.includes(line)) throw new Error(`${args.path}: the child_process require to defer was not found; update scripts/build.mjs`);
      return { contents: text.replace(line, "const childProcess = { get spawn() { return require('node:child_process').spawn; } };"), loader: 'js' };
    });
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
  minify: true,
  platform: 'node',
  format: 'cjs',
  target: 'node20',
  sourcemap: true,
  // minified: about half the bytes to read and hold at every start (no code reads a
  // function's or class's name, so names need not be kept); the source map maps stack traces
  minify: true,
  // better-sqlite3's JavaScript is bundled (compiled once into the code cache instead of
  // read and compiled from node_modules at every start); its native addon is opened by path
  // (src-main/store/sqlite.ts)
  external: external.filter((e) => e !== 'better-sqlite3'),
  // import.meta in the CommonJS bundle: the folder as __dirname, the URL made when first read
  // (node:url's pathToFileURL is not needed by every command)
  define: { ...define, 'import.meta.url': '__deflatorModule.url', 'import.meta.dirname': '__dirname' },
  // The file is the CommonJS module wrapper itself, a function expression the launcher
  // compiles as it is (src-main/cli/launch.ts): no copy of 0.6 MB of text with the wrapper
  // around it at every start (about 4 ms). The wrapper opens on the banner's line, so the
  // source map's lines stay where they are.
  banner: { js: "(function (exports, require, module, __filename, __dirname) { const __deflatorModule = { get url() { return require('node:url').pathToFileURL(__filename).href; } };" },
  footer: { js: '})' },
  plugins: [commanderLazyChildProcess],
  logLevel: 'warning',
});
asciiOnly(path.join(root, 'dist/cli.cjs'));
const cliBuild = createHash('sha256').update(readFileSync(path.join(root, 'dist/cli.cjs'))).digest('hex').slice(0, 16);
// The launcher is CommonJS (dist/launch.cjs): bin/deflator.js (CommonJS too, bin/package.json)
// requires it without starting Node's ES module loader, which costs a command about 10 ms.
// dist/cli.js, the entry scripts and tests call by path, imports it.
await build({
  absWorkingDir: root,
  entryPoints: ['src-main/cli/launch.ts'],
  outfile: 'dist/launch.cjs',
  bundle: true,
  platform: 'node',
  format: 'cjs',
  target: 'node20',
  define: { __DEFLATOR_CLI_BUILD__: JSON.stringify(cliBuild) },
  logLevel: 'warning',
});
writeFileSync(path.join(root, 'dist/cli.js'), "// The command line by path (`node dist/cli.js`): the launcher, src-main/cli/launch.ts.\nimport './launch.cjs';\n");

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

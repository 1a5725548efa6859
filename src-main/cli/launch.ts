/**
 * The command line's launcher (built to dist/launch.cjs, a CommonJS file: bin/deflator.js
 * requires it, dist/cli.js imports it): runs the CLI bundle (dist/cli.cjs, one CommonJS
 * file) with V8's code cache, so that a command does not parse and compile again
 * what its previous run compiled (about 60 ms of the demo fit's 0.3 s of CPU).
 *
 * The first run of each command compiles as usual and, at exit, stores what V8 compiled
 * (the bundle's top level and every function the command ran) in dist/cache/; later runs of
 * that command hand it to V8 with the source. V8 refuses a cache made by another V8 version
 * or with other flags (`cachedDataRejected`): that run compiles as usual and stores a new one.
 * A cache is named by the bundle's build id (a digest of its bytes, written here by
 * scripts/build.mjs), its size and modification time, and the command, so a rebuilt or
 * edited bundle never meets an old cache. The cache sits beside the bundle, in a folder only
 * those who can change the bundle itself can write: where dist/ is not writable there is no
 * cache, and the commands run as before. DEFLATOR_CODE_CACHE=0 turns it off.
 */
import { mkdirSync, readdirSync, readFileSync, renameSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import path from 'node:path';
import { Script } from 'node:vm';

declare const __DEFLATOR_CLI_BUILD__: string;

// built as CommonJS: __dirname is dist/
const here = __dirname;
const bundle = path.join(here, 'cli.cjs');
// The bundle is ASCII only (scripts/build.mjs makes it so): read as Latin-1 it is the same
// text, without a UTF-8 decoding pass over it.
const source = readFileSync(bundle, 'latin1');

/** The command's part of a cache file's name: `cli-BUILD-SIZE-MTIME-${suffix}`. */
const command = process.argv.slice(2).find((a) => !a.startsWith('-')) ?? '';
const suffix = `${/^[a-z][a-z-]{0,23}$/.test(command) ? command : 'other'}.v8`;

/** The cache file of this command and this exact bundle, or null when caching is off. */
function cacheFile(): string | null {
  if (process.env.DEFLATOR_CODE_CACHE === '0') return null;
  try {
    const st = statSync(bundle);
    return path.join(here, 'cache', `cli-${__DEFLATOR_CLI_BUILD__}-${st.size}-${Math.round(st.mtimeMs)}-${suffix}`);
  } catch {
    return null;
  }
}

/** Whether `f` is a cache file of this command (of any build): the build id is hex, size and time digits. */
const ofThisCommand = (f: string) => /^cli-[0-9a-f]+-\d+-\d+-(.+)$/.exec(f)?.[1] === suffix;

const file = cacheFile();
let cached: Buffer | undefined;
if (file) {
  try {
    cached = readFileSync(file);
  } catch {
    // no cache yet: this run makes one
  }
}
// The bundle is a CommonJS module inside the wrapper Node would put around it (a function
// expression: scripts/build.mjs writes it so), compiled as read.
const script = new Script(source, { filename: bundle, ...(cached ? { cachedData: cached } : {}) });
if (file && (!cached || script.cachedDataRejected)) {
  process.once('exit', () => {
    try {
      const data = script.createCachedData();
      mkdirSync(path.dirname(file), { recursive: true });
      const tmp = `${file}.${process.pid}.tmp`;
      writeFileSync(tmp, data);
      renameSync(tmp, file);
      // the same command's caches of earlier builds can no longer be used: drop them
      for (const f of readdirSync(path.dirname(file))) if (f !== path.basename(file) && ofThisCommand(f)) rmSync(path.join(path.dirname(file), f), { force: true });
    } catch {
      // not writable (or full): the next run compiles as this one did
    }
  });
}
const cjs = { exports: {} };
(script.runInThisContext() as (exports: object, require: NodeJS.Require, module: object, filename: string, dirname: string) => void)(cjs.exports, createRequire(bundle), cjs, bundle, here);

/**
 * The command line loads only the command it is asked for (src-main/cli/commands/registry.ts):
 * `node dist/cli.js` (the bundle vitest's global setup builds), with a preload that
 * reports at exit which of Node's built-in modules the process loaded
 * (process.moduleLoadList). A fit must not load the server's HTTP stack, the worker
 * threads or child processes, nor (through bin/deflator.js) the ES module loader, nor
 * node:crypto when its panel comes from the panel cache; help, `help CMD`, --version and a misspelt command still see every command.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { COMMANDS } from '../../../src-main/cli/commands/registry.js';

const root = path.resolve(import.meta.dirname, '../../..');
const cli = path.join(root, 'dist', 'cli.js');
let dir = '';
let preload = '';

beforeAll(() => {
  dir = mkdtempSync(path.join(tmpdir(), 'deflator-loading-'));
  preload = path.join(dir, 'loaded.cjs');
  // the list is taken before anything is written (process.stderr would load Node's stream modules)
  writeFileSync(preload, "process.on('exit', () => { const list = JSON.stringify(process.moduleLoadList); require('fs').writeSync(2, '@@loaded ' + list + '\\n'); });\n");
});

function run(args: string[]) {
  const r = spawnSync(process.execPath, ['--require', preload, cli, ...args], { cwd: root, encoding: 'utf8' });
  const m = /@@loaded (.*)\n/.exec(r.stderr);
  const loaded: string[] = m ? (JSON.parse(m[1]) as string[]) : [];
  return { code: r.status, stdout: r.stdout, stderr: r.stderr.replace(/@@loaded .*\n/, ''), loaded };
}

const builtin = (loaded: string[], name: string) => loaded.includes(`NativeModule ${name}`);

describe('command loading', () => {
  it('a fit evaluates its own modules only: no HTTP server, no worker threads', () => {
    const db = path.join(dir, 'demo.db');
    expect(run(['demo', '--db', db]).code).toBe(0);
    const r = run(['fit', path.join(root, 'sample-data/specs/linear-second.json'), '--db', db, '--no-record']);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    expect(r.stdout).toMatch(/Hansen J/);
    expect(r.loaded.length).toBeGreaterThan(0);
    expect(builtin(r.loaded, 'http')).toBe(false);
    expect(builtin(r.loaded, 'worker_threads')).toBe(false);
    // commander's child_process (with net and dgram) is required on first use only
    // (scripts/build.mjs), and bin/deflator.js starts without the ES module loader
    expect(builtin(r.loaded, 'child_process')).toBe(false);
    // the report is written straight to the file descriptor (src-main/cli/terminal.ts), and no
    // V8 flag is set (the kernels tier up by themselves, shared/linalg/gramKernel.ts): neither
    // Node's stream modules nor node:v8 are loaded
    expect(builtin(r.loaded, 'stream')).toBe(false);
    expect(builtin(r.loaded, 'v8')).toBe(false);
    const bin = spawnSync(process.execPath, ['--require', preload, path.join(root, 'bin', 'deflator.js'), 'fit', path.join(root, 'sample-data/specs/linear-second.json'), '--db', db, '--no-record'], { cwd: root, encoding: 'utf8' });
    expect(bin.status).toBe(0);
    const binLoaded = JSON.parse(/@@loaded (.*)\n/.exec(bin.stderr)?.[1] ?? '[]') as string[];
    expect(binLoaded.length).toBeGreaterThan(0);
    expect(builtin(binLoaded, 'internal/modules/esm/translators')).toBe(false);
    expect(builtin(binLoaded, 'child_process')).toBe(false);
    // node:crypto is loaded on first use (src-main/store/digest.ts): a fit that reads its
    // panel from the panel cache hashes nothing (the cache is looked up by its key's text)
    // and takes the stored digests for its record
    const spec = path.join(root, 'sample-data/specs/linear-second.json');
    expect(builtin(r.loaded, 'crypto')).toBe(false);
    expect(run(['fit', spec, '--db', db]).code).toBe(0); // records the run, stores the panel
    const hit = run(['fit', spec, '--db', db]);
    expect(hit.code).toBe(0);
    expect(hit.stdout).toMatch(/Hansen J/);
    expect(builtin(hit.loaded, 'crypto')).toBe(false);
    // an import does load it (the check above can fail)
    const csv = path.join(dir, 'extra.csv');
    writeFileSync(csv, 'date,extra_factor\n2020-01-31,1.5\n2020-02-29,1.25\n');
    const imp = run(['import', 'series', csv, '--db', db, '--kind', 'factor']);
    expect(imp.stderr).toBe('');
    expect(builtin(imp.loaded, 'crypto')).toBe(true);
    // the server command does load it (the check above can fail)
    const serve = run(['serve', '--help']);
    expect(serve.code).toBe(0);
    expect(builtin(serve.loaded, 'http')).toBe(true);
    // the import's progress asks whether stderr is a terminal: the streams are loaded there (the check above can fail)
    expect(builtin(imp.loaded, 'stream')).toBe(true);
  }, 60_000);

  it('root help lists every command, in the registry order', () => {
    const r = run(['--help']);
    expect(r.code).toBe(0);
    const listed = [...r.stdout.matchAll(/^ {2}([a-z-]+)(?: \[options\]| <|\s|$)/gm)].map((m) => m[1]).filter((n) => n !== 'help');
    expect(listed).toEqual(COMMANDS.map((c) => c.name));
  });

  it('`help CMD`, a command\'s own help, a misspelt command and --version work as before', () => {
    expect(run(['help', 'fit']).stdout).toMatch(/^Usage: deflator fit \[options\] <spec>/);
    expect(run(['backtest', '--help']).stdout).toMatch(/^Usage: deflator backtest \[options\] <spec>/);
    const typo = run(['fitt']);
    expect(typo.code).not.toBe(0);
    expect(typo.stderr).toMatch(/unknown command 'fitt'[\s\S]*Did you mean fit\?/);
    expect(run(['--version']).stdout).toMatch(/^\d+\.\d+\.\d+/);
  });
});

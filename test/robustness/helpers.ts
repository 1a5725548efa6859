/**
 * Shared pieces of the robustness tests: temporary folders, a seeded project database
 * (an earlier import that must survive everything), a canonical digest of a database's
 * whole content, and the compiled CLI run as a child process.
 *
 * The digest is independent of the store's own code: a separate better-sqlite3
 * connection lists every table in sqlite_master, reads each one ordered by its primary
 * key (rowid where there is none), and hashes every value with its SQLite storage class
 * (INTEGER as a 64-bit integer, REAL by its IEEE 754 bit pattern, TEXT, BLOB, NULL),
 * together with the schema text and PRAGMA user_version. Equal digests mean equal content,
 * the import log (timestamps included) as much as the price rows.
 */
import Database from 'better-sqlite3';
import { spawn, spawnSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import { existsSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { importPrices, importSeries } from '../../src-main/import/index.js';
import { Store } from '../../src-main/store/store.js';
import { mulberry32 } from '../../shared/random.js';
import { fit } from '../../shared/estimation/fit.js';
import { parseFitSpec } from '../../shared/spec.js';
import { loadPanel } from '../../src-main/data/panel.js';
import { recordRun } from '../../src-main/runs/runs.js';
import { makeProject, type Project } from '../src-main/runs/helpers.js';

export const ROOT = path.resolve(import.meta.dirname, '..', '..');
export const CLI = path.join(ROOT, 'dist', 'cli.js');
export const CORPUS = path.join(import.meta.dirname, 'corpus');

const made: string[] = [];
export function tempDir(prefix = 'deflator-robust-'): string {
  const d = mkdtempSync(path.join(tmpdir(), prefix));
  made.push(d);
  return d;
}
/** Removes every folder tempDir made (call in afterAll). */
export function cleanTempDirs(): void {
  for (const d of made.splice(0)) rmSync(d, { recursive: true, force: true });
}

export const SEED_PRICES = 'date,asset,price,dividend\n2020-01-31,alder-hollow,10.00,\n2020-02-28,alder-hollow,11.00,0.25\n2020-03-31,alder-hollow,10.50,\n2020-01-31,birch-lane,20.00,\n2020-02-28,birch-lane,20.40,\n2020-03-31,birch-lane,21.10,\n';
export const SEED_SERIES = 'date,gale_factor\n2020-01-31,0.0100\n2020-02-28,-0.0050\n2020-03-31,0.0075\n';

/** A database holding one price import and one factor import (the data that must survive). */
export async function seedDatabase(dir: string, name = 'seed.db'): Promise<string> {
  const db = path.join(dir, name);
  const prices = path.join(dir, `${name}.prices.csv`);
  const series = path.join(dir, `${name}.series.csv`);
  writeFileSync(prices, SEED_PRICES);
  writeFileSync(series, SEED_SERIES);
  const store = new Store(db);
  try {
    await importPrices(store, prices);
    await importSeries(store, series, { kind: 'factor' });
  } finally {
    store.close();
  }
  return db;
}

function put(h: ReturnType<typeof createHash>, v: unknown): void {
  if (v === null) h.update('\u0000N');
  else if (typeof v === 'bigint') h.update(`\u0000I${v}`);
  else if (typeof v === 'number') {
    const b = Buffer.alloc(8);
    b.writeDoubleLE(v);
    h.update('\u0000R').update(b);
  } else if (typeof v === 'string') h.update(`\u0000T${v.length}:`).update(v, 'utf8');
  else if (Buffer.isBuffer(v)) h.update(`\u0000B${v.length}:`).update(v);
  else throw new Error(`unexpected SQLite value ${String(v)}`);
}

export interface DatabaseState {
  /** SHA-256 over the schema, user_version and every row of every table. */
  digest: string;
  /** Rows per table. */
  rows: Record<string, number>;
  /** PRAGMA integrity_check (SQLite's own consistency check of b-trees, indices and pages). */
  integrity: string;
}

/** Schema, user_version and every row of every table, hashed through the given connection. */
export function digestOf(db: Database.Database): { digest: string; rows: Record<string, number> } {
  const h = createHash('sha256');
  const rows: Record<string, number> = {};
  const safe = (st: Database.Statement) => st.safeIntegers(true);
  // one read transaction (or the caller's): the whole digest sees one snapshot
  const read = () => {
    put(h, BigInt(Number(db.pragma('user_version', { simple: true }))));
    const schema = safe(db.prepare("SELECT type, name, tbl_name, sql FROM sqlite_master WHERE name NOT LIKE 'sqlite_autoindex%' ORDER BY type, name")).raw().all() as unknown[][];
    for (const r of schema) for (const v of r) put(h, v);
    // subject_pack holds copies of rows digested here anyway, stored by reads (src-main/store/packs.ts): a cache, not data
    const tables = schema.filter((r) => r[0] === 'table' && r[1] !== 'subject_pack').map((r) => String(r[1]));
    for (const t of tables) {
      const q = `"${t.replaceAll('"', '""')}"`;
      const info = db.prepare(`PRAGMA table_info(${q})`).all() as { name: string; pk: number }[];
      const pk = info.filter((c) => Number(c.pk) > 0).sort((a, b) => Number(a.pk) - Number(b.pk)).map((c) => `"${c.name}"`);
      const order = pk.length ? pk.join(', ') : 'rowid';
      h.update(`\u0001${t}`);
      let n = 0;
      for (const r of safe(db.prepare(`SELECT * FROM ${q} ORDER BY ${order}`)).raw().iterate() as Iterable<unknown[]>) {
        n++;
        for (const v of r) put(h, v);
      }
      rows[t] = n;
    }
  };
  if (db.inTransaction) read();
  else db.transaction(read)();
  return { digest: h.digest('hex'), rows };
}

/** Reads a database through its own connection (the file may be in use by a child process). */
export function databaseState(file: string, options: { busyTimeout?: number } = {}): DatabaseState {
  const db = new Database(file, { readonly: true, fileMustExist: true });
  try {
    db.pragma(`busy_timeout = ${options.busyTimeout ?? 10_000}`);
    const { digest, rows } = digestOf(db);
    const integrity = (db.pragma('integrity_check') as { integrity_check: string }[]).map((r) => r.integrity_check).join('; ');
    return { digest, rows, integrity };
  } finally {
    db.close();
  }
}

export interface CliResult {
  status: number | null;
  signal: NodeJS.Signals | null;
  stdout: string;
  stderr: string;
  ms: number;
  /** Peak resident memory of the child (MB), when measured with /usr/bin/time. */
  rssMb?: number;
}

const TIME = '/usr/bin/time';

/**
 * Runs `node dist/cli.js ...args` to the end. With `measure`, under GNU time -v (where
 * installed) for the child's peak RSS; its report is cut off the end of stderr.
 */
export function runCli(args: string[], options: { timeoutMs?: number; env?: NodeJS.ProcessEnv; measure?: boolean } = {}): CliResult {
  const t0 = performance.now();
  const timed = options.measure === true && existsSync(TIME);
  const cmd = timed ? TIME : process.execPath;
  const argv = timed ? ['-v', process.execPath, CLI, ...args] : [CLI, ...args];
  const r = spawnSync(cmd, argv, { encoding: 'utf8', timeout: options.timeoutMs ?? 120_000, env: options.env ?? process.env, maxBuffer: 1 << 26 });
  const out: CliResult = { status: r.status, signal: r.signal, stdout: r.stdout ?? '', stderr: r.stderr ?? '', ms: performance.now() - t0 };
  if (timed) {
    const at = out.stderr.lastIndexOf('\tCommand being timed:');
    const report = at >= 0 ? out.stderr.slice(at) : '';
    if (at >= 0) out.stderr = out.stderr.slice(0, at);
    const m = /Maximum resident set size \(kbytes\): (\d+)/.exec(report);
    if (m) out.rssMb = Number(m[1]) / 1024;
    const exit = /Exit status: (\d+)/.exec(report);
    if (exit) out.status = Number(exit[1]);
  }
  return out;
}

/** runCli's exit code and output, as most assertions want them. */
export function cli(args: string[]): { code: number; out: string; err: string } {
  const r = runCli(args);
  return { code: r.status ?? -1, out: r.stdout, err: r.stderr };
}

/** Same, without blocking the test's event loop (for two processes at once). */
export function runCliAsync(args: string[], options: { timeoutMs?: number; cwd?: string } = {}): Promise<CliResult> {
  const t0 = performance.now();
  return new Promise((resolve, reject) => {
    const child = spawn(process.execPath, [CLI, ...args], { stdio: ['ignore', 'pipe', 'pipe'], ...(options.cwd ? { cwd: options.cwd } : {}) });
    let stdout = '';
    let stderr = '';
    child.stdout.on('data', (c: Buffer) => (stdout += c.toString('utf8')));
    child.stderr.on('data', (c: Buffer) => (stderr += c.toString('utf8')));
    const timer = setTimeout(() => child.kill('SIGKILL'), options.timeoutMs ?? 120_000);
    child.on('error', reject);
    child.on('close', (status, signal) => {
      clearTimeout(timer);
      resolve({ status, signal, stdout, stderr, ms: performance.now() - t0 });
    });
  });
}

export const seeded = mulberry32;

/** A connection of its own that takes SQLite's write lock (BEGIN IMMEDIATE) and keeps it until release(). */
export function holdWriteLock(db: string): { release: () => void } {
  const holder = new Database(db);
  holder.exec('BEGIN IMMEDIATE');
  holder.prepare('INSERT INTO asset (name) VALUES (?)').run('lock-holder');
  return {
    release: () => {
      holder.exec('ROLLBACK');
      holder.close();
    },
  };
}

/** The error code a function throws (undefined when it returns). */
export function codeOf(f: () => unknown): string | undefined {
  try {
    f();
    return undefined;
  } catch (e) {
    return (e as { code?: string }).code;
  }
}

/**
 * The demo market imported into a temporary project (test/src-main/runs/helpers.ts) with
 * one recorded fit (run 1: three companies on the first factor); the store is closed.
 */
export async function projectWithRun(): Promise<Project> {
  const p = await makeProject();
  const spec = parseFitSpec({ riskfree: 'bill_yield', assets: ['brinemoor-ferries', 'corvane-saltworks', 'greyhallow-banking'], model: { factors: ['harbor'] } });
  const panel = loadPanel(p.store, spec);
  recordRun(p.store, { spec, result: fit(spec, panel), panel });
  p.store.close();
  return p;
}

/** Wall-clock budget bookkeeping: each suite prints what it spent. */
export function stopwatch(label: string): () => number {
  const t0 = performance.now();
  return () => {
    const s = (performance.now() - t0) / 1000;
    console.log(`[robustness] ${label}: ${s.toFixed(1)} s`);
    return s;
  };
}

/**
 * The project database when it cannot simply be written:
 *   - a foreign SQLite file (tables, no deflator schema version) and one written by a
 *     newer build are refused before anything touches them: the file keeps every byte
 *     (the journal mode used to be switched to WAL first, which rewrites header bytes
 *     18-19, sqlite.org/fileformat2.html#the_database_header), and no -wal/-shm appears;
 *   - another program holding the write lock (BEGIN IMMEDIATE, sqlite.org/lockingv3.html)
 *     beyond the busy timeout: every write (run record, portfolio build, import removal,
 *     run deletion) says BUSY with a hint and exit code 5, nothing changes, and a computed
 *     fit is printed, saved to a file and recorded later with `runs --record`;
 *   - a read-only folder (root: a tmpfs remounted read-only): every reading command works
 *     on it, every writing one says NOT_WRITABLE up front (exit 6);
 *   - a full disk (root: a small tmpfs): the fit is printed and saved, exit 6;
 *   - a damaged page: DAMAGED with a hint to recover (exit 7), never a raw SQLite message.
 * The mounts need root; elsewhere those cases are skipped and say so.
 */
import Database from 'better-sqlite3';
import { createHash } from 'node:crypto';
import { closeSync, copyFileSync, existsSync, openSync, readdirSync, readFileSync, rmSync, truncateSync, writeFileSync, writeSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openApp } from '../../src-main/app/open.js';
import { getRun } from '../../src-main/runs/runs.js';
import { Store } from '../../src-main/store/store.js';
import { createPool } from '../../src-main/workers/pool.js';
import type { Project } from '../src-main/runs/helpers.js';
import { cleanTempDirs, databaseState, ROOT, stopwatch, tempDir, holdWriteLock, projectWithRun, runCliAsync, type CliResult } from './helpers.js';
import { IS_ROOT, mountTmpfs } from './mounts.js';

const SPEC = path.join(ROOT, 'sample-data', 'specs', 'linear-second.json');

type Ran = CliResult;

const run = (args: string[], cwd?: string): Promise<Ran> => runCliAsync(args, cwd ? { cwd } : {});

const sha = (file: string): string => createHash('sha256').update(readFileSync(file)).digest('hex');
const RAW_SQLITE = /SqliteError|SQLITE_[A-Z_]+:|database disk image is malformed\s*$|^deflator: database is locked/m;


let p: Project;
let done: () => number;
const tally = { commands: 0 };

beforeAll(async () => {
  done = stopwatch('storage');
  p = await projectWithRun();
}, 60_000);

afterAll(() => {
  console.log(`[robustness] storage: ${tally.commands} commands on foreign, locked, read-only, full and damaged databases`);
  done?.();
  cleanTempDirs();
});

/** A copy of the project database (checkpointed: no -wal beside it) in `dir`. */
function copyProject(dir: string, name = 'project.db'): string {
  const s = new Database(p.dbPath);
  s.pragma('wal_checkpoint(TRUNCATE)');
  s.close();
  const to = path.join(dir, name);
  copyFileSync(p.dbPath, to);
  return to;
}

describe('a foreign SQLite file and a newer deflator database', () => {
  it('are refused by every command before anything is written: every byte the same, no -wal or -shm', async () => {
    const dir = tempDir();
    const foreign = path.join(dir, 'ledger.sqlite');
    const f = new Database(foreign);
    f.pragma('journal_mode = DELETE');
    f.exec('CREATE TABLE entry (id INTEGER PRIMARY KEY, memo TEXT, amount REAL)');
    const ins = f.prepare('INSERT INTO entry (memo, amount) VALUES (?, ?)');
    for (let i = 0; i < 200; i++) ins.run(`memo ${i}`, i * 1.25);
    f.close();
    const newer = copyProject(dir, 'newer.db');
    const n = new Database(newer);
    n.pragma('journal_mode = DELETE');
    n.pragma('user_version = 999');
    n.close();
    const files = readdirSync(dir).sort();
    const before = { foreign: sha(foreign), newer: sha(newer) };
    const csv = p.file('factors.csv');
    for (const [db, words] of [
      [foreign, 'is an SQLite database, but not a deflator one'],
      [newer, 'was written by a newer deflator'],
    ] as const) {
      for (const args of [['info', '--db', db], ['import', 'series', csv, '--kind', 'factor', '--db', db], ['fit', SPEC, '--db', db], ['runs', '--db', db], ['fit', SPEC, '--db', db, '--no-record']]) {
        tally.commands++;
        const r = await run(args);
        expect(r.status, `${args.join(' ')}: ${r.stderr}`).toBe(1);
        expect(r.stderr).toContain(words);
      }
    }
    // the app's composition root too
    const pool = createPool({ threads: 1 });
    try {
      await expect(openApp({ dbPath: foreign, dataDir: path.join(dir, 'appdata'), pool })).rejects.toMatchObject({ code: 'CONFLICT' });
    } finally {
      await pool.close();
    }
    expect(sha(foreign), 'the foreign file changed').toBe(before.foreign);
    expect(sha(newer), 'the newer database changed').toBe(before.newer);
    expect(readdirSync(dir).filter((x) => x !== 'appdata').sort()).toEqual(files);
  }, 120_000);
});

describe('another program holds the write lock beyond the busy timeout', () => {
  it('every write says BUSY (exit 5) with a hint and changes nothing; a computed fit is printed, saved and recorded later', async () => {
    const dir = tempDir();
    const db = copyProject(dir);
    const before = databaseState(db).digest;
    const lock = holdWriteLock(db);
    let results: Ran[];
    try {
      results = await Promise.all([
        run(['fit', SPEC, '--db', db, '--json'], dir),
        run(['portfolio', 'build', '--db', db, '--sort', 'momentum', '--name', 'mom'], dir),
        run(['import', 'remove', '1', '--db', db], dir),
        run(['runs', '--delete', '1', '--db', db], dir),
      ]);
    } finally {
      lock.release();
    }
    tally.commands += results.length;
    const [fitRun, build, remove, del] = results;
    for (const [what, r] of [['portfolio build', build], ['import remove', remove], ['runs --delete', del]] as const) {
      expect(r.status, `${what}: ${r.stderr}`).toBe(5);
      expect(r.stderr, what).toContain(`database ${db} is locked`);
      expect(r.stderr, what).toContain('-> wait for the other import (or the app) to finish, then run this again; nothing was stored');
      expect(r.stderr, what).not.toMatch(RAW_SQLITE);
    }
    expect(databaseState(db).digest, 'a refused write changed the database').toBe(before);
    // the fit: computed, printed in full, not recorded, saved beside the database
    expect(fitRun.status, fitRun.stderr).toBe(5);
    const printed = JSON.parse(fitRun.stdout) as { kind: string; params: { name: string; estimate: number; se: number }[]; run?: number };
    expect(printed.kind).toBe('fit');
    expect(printed.run).toBeUndefined();
    expect(fitRun.stderr).toContain(`the result above is not recorded: database ${db} is locked`);
    const m = /record it later with: deflator runs --record (\S+) --db (\S+)/.exec(fitRun.stderr);
    expect(m, fitRun.stderr).not.toBeNull();
    const saved = m![1];
    expect(path.dirname(saved)).toBe(dir);
    expect(existsSync(saved)).toBe(true);
    // later, with the lock gone: recorded, bit for bit what was printed, and replayable
    const rec = await run(['runs', '--record', saved, '--db', db]);
    tally.commands++;
    expect(rec.status, rec.stderr).toBe(0);
    expect(rec.stdout).toMatch(/Recorded .* as run 2 /);
    const store = new Store(db, { mustExist: true });
    try {
      const stored = getRun(store, 2).result as unknown as typeof printed;
      expect(stored.params).toEqual(printed.params);
    } finally {
      store.close();
    }
    const replay = await run(['replay', '2', '--db', db]);
    tally.commands++;
    expect(replay.status, replay.stdout + replay.stderr).toBe(0);
    expect(replay.stdout).toContain('REPLAY OK');
    // a saved result whose data changed since is not recorded: it says to run again
    const s2 = new Database(db);
    s2.prepare("UPDATE observation SET price = price * 1.01 WHERE asset_id = (SELECT id FROM asset WHERE name = 'brinemoor-ferries') AND date = (SELECT max(date) FROM observation)").run();
    s2.close();
    const stale = await run(['runs', '--record', saved, '--db', db]);
    tally.commands++;
    expect(stale.status).toBe(1);
    expect(stale.stderr).toContain('was computed on other data than');
  }, 120_000);

  it('through the app: a fit replies with its result and says it was not recorded and where it was saved; an import answers BUSY', async () => {
    const dir = tempDir();
    const db = copyProject(dir);
    const pool = createPool({ threads: 1 });
    const app = await openApp({ dbPath: db, dataDir: path.join(dir, 'appdata'), fileRoots: [p.dir], pool });
    const lock = holdWriteLock(db);
    try {
      const spec = JSON.parse(readFileSync(SPEC, 'utf8')) as unknown;
      const extra = path.join(p.dir, 'extra_factor.csv');
      writeFileSync(extra, 'date,extra_factor\n2020-01-31,0.01\n2020-02-29,-0.02\n2020-03-31,0.005\n');
      const [fitted, imported] = await Promise.all([app.dispatcher.dispatch('fit', { spec }), app.dispatcher.dispatch('importFile', { source: { path: extra }, kind: 'series', options: { seriesKind: 'factor' } })]);
      expect(fitted.ok).toBe(true);
      const value = (fitted as { value: { kind: string; runId?: number; unrecorded?: { code: string; message: string; hint: string; savedTo?: string } } }).value;
      expect(value.kind).toBe('fit');
      expect(value.runId).toBeUndefined();
      expect(value.unrecorded?.code).toBe('BUSY');
      expect(value.unrecorded?.hint).toContain('deflator runs --record');
      expect(value.unrecorded?.savedTo && existsSync(value.unrecorded.savedTo)).toBe(true);
      expect(path.dirname(value.unrecorded!.savedTo!)).toBe(path.join(dir, 'appdata', 'unrecorded'));
      expect(imported).toMatchObject({ ok: false, error: { code: 'BUSY' } });
    } finally {
      lock.release();
      app.close();
      await pool.close();
    }
  }, 120_000);
});

describe.skipIf(!IS_ROOT)('read-only folders and full disks (skipped unless root: they need a tmpfs mount)', () => {
  it('a database in a read-only folder: every reading command works, every writing one says NOT_WRITABLE (exit 6) up front', async () => {
    const mount = mountTmpfs('32m');
    try {
      const db = copyProject(mount.dir);
      const bytes = sha(db);
      mount.readOnly();
      const out = tempDir();
      const reads = [
        ['info', '--db', db],
        ['runs', '--db', db],
        ['show', '1', '--db', db],
        ['export', '1', '--db', db, '--format', 'csv', '--out', path.join(out, 'run1') + '/'],
        ['returns', '--db', db, '--frequency', 'monthly'],
        ['replay', '1', '--db', db],
        ['fit', SPEC, '--db', db, '--no-record'],
        ['portfolio', 'list', '--db', db],
      ];
      for (const args of reads) {
        tally.commands++;
        const r = await run(args, out);
        expect(r.status, `${args.join(' ')}: ${r.stderr}`).toBe(0);
      }
      expect(readdirSync(path.join(out, 'run1')).length).toBeGreaterThan(0);
      const writes = [
        ['fit', SPEC, '--db', db],
        ['import', 'series', p.file('factors.csv'), '--kind', 'factor', '--db', db],
        ['portfolio', 'build', '--db', db, '--sort', 'momentum', '--name', 'mom'],
        ['import', 'remove', '1', '--db', db],
        ['runs', '--delete', '1', '--db', db],
      ];
      for (const args of writes) {
        tally.commands++;
        const r = await run(args, out);
        expect(r.status, `${args.join(' ')}: ${r.stderr}`).toBe(6);
        expect(r.stderr).toContain(`database ${db} may not be written`);
        expect(r.stderr).toContain('commands that only read');
        expect(r.stderr).not.toMatch(RAW_SQLITE);
        expect(r.ms, 'refused up front, not after computing').toBeLessThan(20_000);
      }
      expect(sha(db)).toBe(bytes);
      expect(readdirSync(mount.dir)).toEqual(['project.db']);
    } finally {
      mount.release();
    }
  }, 240_000);

  it('a full disk: the fit is printed and saved where there is room (exit 6); recorded once there is space again', async () => {
    const mount = mountTmpfs('8m');
    try {
      const db = copyProject(mount.dir);
      const before = databaseState(db).digest;
      // fill the disk, then give back 40 KB: room for SQLite's 32 KB -shm file, not for a run record
      const filler = path.join(mount.dir, 'filler');
      const fd = openSync(filler, 'w');
      const block = Buffer.alloc(4096, 1);
      let size = 0;
      try {
        for (;;) size += writeSync(fd, block);
      } catch {
        // full
      } finally {
        closeSync(fd);
      }
      truncateSync(filler, Math.max(0, size - 40 * 1024));
      const cwd = tempDir();
      const r = await run(['fit', SPEC, '--db', db, '--json'], cwd);
      tally.commands++;
      expect(r.status, r.stderr).toBe(6);
      expect(JSON.parse(r.stdout).kind).toBe('fit');
      expect(r.stderr).toContain(`the result above is not recorded: the disk holding database ${db} is full`);
      expect(r.stderr).not.toMatch(RAW_SQLITE);
      const saved = /record it later with: deflator runs --record (\S+) --db/.exec(r.stderr)?.[1];
      expect(saved && path.dirname(saved)).toBe(cwd); // not beside the database: that disk is full
      rmSync(filler);
      expect(databaseState(db).digest).toBe(before);
      const rec = await run(['runs', '--record', saved!, '--db', db]);
      tally.commands++;
      expect(rec.status, rec.stderr).toBe(0);
      expect(rec.stdout).toMatch(/as run 2 /);
    } finally {
      mount.release();
    }
  }, 240_000);
});

describe('a damaged database', () => {
  it('says DAMAGED with a way to recover (exit 7), never a raw SQLite message', async () => {
    const dir = tempDir();
    const db = copyProject(dir);
    const s = new Database(db);
    const root = s.prepare("SELECT rootpage FROM sqlite_master WHERE name = 'observation'").pluck().get() as number;
    const pageSize = s.pragma('page_size', { simple: true }) as number;
    s.close();
    // overwrite the b-tree page header of the observation table (sqlite.org/fileformat2.html, b-tree pages)
    const fd = openSync(db, 'r+');
    writeSync(fd, Buffer.alloc(16, 0xee), 0, 16, (root - 1) * pageSize);
    closeSync(fd);
    for (const args of [['fit', SPEC, '--db', db, '--no-record'], ['returns', '--db', db, '--frequency', 'monthly']]) {
      tally.commands++;
      const r = await run(args);
      expect(r.status, `${args.join(' ')}: ${r.stdout.slice(0, 200)} ${r.stderr}`).toBe(7);
      expect(r.stderr).toContain(`database ${db} is damaged`);
      expect(r.stderr).toContain('.recover');
    }
  }, 120_000);
});

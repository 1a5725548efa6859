/**
 * Crash safety: `deflator import prices` of a 300,000-row file runs in a child process
 * that is killed with SIGKILL at seeded random moments (before it writes, while it writes,
 * around the commit). After each kill the database is reopened the way the app opens it
 * and must pass SQLite's PRAGMA integrity_check, hold the earlier import bit for bit, and
 * show the killed import either not at all (no rows, no log entry) or whole (every row,
 * one log entry with the full count): SQLite's atomic commit in WAL mode
 * (sqlite.org/atomiccommit.html, sqlite.org/wal.html) plus one transaction per import.
 */
import { spawn } from 'node:child_process';
import { copyFileSync, createWriteStream, existsSync, statSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Store } from '../../src-main/store/store.js';
import { CLI, cleanTempDirs, databaseState, runCli, seedDatabase, seeded, stopwatch, tempDir } from './helpers.js';

const ASSETS = 400;
const DAYS = 750;
const ROWS = ASSETS * DAYS;
const KILLS = Number(process.env.DEFLATOR_CRASH_KILLS ?? 24);

let dir: string;
let seed: string;
let big: string;
let done: () => number;

async function writeBigFile(file: string): Promise<void> {
  const rand = seeded(7);
  const out = createWriteStream(file);
  const write = (s: string) => (out.write(s) ? Promise.resolve() : new Promise<void>((r) => out.once('drain', () => r())));
  await write('date,asset,price\n');
  const d = new Date(Date.UTC(2001, 0, 1));
  for (let t = 0; t < DAYS; ) {
    const wd = d.getUTCDay();
    if (wd !== 0 && wd !== 6) {
      const day = d.toISOString().slice(0, 10);
      let block = '';
      for (let a = 0; a < ASSETS; a++) block += `${day},crash-${String(a).padStart(3, '0')},${(20 + (a % 40) + rand()).toFixed(4)}\n`;
      await write(block);
      t++;
    }
    d.setUTCDate(d.getUTCDate() + 1);
  }
  await new Promise<void>((r) => out.end(() => r()));
}

beforeAll(async () => {
  done = stopwatch('crash');
  dir = tempDir();
  seed = await seedDatabase(dir);
  big = path.join(dir, 'big_prices.csv');
  await writeBigFile(big);
}, 120_000);
afterAll(() => {
  done();
  cleanTempDirs();
});

/** The seed's own rows and log entries, as JSON (compared before and after each kill). */
function seedContent(db: string): string {
  const s = new Store(db, { readonly: true });
  try {
    const ids = "(SELECT id FROM import_log WHERE file_name LIKE 'seed.db.%')";
    return JSON.stringify([
      s.db.prepare(`SELECT * FROM observation WHERE import_id IN ${ids} ORDER BY asset_id, date`).raw().all(),
      s.db.prepare(`SELECT * FROM series_observation WHERE import_id IN ${ids} ORDER BY series_id, date`).raw().all(),
      s.db.prepare("SELECT * FROM import_log WHERE file_name LIKE 'seed.db.%' ORDER BY id").raw().all(),
      s.db.prepare('SELECT * FROM series ORDER BY id').raw().all(),
    ]);
  } finally {
    s.close();
  }
}

interface Run {
  killed: boolean;
  /** ms from the store opening the database (its -shm file appears) to the kill or the exit. */
  openMs: number | null;
  /** WAL bytes at the kill (frames reach the WAL at a cache spill or the commit). */
  walBytes: number;
  /** Largest WAL size seen while polling. */
  maxWal: number;
}

type Trigger = { afterOpenMs: number } | { walBytes: number } | { never: true };

const walSize = (db: string) => {
  try {
    return statSync(`${db}-wal`).size;
  } catch {
    return 0;
  }
};

/**
 * Starts the import and SIGKILLs it at the trigger: a delay after it has opened the
 * database (the -shm file of WAL mode appears), or the moment the WAL has grown to a
 * given size (in the middle of writing the commit's frames).
 */
function importAndKill(db: string, trigger: Trigger): Promise<Run> {
  return new Promise((resolve, reject) => {
    const child = spawn(process.execPath, [CLI, 'import', 'prices', big, '--db', db, '--json'], { stdio: ['ignore', 'ignore', 'pipe'] });
    let stderr = '';
    child.stderr.on('data', (c: Buffer) => (stderr += c.toString('utf8')));
    let killed = false;
    let opened: number | null = null;
    let walBytes = 0;
    let maxWal = 0;
    let timer: NodeJS.Timeout | undefined;
    const kill = () => {
      if (killed) return;
      walBytes = walSize(db);
      killed = child.kill('SIGKILL');
    };
    const poll = setInterval(() => {
      if (opened === null && existsSync(`${db}-shm`)) {
        opened = performance.now();
        if ('afterOpenMs' in trigger) timer = setTimeout(kill, trigger.afterOpenMs);
      }
      const w = walSize(db);
      if (w > maxWal) maxWal = w;
      if ('walBytes' in trigger && w >= trigger.walBytes) kill();
    }, 1);
    child.on('error', reject);
    child.on('close', (status, signal) => {
      clearInterval(poll);
      if (timer) clearTimeout(timer);
      const openMs = opened === null ? null : performance.now() - opened;
      if (signal !== null && signal !== 'SIGKILL') reject(new Error(`child ended by ${signal}`));
      else if (signal === null && status !== 0) reject(new Error(`import failed: ${stderr}`));
      else resolve({ killed: signal === 'SIGKILL' && killed, openMs, walBytes, maxWal });
    });
  });
}

describe('SIGKILL during an import', () => {
  it(`${KILLS} seeded kills leave the database consistent, the earlier data intact, the import absent or whole`, async () => {
    // calibrate: one uninterrupted import on a copy, timed from the moment it opens the database
    const calib = path.join(dir, 'calibrate.db');
    copyFileSync(seed, calib);
    const full = await importAndKill(calib, { never: true });
    expect(full.openMs, 'the import opened the database').not.toBeNull();
    const fullMs = full.openMs ?? 0;
    expect(databaseState(calib).rows.observation).toBe(databaseState(seed).rows.observation + ROWS);
    const seedJson = seedContent(seed);
    const seedDigest = databaseState(seed).digest;
    const seedRows = databaseState(seed).rows.observation;

    const rand = seeded(20261201);
    const outcome = { reading: 0, walWritten: 0, finished: 0, rolledBack: 0, committed: 0 };
    for (let k = 0; k < KILLS; k++) {
      const db = path.join(dir, `kill-${k}.db`);
      copyFileSync(seed, db);
      // seeded kill points: two in three spread over the import's time (hashing, parsing,
      // inserting), one in three at a WAL size while the commit's frames are written
      const byWal = k % 3 === 2 && full.maxWal > 0;
      // (every other of those at the full size: the commit frame is in, the process not yet gone)
      const walAt = k % 6 === 5 ? full.maxWal : Math.max(1, Math.round(rand() * full.maxWal));
      const trigger: Trigger = byWal ? { walBytes: walAt } : { afterOpenMs: Math.round(rand() * fullMs * 1.1) };
      const ms = 'afterOpenMs' in trigger ? `${trigger.afterOpenMs} ms after opening` : `WAL at ${'walBytes' in trigger ? trigger.walBytes : 0} bytes`;
      const r = await importAndKill(db, trigger);
      if (!r.killed) outcome.finished++;
      else if (r.walBytes > 0) outcome.walWritten++;
      else outcome.reading++;

      // reopen as the app does (read-write: WAL recovery runs here), then check
      new Store(db).close();
      const state = databaseState(db);
      expect(state.integrity, `kill ${k} at ${ms}`).toBe('ok');
      expect(seedContent(db), `kill ${k}: the earlier import changed`).toBe(seedJson);
      const s = new Store(db, { readonly: true });
      let logged: { rows_stored: number; id: number }[];
      let rows: number;
      try {
        logged = s.db.prepare("SELECT id, rows_stored FROM import_log WHERE file_name = 'big_prices.csv'").all() as { rows_stored: number; id: number }[];
        rows = s.db.prepare("SELECT count(*) FROM observation WHERE import_id IN (SELECT id FROM import_log WHERE file_name = 'big_prices.csv')").pluck().get() as number;
      } finally {
        s.close();
      }
      const total = state.rows.observation - seedRows;
      if (logged.length === 0) {
        outcome.rolledBack++;
        expect(total, `kill ${k}: rows without a log entry`).toBe(0);
        expect(state.digest, `kill ${k}: a rolled-back import changed the database`).toBe(seedDigest);
      } else {
        outcome.committed++;
        expect(logged.length, `kill ${k}: phantom log entries`).toBe(1);
        expect(logged[0].rows_stored).toBe(ROWS);
        expect(rows).toBe(ROWS);
        expect(total).toBe(ROWS);
      }
    }
    console.log(
      `[robustness] crash: ${KILLS} SIGKILLs of a ${ROWS.toLocaleString('en')}-row import (uninterrupted ${(fullMs / 1000).toFixed(1)} s after opening the database, WAL up to ${(full.maxWal / 1e6).toFixed(1)} MB): ` +
        `${outcome.reading} while reading and inserting, ${outcome.walWritten} with WAL frames written (spill or commit), ${outcome.finished} after finishing; ` +
        `afterwards ${outcome.rolledBack} absent, ${outcome.committed} whole, 0 partial; integrity_check ok every time`,
    );
    expect(outcome.reading + outcome.walWritten, 'most kills land inside the import').toBeGreaterThan(KILLS / 2);

    // the database a kill left behind takes the same import afterwards
    const last = path.join(dir, `kill-${KILLS - 1}.db`);
    const again = runCli(['import', 'prices', big, '--db', last, '--json'], { timeoutMs: 120_000 });
    expect(again.status, again.stderr).toBe(0);
    expect(databaseState(last).integrity).toBe('ok');
  }, 240_000);
});

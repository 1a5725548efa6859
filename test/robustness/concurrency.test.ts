/**
 * Two writers on one database: CLI imports in child processes, the app's import service
 * in this process, and a connection holding SQLite's write lock (BEGIN IMMEDIATE, the
 * RESERVED lock of sqlite.org/lockingv3.html; in WAL mode one writer at a time,
 * sqlite.org/wal.html). A writer that finds the lock taken waits through the store's
 * busy timeout (SQLite's busy handler retries until then, sqlite.org/c3ref/busy_timeout.html):
 *   - held shorter than the timeout: every import lands, whole, none lost;
 *   - held longer: the import fails with BUSY (exit 5) naming the database and the lock
 *     and saying what to do, and the database is unchanged.
 */
import { createWriteStream, writeFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { composeApp } from '../../src-main/app/compose.js';
import { ImportFilePolicy } from '../../src-main/app/files.js';
import { StoreProject } from '../../src-main/app/project.js';
import { Store } from '../../src-main/store/store.js';
import { fakeEngine } from '../src-main/app/fakes.js';
import { cleanTempDirs, databaseState, holdWriteLock, runCliAsync, seedDatabase, stopwatch, tempDir } from './helpers.js';

let dir: string;
let done: () => number;
const ROWS_BIG = 120_000;

async function writeLong(file: string, assets: number, days: number, prefix: string): Promise<void> {
  const out = createWriteStream(file);
  const write = (s: string) => (out.write(s) ? Promise.resolve() : new Promise<void>((r) => out.once('drain', () => r())));
  await write('date,asset,price\n');
  const d = new Date(Date.UTC(2005, 0, 3));
  for (let t = 0; t < days; ) {
    const wd = d.getUTCDay();
    if (wd !== 0 && wd !== 6) {
      const day = d.toISOString().slice(0, 10);
      let block = '';
      for (let a = 0; a < assets; a++) block += `${day},${prefix}-${a},${(30 + (a % 9) + (t % 11) / 10).toFixed(2)}\n`;
      await write(block);
      t++;
    }
    d.setUTCDate(d.getUTCDate() + 1);
  }
  await new Promise<void>((r) => out.end(() => r()));
}


const logCount = (db: string, file: string) => {
  const s = new Store(db, { readonly: true });
  try {
    return s.db.prepare('SELECT count(*) AS n, sum(rows_stored) AS rows FROM import_log WHERE file_name = ?').get(file) as { n: number; rows: number | null };
  } finally {
    s.close();
  }
};

beforeAll(async () => {
  done = stopwatch('concurrency');
  dir = tempDir();
  await writeLong(path.join(dir, 'big_a.csv'), 200, ROWS_BIG / 200, 'north');
  await writeLong(path.join(dir, 'small_b.csv'), 20, 60, 'south');
  await writeLong(path.join(dir, 'small_c.csv'), 15, 40, 'east');
  writeFileSync(path.join(dir, 'factors_d.csv'), 'date,swell_factor\n2005-01-31,0.01\n2005-02-28,0.02\n2005-03-31,-0.01\n');
}, 60_000);
afterAll(() => {
  done();
  cleanTempDirs();
});

describe('two writers on one database', () => {
  it('a CLI import, a second CLI import and the app import service at once: every import lands, whole', async () => {
    const db = await seedDatabase(dir, 'both.db');
    const before = databaseState(db);
    const app = new Store(db);
    const project = new StoreProject(app);
    try {
      const big = runCliAsync(['import', 'prices', path.join(dir, 'big_a.csv'), '--db', db, '--json']);
      const series = runCliAsync(['import', 'series', path.join(dir, 'factors_d.csv'), '--db', db, '--kind', 'factor', '--json']);
      // the app's service writes while the children start, write and commit
      const reports = [];
      for (const f of ['small_b.csv', 'small_c.csv']) {
        await new Promise((r) => setTimeout(r, 400));
        reports.push(await project.importFile(path.join(dir, f), 'prices', {}, { onProgress: () => {}, signal: new AbortController().signal }));
      }
      const [a, d] = await Promise.all([big, series]);
      expect(a.status, a.stderr).toBe(0);
      expect(d.status, d.stderr).toBe(0);
      expect(reports.map((r) => r.rows)).toEqual([20 * 60, 15 * 40]);
      console.log(`[robustness] concurrency: CLI import ${(a.ms / 1000).toFixed(1)} s and CLI series ${(d.ms / 1000).toFixed(1)} s alongside two app imports; all landed`);
    } finally {
      app.close();
    }
    const after = databaseState(db);
    expect(after.integrity).toBe('ok');
    expect(after.rows.observation).toBe(before.rows.observation + ROWS_BIG + 20 * 60 + 15 * 40);
    expect(after.rows.series_observation).toBe(before.rows.series_observation + 3);
    expect(logCount(db, 'big_a.csv')).toEqual({ n: 1, rows: ROWS_BIG });
    expect(logCount(db, 'small_b.csv')).toEqual({ n: 1, rows: 1200 });
    expect(logCount(db, 'small_c.csv')).toEqual({ n: 1, rows: 600 });
    expect(logCount(db, 'factors_d.csv')).toEqual({ n: 1, rows: 3 });
  }, 120_000);

  it('a write lock held for 1.5 s (shorter than the 5 s busy timeout): both waiting CLI imports land after it', async () => {
    const db = await seedDatabase(dir, 'wait.db');
    const before = databaseState(db);
    const lock = holdWriteLock(db);
    const t0 = performance.now();
    const b = runCliAsync(['import', 'prices', path.join(dir, 'small_b.csv'), '--db', db, '--json']);
    const c = runCliAsync(['import', 'prices', path.join(dir, 'small_c.csv'), '--db', db, '--json']);
    await new Promise((r) => setTimeout(r, 1500));
    lock.release();
    const released = performance.now() - t0;
    const [rb, rc] = await Promise.all([b, c]);
    expect(rb.status, rb.stderr).toBe(0);
    expect(rc.status, rc.stderr).toBe(0);
    // they waited: neither could have finished before the lock went
    expect(Math.min(rb.ms, rc.ms)).toBeGreaterThanOrEqual(released - 50);
    const after = databaseState(db);
    expect(after.integrity).toBe('ok');
    expect(after.rows.observation).toBe(before.rows.observation + 1200 + 600);
    expect(after.rows.asset).toBe(before.rows.asset + 20 + 15); // the holder's rolled-back row is not there
    console.log(`[robustness] concurrency: lock held ${(released / 1000).toFixed(1)} s; two CLI imports waited and finished in ${(rb.ms / 1000).toFixed(1)} s and ${(rc.ms / 1000).toFixed(1)} s`);
  }, 60_000);

  it('a write lock held beyond the busy timeout: the CLI says the database is locked and what to do; nothing changes', async () => {
    const db = await seedDatabase(dir, 'locked.db');
    const before = databaseState(db);
    const lock = holdWriteLock(db);
    let r;
    try {
      r = await runCliAsync(['import', 'prices', path.join(dir, 'small_b.csv'), '--db', db]);
    } finally {
      lock.release();
    }
    expect(r.status, r.stderr).toBe(5);
    expect(r.stderr).toContain(`deflator: database ${db} is locked: another import or program is writing to it and did not release its write lock within 5000 ms`);
    expect(r.stderr).toMatch(/\n {2}-> wait for the other import \(or the app\) to finish, then run this again; nothing was stored/);
    expect(r.ms).toBeGreaterThan(4900); // it did wait the busy timeout
    expect(databaseState(db).digest).toBe(before.digest);
  }, 60_000);

  it('the same through the bridge: importFile answers BUSY with the lock named, not INTERNAL', async () => {
    const db = await seedDatabase(dir, 'bridge.db');
    const before = databaseState(db);
    const store = new Store(db, { busyTimeout: 300 });
    const project = new StoreProject(store);
    const core = composeApp({ version: 't', project: () => project, importer: () => project, engine: fakeEngine(), files: new ImportFilePolicy({ roots: [dir], incomingDir: path.join(dir, 'incoming') }) });
    const lock = holdWriteLock(db);
    let env;
    try {
      env = await core.dispatcher.dispatch('importFile', { source: { path: path.join(dir, 'small_c.csv') }, kind: 'prices' });
    } finally {
      lock.release();
    }
    expect(env).toMatchObject({ ok: false, error: { code: 'BUSY' } });
    if (!env.ok) {
      expect(env.error.message).toContain(`database ${db} is locked`);
      expect(env.error.message).toContain('within 300 ms');
      expect(env.error.hint).toContain('wait for the other import');
    }
    // and once the lock is gone the same call goes through
    const again = await core.dispatcher.dispatch('importFile', { source: { path: path.join(dir, 'small_c.csv') }, kind: 'prices' });
    expect(again.ok).toBe(true);
    store.close();
    const after = databaseState(db);
    expect(after.integrity).toBe('ok');
    expect(after.rows.observation).toBe(before.rows.observation + 600);
  }, 60_000);
});

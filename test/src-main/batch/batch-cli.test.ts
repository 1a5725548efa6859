/**
 * Batch work through the command line, in separate processes as a cluster runs it:
 * a 28-task grid (7 factor subsets x 2 stages x 2 back-test windows) run as one shard and
 * as three shards side by side, one of them killed mid-way and started again. The merged
 * records are the same bit for bit, and every task's fit and back-test are those of
 * `deflator fit` / `deflator backtest --no-record` of its spec. Merge refuses a missing
 * task, a task computed from other data and a changed result; plan refuses a grid above
 * the task limit without --max-tasks.
 */
import { parse } from 'csv-parse/sync';
import { spawn, spawnSync } from 'node:child_process';
import { cpSync, existsSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { parseExact, stringifyExact } from '../../../shared/records/exact-json.js';
import type { BatchResult } from '../../../shared/results.js';
import { parseFitSpec } from '../../../shared/spec.js';
import { loadPanel } from '../../../src-main/data/panel.js';
import { importSeries } from '../../../src-main/import/index.js';
import { getRun } from '../../../src-main/runs/runs.js';
import { Store } from '../../../src-main/store/store.js';
import { createPool, type DeflatorPool } from '../../../src-main/workers/pool.js';
import { readResultFile, splitResult, type ResultFile } from '../../../src-main/batch/folder.js';
import { makeProject, type Project } from '../runs/helpers.js';

const ROOT = path.resolve(import.meta.dirname, '../../..');
const CLI = path.join(ROOT, 'dist/cli.js');
const GRID = path.join(ROOT, 'sample-data/specs/grid-factor-search.json');
const cli = (args: string[]) => {
  const r = spawnSync(process.execPath, [CLI, ...args], { encoding: 'utf8' });
  return { code: r.status ?? -1, out: r.stdout, err: r.stderr };
};
const ok = (args: string[]) => {
  const r = cli(args);
  if (r.code !== 0) throw new Error(`deflator ${args.join(' ')} exited ${r.code}: ${r.err}`);
  return r;
};
const resultFile = (dir: string, task: number) => path.join(dir, 'results', `${String(task).padStart(6, '0')}.json`);
const readResult = (dir: string, task: number): ResultFile => readResultFile(resultFile(dir, task));
const doneTasks = (dir: string, of: number[]) => of.filter((t) => existsSync(path.join(dir, 'results', `${String(t).padStart(6, '0')}.json`)));

const TASKS = 28;
let p: Project;
let other: Project;
let one: string; // the grid run as one shard
let three: string; // the grid run as three shards
const runs: Record<string, number> = {};
let killedAfter = 0;

beforeAll(async () => {
  p = await makeProject();
  p.store.close();
  one = path.join(p.dir, 'one');
  three = path.join(p.dir, 'three');
  ok(['batch', 'plan', GRID, '--db', p.dbPath, '--out', one]);
  ok(['batch', 'plan', GRID, '--db', p.dbPath, '--out', three, '--max-tasks', String(TASKS)]);

  // one shard, one process
  ok(['batch', 'run', one, '--shard', '0/1', '--threads', '1']);

  // three shards side by side; shard 1/3 is killed once it has written two results, then started again
  const share1 = Array.from({ length: TASKS }, (_, i) => i).filter((i) => i % 3 === 1);
  const start = (shard: string, threads: number) => spawn(process.execPath, [CLI, 'batch', 'run', three, '--shard', shard, '--threads', String(threads), '--json'], { stdio: ['ignore', 'pipe', 'pipe'] });
  const ended = (c: ReturnType<typeof spawn>) => new Promise<number | null>((resolve) => c.on('exit', (code) => resolve(code)));
  const s0 = start('0/3', 2);
  const s2 = start('2/3', 1);
  const victim = start('1/3', 1);
  // listen for the ends now: a shard may be done before the kill
  const s0Ended = ended(s0);
  const s2Ended = ended(s2);
  const victimEnded = ended(victim);
  await new Promise<void>((resolve, reject) => {
    const timer = setInterval(() => {
      const n = doneTasks(three, share1).length;
      if (n >= 2) {
        victim.kill('SIGKILL');
        clearInterval(timer);
        resolve();
      }
    }, 5);
    victim.on('exit', () => {
      clearInterval(timer);
      reject(new Error('shard 1/3 ended before it could be killed'));
    });
  });
  await victimEnded;
  killedAfter = doneTasks(three, share1).length;
  expect(await s0Ended).toBe(0);
  expect(await s2Ended).toBe(0);
}, 300_000);

afterAll(() => {
  for (const x of [p, other]) if (x) rmSync(x.dir, { recursive: true, force: true });
});

describe('deflator batch: 28 tasks, one shard against three shards with a kill', () => {
  it('the killed shard stopped part-way; status shows what remains; started again it resumes', () => {
    const share1 = 10 - 1; // tasks 1, 4, ..., 25
    expect(killedAfter).toBeGreaterThanOrEqual(2);
    expect(killedAfter).toBeLessThan(share1);
    const st = JSON.parse(ok(['batch', 'status', three, '--json']).out) as { done: number; remaining: number; failed: unknown[] };
    expect(st.done).toBe(TASKS - (share1 - killedAfter));
    expect(st.remaining).toBe(share1 - killedAfter);
    expect(cli(['batch', 'merge', three, '--db', p.dbPath]).code).toBe(1);
    const again = JSON.parse(ok(['batch', 'run', three, '--shard', '1/3', '--threads', '1', '--json']).out) as { skipped: number; done: number; failed: number };
    expect(again).toMatchObject({ skipped: killedAfter, done: share1 - killedAfter, failed: 0 });
    const text = ok(['batch', 'status', three]).out;
    expect(text).toMatch(/done {7}28\n {2}failed {5}0\n {2}remaining {2}0/);
    expect(text).toContain('Every task is done');
  });

  it('merge records both; the records are the same bit for bit, and so is every result file', () => {
    const a = ok(['batch', 'merge', one, '--db', p.dbPath]);
    const b = ok(['batch', 'merge', three, '--db', p.dbPath, '--rank', 'oos', '--top', '5']);
    runs.one = Number(/Recorded as run (\d+)/.exec(a.out)![1]);
    runs.three = Number(/Recorded as run (\d+)/.exec(b.out)![1]);
    expect(a.out).toContain('Top 20 of 28 by HJ distance (smallest first)');
    expect(b.out).toContain('Top 5 of 28 by out-of-sample RMSE (smallest first)');
    expect(a.out).toContain('not investment advice');
    const store = new Store(p.dbPath, { mustExist: true });
    try {
      const ra = getRun(store, runs.one);
      const rb = getRun(store, runs.three);
      expect(ra.kind).toBe('batch');
      expect(stringifyExact(rb.result)).toBe(stringifyExact(ra.result));
      expect(stringifyExact(rb.spec)).toBe(stringifyExact(ra.spec));
      expect(rb.panels).toEqual(ra.panels);
      const r = ra.result as BatchResult;
      expect(r.models.map((m) => m.task)).toEqual(Array.from({ length: TASKS }, (_, i) => i));
      expect(r.failures).toEqual([]);
    } finally {
      store.close();
    }
    for (let t = 0; t < TASKS; t++) {
      const x = readResult(one, t);
      const y = readResult(three, t);
      expect(y.sha256).toBe(x.sha256);
      expect(stringifyExact(y.outcome)).toBe(stringifyExact(x.outcome));
      expect(y.computed.shard).toBe(`${t % 3}/3`);
    }
  });

  it('every task equals its own fit and back-test computed as `deflator fit` / `backtest` compute them', async () => {
    const store = new Store(p.dbPath, { mustExist: true });
    const single: DeflatorPool = createPool({ threads: 1 });
    const pair: DeflatorPool = createPool({ threads: 2 });
    try {
      for (let t = 0; t < TASKS; t++) {
        const spec = parseFitSpec(JSON.parse(readFileSync(path.join(three, 'tasks', `${String(t).padStart(6, '0')}.json`), 'utf8')));
        const panel = loadPanel(store, spec);
        const out = readResult(three, t).outcome;
        // fit: one worker thread (the fit command); back-test: the command's default pool splits windows over threads
        expect(stringifyExact(out.fit)).toBe(stringifyExact(await single.runTask('fit', { spec, panel })));
        expect(stringifyExact(out.backtest)).toBe(stringifyExact(await pair.runTask('backtest', { spec, panel })));
      }
    } finally {
      await single.close();
      await pair.close();
      store.close();
    }
  }, 180_000);

  it('… and the commands themselves print the same numbers for tasks of each stage and window', () => {
    for (const t of [0, 13, 27]) {
      const file = path.join(one, 'tasks', `${String(t).padStart(6, '0')}.json`);
      const out = readResult(one, t).outcome;
      const fit = JSON.parse(ok(['fit', file, '--db', p.dbPath, '--no-record', '--json']).out) as Record<string, unknown>;
      const bt = JSON.parse(ok(['backtest', file, '--db', p.dbPath, '--no-record', '--json']).out) as Record<string, unknown>;
      delete fit.caution;
      delete bt.caution;
      // the commands print plain JSON (shortest round-trip decimals), the result files exact JSON
      expect(fit).toEqual(JSON.parse(JSON.stringify(out.fit)));
      expect(bt).toEqual(JSON.parse(JSON.stringify(out.backtest)));
    }
  }, 120_000);

  it('the recorded batch replays bit for bit, shows its ranking and exports every task', () => {
    const r = cli(['replay', String(runs.one), '--db', p.dbPath]);
    expect(r.out).toMatch(/numbers: all \d+ stored numbers reproduced bit for bit\nREPLAY OK/);
    expect(r.code).toBe(0);
    const show = ok(['show', String(runs.three), '--db', p.dbPath]).out;
    expect(show).toContain('Batch "factor search": 28 tasks');
    expect(show).toContain('by HJ distance (smallest first)');
    const out = path.join(p.dir, 'export') + path.sep;
    ok(['export', String(runs.one), '--db', p.dbPath, '--format', 'csv', '--out', out]);
    // Reader: csv-parse (the file holds the table alone: header row and data).
    const csv = parse(readFileSync(path.join(out, 'tasks.csv'), 'utf8')) as string[][];
    expect(csv).toHaveLength(1 + TASKS);
    const head = csv[0];
    expect(head.slice(0, 5)).toEqual(['Task', 'Settings', 'model.factors', 'estimator.stage', 'backtest.window']);
    const store = new Store(p.dbPath, { mustExist: true });
    const stored = getRun(store, runs.one).result as BatchResult;
    store.close();
    const hj = head.indexOf('HJ distance (per month)');
    expect(hj).toBeGreaterThan(0);
    const warned = head.indexOf('Warnings');
    expect(warned).toBeGreaterThan(0);
    for (const cells of csv.slice(1)) {
      const m = stored.models[Number(cells[0])];
      expect(Number(cells[hj])).toBe(m.hj!.distance);
      // Each task's warning codes in its row; the batch's own list counts the tasks per code.
      expect(cells[warned]).toBe([...new Set((m.warnings ?? []).map((w) => w.code))].join('; '));
    }
    for (const w of stored.warnings) expect(show).toContain(w.code);
    expect(ok(['runs', '--db', p.dbPath, '--kind', 'batch']).out).toMatch(/batch .* factor search/);
  }, 120_000);
});

describe('deflator batch refusals', () => {
  it('plan refuses a grid above the limit without --max-tasks, and a limit below the grid', () => {
    const big = path.join(p.dir, 'big.json');
    const g = JSON.parse(readFileSync(GRID, 'utf8')) as { grid: Record<string, unknown> };
    writeFileSync(big, JSON.stringify({ ...g, grid: { ...g.grid, 'estimator.lags': Array.from({ length: 360 }, (_, i) => i) } }));
    const r = cli(['batch', 'plan', big, '--db', p.dbPath, '--out', path.join(p.dir, 'big')]);
    expect(r.code).toBe(1);
    expect(r.err).toContain('the grid expands to 10,080 tasks (model.factors 7 x estimator.stage 2 x estimator.lags 360 x backtest.window 2), more than the limit of 10,000');
    expect(r.err).toContain('pass --max-tasks 10080 to plan it anyway');
    expect(existsSync(path.join(p.dir, 'big'))).toBe(false);
    const low = cli(['batch', 'plan', GRID, '--db', p.dbPath, '--out', path.join(p.dir, 'low'), '--max-tasks', '27']);
    expect(low.code).toBe(1);
    expect(low.err).toContain('28 tasks');
    expect(existsSync(path.join(p.dir, 'low'))).toBe(false);
    // the same grid into the same folder again is the same plan: nothing to do
    expect(ok(['batch', 'plan', GRID, '--db', p.dbPath, '--out', one]).out).toContain('already holds this plan');
  });

  it('merge refuses a missing task', () => {
    const dir = path.join(p.dir, 'missing');
    cpSync(one, dir, { recursive: true });
    rmSync(path.join(dir, 'results', '000005.json'));
    const r = cli(['batch', 'merge', dir, '--db', p.dbPath]);
    expect(r.code).toBe(1);
    expect(r.err).toMatch(/cannot be merged:\ntask 5 \(factors=ember stage=first window=120\): not run yet\n {2}-> run the missing tasks/);
    expect(JSON.parse(ok(['batch', 'status', dir, '--json']).out)).toMatchObject({ done: 27, remaining: 1 });
  });

  it('merge refuses a task computed from other data, and a database whose data differ', async () => {
    other = await makeProject();
    // the same market with one value of the harbor factor changed, imported as a corrected file
    const factors = other.file('factors.csv');
    const lines = readFileSync(factors, 'utf8').split('\n');
    lines[100] = lines[100].replace(/,(-?\d+\.\d+),/, (_m, v: string) => `,${(Number(v) + 0.001).toFixed(6)},`);
    writeFileSync(factors, lines.join('\n'));
    await importSeries(other.store, factors, { kind: 'factor', replace: true });
    other.store.close();
    const theirs = path.join(other.dir, 'plan');
    ok(['batch', 'plan', GRID, '--db', other.dbPath, '--out', theirs]);
    ok(['batch', 'run', theirs, '--shard', '6/28']);
    const dir = path.join(p.dir, 'foreign');
    cpSync(one, dir, { recursive: true });
    cpSync(path.join(theirs, 'results', '000006.json'), path.join(dir, 'results', '000006.json'));
    const r = cli(['batch', 'merge', dir, '--db', p.dbPath]);
    expect(r.code).toBe(1);
    expect(r.err).toMatch(/task 6 \(factors=ember stage=second window=60\): computed from other data \(data fingerprint [0-9a-f]{12}, the plan's is [0-9a-f]{12}\)/);
    const s = JSON.parse(ok(['batch', 'status', dir, '--json']).out) as { rejected: { task: number }[] };
    expect(s.rejected.map((x) => x.task)).toEqual([6]);
    // the whole, valid folder merged into the other database: the panels differ
    const wrongDb = cli(['batch', 'merge', one, '--db', other.dbPath]);
    expect(wrongDb.code).toBe(1);
    expect(wrongDb.err).toMatch(/the data in .* differ from the data the batch was planned on: task 0 \(factors=harbor stage=first window=60\)/);
  }, 120_000);

  it('merge refuses a result whose numbers were changed', () => {
    const dir = path.join(p.dir, 'tampered');
    cpSync(one, dir, { recursive: true });
    const { header, body } = splitResult(readFileSync(resultFile(dir, 11), 'utf8'));
    const outcome = parseExact<ResultFile['outcome']>(body);
    outcome.fit!.hj!.distance *= 1 + 2 ** -40;
    writeFileSync(resultFile(dir, 11), `${JSON.stringify(header)}\n${stringifyExact(outcome)}\n`);
    const r = cli(['batch', 'merge', dir, '--db', p.dbPath]);
    expect(r.code).toBe(1);
    expect(r.err).toMatch(/task 11 \(factors=ledger stage=second window=120\): its numbers were changed after it was written/);
  });

  it('a result file cut short (a machine that crashed while writing) is refused by merge and computed again by run', () => {
    const dir = path.join(p.dir, 'cut');
    cpSync(one, dir, { recursive: true });
    const text = readFileSync(resultFile(dir, 20), 'utf8');
    writeFileSync(resultFile(dir, 20), text.slice(0, Math.floor(text.length / 2)));
    expect(cli(['batch', 'merge', dir, '--db', p.dbPath]).err).toMatch(/task 20 \([^)]*\): its numbers were changed after it was written/);
    expect(JSON.parse(ok(['batch', 'status', dir, '--json']).out)).toMatchObject({ done: 27, remaining: 1, rejected: [{ task: 20 }] });
    const r = JSON.parse(ok(['batch', 'run', dir, '--shard', '2/3', '--json']).out) as { done: number; skipped: number; replaced: { task: number }[] };
    expect(r).toMatchObject({ done: 1, skipped: 8, replaced: [{ task: 20 }] });
    // the outcome line is the same bytes as the one-shard run's
    expect(splitResult(readFileSync(resultFile(dir, 20), 'utf8')).body).toBe(splitResult(readFileSync(resultFile(one, 20), 'utf8')).body);
    expect(ok(['batch', 'merge', dir, '--db', p.dbPath, '--no-record']).out).toContain('28 fitted');
  });

  it('a task that cannot run is noted as failed with its reason, and retried by the next run', () => {
    const dir = path.join(p.dir, 'failing');
    cpSync(one, dir, { recursive: true });
    const spec = path.join(dir, 'tasks', '000003.json');
    const kept = readFileSync(spec, 'utf8');
    rmSync(path.join(dir, 'results', '000003.json'));
    writeFileSync(spec, kept.replace('"stage": "second"', '"stage": "iterated"'));
    const r = cli(['batch', 'run', dir, '--shard', '0/1']);
    expect(r.code).toBe(5);
    expect(r.out).toContain('1 FAILED');
    const st = ok(['batch', 'status', dir]).out;
    expect(st).toMatch(/failed {5}1/);
    expect(st).toMatch(/task 3 \(factors=harbor stage=second window=120\), shard 0\/1 on .*: CONFLICT: task 3: tasks\/000003\.json was changed after planning/);
    writeFileSync(spec, kept);
    ok(['batch', 'run', dir]);
    expect(readdirSync(path.join(dir, 'failed')).filter((n) => n.endsWith('.json'))).toEqual([]);
    expect(readResult(dir, 3).sha256).toBe(readResult(one, 3).sha256);
  });
});

/**
 * Batch benchmark: a grid of 1,000 linear-model fits on the demo data (5 factor sets x 2
 * stages x 2 first-stage weights x 2 centerings x 5 lag choices x 5 sample starts), run
 * through the command line as a cluster would run it: one process (`batch run --shard
 * 0/1 --threads 1`), two processes side by side (`--shard 0/2` and `1/2`), and one process
 * with a pool of two worker threads; then `batch merge` (check 1,000 result files, build
 * and record the run). Rounds are interleaved; each figure is the whole wall time of the
 * processes (result files written), with their CPU seconds beside it where GNU time is
 * installed. The merged records of the three ways must be the same bits (checked).
 * Timings on a shared machine are noisy: the rounds and the load average show the spread.
 *
 *   npm run bench -- batch          (or: npx tsx bench/batch.ts [--rounds 2])
 */
import { spawn, spawnSync } from 'node:child_process';
import { availableParallelism, loadavg } from 'node:os';
import { existsSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { stringifyExact } from '../shared/records/exact-json.js';
import { getRun } from '../src-main/runs/runs.js';
import { Store } from '../src-main/store/store.js';

const ROOT = path.resolve(import.meta.dirname, '..');
const CLI = path.join(ROOT, 'dist/cli.js');
const args = process.argv.slice(2);
const ROUNDS = Number(args[args.indexOf('--rounds') + 1] ?? 2) || 2;

const GRID = {
  label: 'bench: 1,000 linear-model fits',
  base: { frequency: 'monthly', returns: 'excess', riskfree: 'bill_yield', model: { kind: 'linear' }, estimator: { method: 'gmm' } },
  grid: {
    start: ['2001-01-31', '2003-01-31', '2005-01-31', '2007-01-31', '2009-01-31'],
    'model.factors': [['harbor'], ['ember'], ['ledger'], ['harbor', 'ember'], ['harbor', 'ember', 'ledger']],
    'estimator.stage': ['first', 'second'],
    'estimator.weight': ['identity', 'hj'],
    'estimator.lags': [0, 2, 4, 6, 'auto'],
    'estimator.centered': [true, false],
  },
};
const TASKS = 5 * 5 * 2 * 2 * 5 * 2;

/** GNU time, where installed, reports each process's CPU seconds (user + system): a figure the machine's load disturbs less than the wall time. */
const TIME = existsSync('/usr/bin/time') ? '/usr/bin/time' : null;
const timed = (argv: string[]): [string, string[]] => (TIME ? [TIME, ['-f', 'cpu %U %S', process.execPath, CLI, ...argv]] : [process.execPath, [CLI, ...argv]]);
const cpuOf = (stderr: string): number => {
  const m = /cpu ([\d.]+) ([\d.]+)\s*$/.exec(stderr);
  return m ? Number(m[1]) + Number(m[2]) : NaN;
};

interface Timing {
  wall: number;
  cpu: number;
}

function cli(argv: string[]): { out: string } & Timing {
  const t0 = performance.now();
  const [cmd, a] = timed(argv);
  const r = spawnSync(cmd, a, { encoding: 'utf8' });
  if (r.status !== 0) throw new Error(`deflator ${argv.join(' ')} exited ${r.status}: ${r.stderr}`);
  return { out: r.stdout, wall: (performance.now() - t0) / 1000, cpu: cpuOf(r.stderr) };
}

/** Starts the commands at once and waits for all: the wall time from the first start to the last end, and their CPU seconds together. */
async function together(commands: string[][]): Promise<Timing> {
  const t0 = performance.now();
  const cpus = await Promise.all(
    commands.map(
      (argv) =>
        new Promise<number>((resolve, reject) => {
          const [cmd, a] = timed(argv);
          const c = spawn(cmd, a, { stdio: ['ignore', 'ignore', 'pipe'] });
          let err = '';
          c.stderr.on('data', (d: Buffer) => (err += d.toString()));
          c.on('exit', (code) => (code === 0 ? resolve(cpuOf(err)) : reject(new Error(`deflator ${argv.join(' ')} exited ${code}: ${err}`))));
        }),
    ),
  );
  return { wall: (performance.now() - t0) / 1000, cpu: cpus.reduce((x, y) => x + y, 0) };
}

const dir = mkdtempSync(path.join(tmpdir(), 'deflator-bench-batch-'));
try {
  const db = path.join(dir, 'demo.db');
  cli(['demo', '--db', db]);
  const gridFile = path.join(dir, 'grid.json');
  writeFileSync(gridFile, JSON.stringify(GRID));

  const ways = [
    { name: '1 process, 1 thread', run: (d: string) => together([['batch', 'run', d, '--shard', '0/1', '--threads', '1']]) },
    { name: '2 processes, 1 thread each', run: (d: string) => together([0, 1].map((i) => ['batch', 'run', d, '--shard', `${i}/2`, '--threads', '1'])) },
    { name: '1 process, 2 worker threads', run: (d: string) => together([['batch', 'run', d, '--shard', '0/1', '--threads', '2']]) },
  ];
  const timings: Timing[][] = ways.map(() => []);
  const merges: Timing[] = [];
  let plan: Timing = { wall: 0, cpu: 0 };
  const records: string[] = [];
  const load: number[] = [];
  for (let round = 0; round < ROUNDS; round++) {
    for (let w = 0; w < ways.length; w++) {
      const folder = path.join(dir, `r${round}-w${w}`);
      const p = cli(['batch', 'plan', gridFile, '--db', db, '--out', folder]);
      if (p.wall > plan.wall) plan = p;
      load.push(loadavg()[0]);
      timings[w].push(await ways[w].run(folder));
      const m = cli(['batch', 'merge', folder, '--db', db, '--top', '3']);
      merges.push(m);
      const id = Number(/Recorded as run (\d+)/.exec(m.out)![1]);
      const store = new Store(db, { mustExist: true });
      records.push(stringifyExact(getRun(store, id).result));
      store.close();
      rmSync(folder, { recursive: true, force: true });
    }
  }
  const same = records.every((r) => r === records[0]);
  const cpu = (x: number) => (Number.isFinite(x) ? `${((1000 * x) / TASKS).toFixed(1)} ms CPU/task` : 'CPU n/a');
  const fmt = (xs: Timing[]) => xs.map((t) => `${(TASKS / t.wall).toFixed(0).padStart(4)} tasks/s (${t.wall.toFixed(1).padStart(5)} s; ${cpu(t.cpu)})`).join('   ');
  const out: string[] = [];
  out.push(`deflator batch: ${TASKS.toLocaleString('en-US')} linear-model fits on the demo data (N = 30, T = 192..288, K = 1..3), ${availableParallelism()} cores, ${ROUNDS} interleaved rounds`);
  out.push(`  load average (1 min) at the start of each run: ${load.map((l) => l.toFixed(1)).join(', ')}`);
  out.push(`  ${'way'.padEnd(30)}  ${Array.from({ length: ROUNDS }, (_, r) => `round ${r + 1}`.padEnd(48)).join('   ')}`);
  ways.forEach((w, i) => out.push(`  ${w.name.padEnd(30)}  ${fmt(timings[i])}`));
  out.push(`  ${'merge (check, build, record)'.padEnd(30)}  ${merges.map((m) => `${m.wall.toFixed(2)} s (CPU ${Number.isFinite(m.cpu) ? m.cpu.toFixed(2) : 'n/a'} s)`).join(', ')}`);
  out.push(`  plan (expand, ${GRID.grid.start.length * GRID.grid['model.factors'].length} panels, write the folder): ${plan.wall.toFixed(2)} s at most (CPU ${Number.isFinite(plan.cpu) ? plan.cpu.toFixed(2) : 'n/a'} s)`);
  out.push(`  merged records of every way and round: ${same ? 'the same bits' : 'DIFFERENT'}`);
  process.stdout.write(`${out.join('\n')}\n`);
  if (!same) process.exitCode = 1;
} finally {
  rmSync(dir, { recursive: true, force: true });
}

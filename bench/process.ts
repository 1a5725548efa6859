/**
 * Whole processes on invented, seeded scenarios (bench/lib/scenario.ts; the CSV files are
 * imported into a project database once and kept under the system's temporary folder):
 *
 *   back-test  N = 25 assets, K = 3 factors, T = 600 months, rolling 120-month windows moved
 *              by 1 (480 windows), second stage, L = 3, one held-out month: `deflator
 *              backtest` (the default threads: a pool sized to the work; and --threads 1, 2)
 *              against bench/numpy/backtest_csv.py (pandas reads the same CSV files, numpy
 *              fits every window afresh);
 *   daily fit  N = 100, K = 3, T = 10,000 weekdays (1,000,100 price rows), second stage,
 *              L = 5: `deflator fit` against bench/numpy/daily_fit.py (pandas + numpy).
 *
 * Interleaved rounds, wall and CPU seconds with min-max. Goal: deflator faster than numpy.
 *   npm run bench -- process          options: --rounds N (default 5), --only backtest|daily
 */
import { mkdirSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { blasLine, haveNumpy, havePandas, interleave, machineLine, numpyCommand, out, ROOT, sec, table, timeProcess, type Timed } from './lib/anchor.js';
import { dailyScenario } from './lib/scenario.js';

const arg = (name: string): string | undefined => {
  const i = process.argv.indexOf(name);
  return i > 0 ? process.argv[i + 1] : undefined;
};
const rounds = Number(arg('--rounds') ?? 5);
const only = arg('--only');
const cache = path.join(tmpdir(), 'deflator-bench-scenarios');
const bin = path.join(ROOT, 'bin/deflator.js');
const anchors = haveNumpy() && havePandas();

out(`Whole processes: ${rounds} interleaved rounds after a warm-up; ${machineLine()}`);
out(anchors ? `anchor: ${blasLine()}; CSV files read with pandas` : 'anchor: numpy/pandas scripts skipped (python3-numpy and python3-pandas not installed)');

function report(title: string, res: Map<string, { wall: { median: number; min: number; max: number; n: number }; cpu: { median: number; min: number; max: number; n: number } }>, ours: string, theirs: string): void {
  out('');
  out(title);
  table(['command', 'wall, median (min-max)', 'CPU, median (min-max)'], [...res].map(([label, r]) => [label, sec(r.wall), sec(r.cpu)]));
  const a = res.get(ours);
  const b = res.get(theirs);
  if (a && b) out(`${ours} / numpy: ${(a.wall.median / b.wall.median).toFixed(2)}x wall, ${(a.cpu.median / b.cpu.median).toFixed(2)}x CPU (goal: below 1x)`);
}

if (!only || only === 'backtest') {
  const dir = path.join(cache, 'monthly-25x600');
  mkdirSync(dir, { recursive: true });
  const s = await dailyScenario(dir, 25, 600, 3, 20260615, true);
  const spec = path.join(dir, 'backtest.json');
  writeFileSync(
    spec,
    JSON.stringify({
      label: 'bench back-test',
      frequency: 'monthly',
      returns: 'excess',
      riskfree: 'overnight',
      model: { kind: 'linear', factors: s.factorNames },
      estimator: { method: 'gmm', stage: 'second', lags: 3 },
      backtest: { window: 120, step: 1, horizon: 1 },
    }),
  );
  const np = numpyCommand(path.join(ROOT, 'bench/numpy/backtest_csv.py'), [dir, '120', '1', '3']);
  const run = (threads?: string, exact = false) => (): Timed => timeProcess(process.execPath, [bin, 'backtest', spec, '--db', s.db, '--no-record', ...(threads ? ['--threads', threads] : [])], exact ? { env: { ...process.env, DEFLATOR_THREADS_EXACT: '1' } } : {});
  const res = interleave(
    [
      { label: 'deflator backtest (default threads)', run: run() },
      { label: 'deflator backtest --threads 1', run: run('1') },
      { label: 'deflator backtest, pool of 2 threads (DEFLATOR_THREADS_EXACT=1 --threads 2)', run: run('2', true) },
      ...(anchors ? [{ label: 'numpy script (bench/numpy/backtest_csv.py)', run: () => timeProcess(np.cmd, np.args) }] : []),
    ],
    rounds,
  );
  report('Back-test, whole process: N = 25, T = 600 months, 480 rolling windows of 120, second stage', res, 'deflator backtest (default threads)', 'numpy script (bench/numpy/backtest_csv.py)');
}

if (!only || only === 'daily') {
  const dir = path.join(cache, 'daily-100x10000');
  mkdirSync(dir, { recursive: true });
  const s = await dailyScenario(dir, 100, 10000);
  const spec = path.join(dir, 'fit.json');
  writeFileSync(
    spec,
    JSON.stringify({ label: 'bench daily fit', frequency: 'daily', returns: 'excess', riskfree: 'overnight', model: { kind: 'linear', factors: s.factorNames }, estimator: { method: 'gmm', stage: 'second', lags: 5 } }),
  );
  const np = numpyCommand(path.join(ROOT, 'bench/numpy/daily_fit.py'), [dir, '5']);
  const res = interleave(
    [
      { label: 'deflator fit (records the run)', run: () => timeProcess(process.execPath, [bin, 'fit', spec, '--db', s.db]) },
      { label: 'deflator fit --no-record', run: () => timeProcess(process.execPath, [bin, 'fit', spec, '--db', s.db, '--no-record']) },
      ...(anchors ? [{ label: 'numpy script (bench/numpy/daily_fit.py)', run: () => timeProcess(np.cmd, np.args) }] : []),
    ],
    rounds,
  );
  report('Daily fit, whole process: N = 100, T = 10,000 weekdays (1,000,100 price rows), second stage, L = 5', res, 'deflator fit (records the run)', 'numpy script (bench/numpy/daily_fit.py)');
}

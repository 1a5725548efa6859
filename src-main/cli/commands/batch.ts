/**
 * `deflator batch plan|run|merge|status`: a grid of fit (and back-test) specs as batch
 * work. Plan expands the grid and writes a folder with every task's spec and a snapshot
 * of the returns panels; shards run their share from that folder alone (on this machine,
 * in background processes, or as the tasks of a Slurm or Kubernetes job array); merge
 * checks every result and records the batch as one run. docs/cluster.md has the
 * scheduler scripts.
 */
import { readFileSync } from 'node:fs';
import type { Command } from 'commander';
import { DeflatorError } from '../../../shared/errors.js';
import { groupedInteger } from '../../../shared/text.js';
import { DEFAULT_MAX_TASKS, HARD_MAX_TASKS } from '../../../shared/batch/grid.js';
import { RANK_KEYS, isRankBy, rankBatch, type RankBy } from '../../../shared/batch/rank.js';
import { DEFAULT_TOP, batchText } from '../../../shared/batch/text.js';
import { CAUTION } from '../../../shared/results.js';
import { batchStatus, mergeBatch, statusText } from '../../batch/merge.js';
import { planBatch } from '../../batch/plan.js';
import { parseShard, runShard, type ShardProgress } from '../../batch/shard.js';
import { Store } from '../../store/store.js';
import { defaultThreads, inProcess, type ClosableCompute } from '../../services/compute.js';
import { progressBar } from '../progress.js';
import { positiveInt } from './backtest.js';
import { out, err, stderrStream } from '../terminal.js';

function readGrid(file: string): unknown {
  let text: string;
  try {
    text = readFileSync(file, 'utf8');
  } catch (e) {
    const code = (e as { code?: string }).code;
    throw new DeflatorError('NOT_FOUND', `grid file ${file}: ${code === 'ENOENT' ? 'no such file' : (e as Error).message}`, 'pass the path of a JSON grid spec (sample-data/specs/grid-*.json)');
  }
  try {
    return JSON.parse(text);
  } catch (e) {
    throw new DeflatorError('SPEC_INVALID', `grid file ${file} is not valid JSON: ${(e as Error).message}`, 'fix the JSON syntax (a missing comma or quote)');
  }
}

function rankOption(v: string | undefined): RankBy {
  if (v === undefined) return 'hj';
  if (!isRankBy(v)) throw new DeflatorError('INPUT_INVALID', `--rank: "${v}" is not one of ${RANK_KEYS.join(', ')}`, 'rank by hj (HJ distance), p (p-value of the pricing-error test) or oos (out-of-sample RMSE)');
  return v;
}

function topOption(v: string | undefined): number {
  if (v === undefined) return DEFAULT_TOP;
  const n = Number(v);
  if (!Number.isInteger(n) || n < 0) throw new DeflatorError('INPUT_INVALID', `--top: "${v}" is not a whole number >= 0`, 'pass --top N (0 shows every task)');
  return n;
}

/**
 * Progress of a shard on stderr: a bar on a terminal; elsewhere (a scheduler's log file)
 * one line at most every 10 seconds and at the end.
 */
function shardProgress(label: string): { update: (p: ShardProgress) => void; finish: () => void } {
  if (stderrStream().isTTY) {
    const bar = progressBar(`shard ${label}`);
    return { update: (p) => bar.update(p.done, p.todo, `shard ${label}`), finish: () => bar.finish() };
  }
  const started = Date.now();
  let last = started;
  return {
    update(p) {
      const now = Date.now();
      if (p.done < p.todo && now - last < 10_000) return;
      last = now;
      const rate = p.done / Math.max(1e-9, (now - started) / 1000);
      err(`deflator batch: shard ${label}: ${p.done}/${p.todo} tasks${p.failed ? ` (${p.failed} failed)` : ''}, ${rate.toFixed(1)} tasks/s${p.last ? `, last task ${p.last.task}` : ''}\n`);
    },
    finish() {},
  };
}

export function register(program: Command): void {
  const batch = program
    .command('batch')
    .description('run a grid of fits and back-tests as batch work: plan a folder, run shards (here or on a cluster), merge into one recorded run');

  batch
    .command('plan')
    .description('expand a grid spec into numbered tasks and write a folder shards can run from without the database')
    .argument('<grid>', 'JSON grid spec: {"base": {fit spec}, "grid": {"model.factors": {...}, "estimator.stage": [...], ...}}')
    .requiredOption('--db <path>', 'project database the returns panels are built from')
    .requiredOption('--out <dir>', 'new (or empty) folder for the plan, task specs, panel snapshot and results')
    .option('--max-tasks <n>', `refuse grids larger than this (default ${groupedInteger(DEFAULT_MAX_TASKS)}; at most ${groupedInteger(HARD_MAX_TASKS)})`)
    .option('--json', 'print the plan summary as JSON')
    .action((gridFile: string, o: { db: string; out: string; maxTasks?: string; json?: boolean }) => {
      const maxTasks = positiveInt('--max-tasks', o.maxTasks) ?? DEFAULT_MAX_TASKS;
      if (maxTasks > HARD_MAX_TASKS) throw new DeflatorError('INPUT_INVALID', `--max-tasks ${maxTasks} is above the ceiling of ${groupedInteger(HARD_MAX_TASKS)}`, 'split the grid into several grids');
      const json = readGrid(gridFile);
      const store = new Store(o.db, { mustExist: true, access: 'read' });
      const bar = progressBar('panels');
      try {
        const r = planBatch(store, json, o.out, { maxTasks, onProgress: (d, t, stage) => bar.update(d, t, stage) });
        bar.finish();
        if (o.json) {
          out(`${JSON.stringify(r, null, 2)}\n`);
          return;
        }
        const lines = [
          r.unchanged ? `${o.out} already holds this plan (${r.plan.slice(0, 12)}); nothing written.` : `Planned ${r.tasks} tasks in ${o.out} (plan ${r.plan.slice(0, 12)})`,
          `  grid       ${r.axes.map((a) => `${a.axis} (${a.count})`).join(' x ')}`,
          `  tasks      ${r.tasks} fits${r.backtests ? `, ${r.backtests} of them with a back-test` : ''}`,
          `  data       ${r.dataSha256} (${r.panels} returns panel${r.panels === 1 ? '' : 's'}, snapshot ${(r.snapshotBytes / 1024).toFixed(0)} KiB)`,
          '',
          'Next:',
          `  deflator batch run ${o.out}                      # all tasks here, or one shard of N per process or machine:`,
          `  deflator batch run ${o.out} --shard 0/4          # ... --shard 3/4 (docs/cluster.md: Slurm, Kubernetes, GNU parallel)`,
          `  deflator batch status ${o.out}`,
          `  deflator batch merge ${o.out} --db ${o.db}`,
        ];
        out(`${lines.join('\n')}\n`);
      } finally {
        bar.finish();
        store.close();
      }
    });

  batch
    .command('run')
    .description('run the tasks of one shard (task i belongs to shard i mod N); skips tasks already done, so a stopped shard resumes')
    .argument('<dir>', 'batch folder written by `deflator batch plan`')
    .option('--shard <i/n>', 'this shard I of N shards, 0 <= I < N (default 0/1: every task)')
    .option('--threads <n>', `worker threads, each running one task at a time (default: the ${defaultThreads()} cores available; the numbers do not depend on it)`)
    .option('--json', 'print the shard report as JSON')
    .action(async (dir: string, o: { shard?: string; threads?: string; json?: boolean }) => {
      const shard = parseShard(o.shard);
      const threads = positiveInt('--threads', o.threads) ?? defaultThreads();
      const label = `${shard.index}/${shard.count}`;
      const progress = shardProgress(label);
      // one thread: the tasks in this process (no worker start-up); more: a pool of that many workers, one task each
      const compute: ClosableCompute = threads === 1 ? inProcess() : (await import('../../workers/pool.js')).createPool({ threads });
      const r = await runShard(dir, compute, shard, { onProgress: (p) => progress.update(p) }).finally(async () => {
        progress.finish();
        await compute.close();
      });
      if (o.json) out(`${JSON.stringify(r, null, 2)}\n`);
      else {
        const rate = r.done / Math.max(1e-9, r.seconds);
        out(
          `Shard ${r.shard}: ${r.share} tasks; ${r.skipped} already done, ${r.done - r.failed} run now${r.failed ? `, ${r.failed} FAILED` : ''} in ${r.seconds.toFixed(1)} s${r.done ? ` (${rate.toFixed(1)} tasks/s, ${threads} thread${threads === 1 ? '' : 's'})` : ''}\n`,
        );
        if (r.replaced.length) out(`Replaced ${r.replaced.length} result file(s) that did not check out, e.g. task ${r.replaced[0].task}: ${r.replaced[0].reason}\n`);
        for (const f of r.failures.slice(0, 10)) out(`  task ${f.task}: ${f.reason.split('\n')[0]}\n`);
        if (r.failures.length) out(`Run the same command again to retry the failed tasks; \`deflator batch status ${dir}\` lists them.\n`);
      }
      if (r.failed) process.exitCode = 5;
    });

  batch
    .command('status')
    .description('tasks done, failed (with reasons) and remaining')
    .argument('<dir>', 'batch folder')
    .option('--json', 'print the status as JSON (every failure and rejected file)')
    .action((dir: string, o: { json?: boolean }) => {
      const s = batchStatus(dir);
      out(o.json ? `${JSON.stringify(s, null, 2)}\n` : statusText(s));
    });

  batch
    .command('merge')
    .description('check every task is done and from the planned data, record the batch as one run, print the ranking')
    .argument('<dir>', 'batch folder')
    .requiredOption('--db <path>', 'the project database the batch was planned from (the run is recorded there)')
    .option('--rank <by>', `ranking of the table: ${RANK_KEYS.join(' | ')} (HJ distance, p-value of the pricing-error test, out-of-sample RMSE)`, 'hj')
    .option('--top <n>', `rows of the table (default ${DEFAULT_TOP}; 0: all)`)
    .option('--json', 'print the merged result as JSON with the ranking (every number in full precision)')
    .option('--no-record', 'check and rank only; do not record a run')
    .action((dir: string, o: { db: string; rank?: string; top?: string; json?: boolean; record: boolean }) => {
      const rankBy = rankOption(o.rank);
      const top = topOption(o.top);
      const store = new Store(o.db, { mustExist: true, access: o.record ? 'write' : 'read' });
      const bar = progressBar('results');
      try {
        const { result, record } = mergeBatch(store, dir, { record: o.record, onProgress: (d, t) => bar.update(d, t, 'checking results') });
        bar.finish();
        if (o.json) {
          const ranking = Object.fromEntries(RANK_KEYS.map((k) => [k, rankBatch(result, k).map((m) => m.task)]));
          out(`${JSON.stringify({ ...result, ranking, ...(record ? { run: record.id } : {}), caution: CAUTION }, null, 2)}\n`);
        } else {
          out(batchText(result, { rankBy, top }));
          if (record) out(`Recorded as run ${record.id}: deflator show ${record.id} --db ${o.db}; deflator export ${record.id} --db ${o.db} --format csv --out DIR/\n`);
        }
      } finally {
        bar.finish();
        store.close();
      }
    });
}

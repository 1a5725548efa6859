/**
 * `deflator replay RUN --db DB`: recomputes a recorded run from the data now in the store
 * and its stored spec (in this process or a pool sized to the work), and reports whether every number matches the
 * stored result bit for bit (and which differ: path, stored, recomputed), whether the
 * panel fingerprint matches, and whether the run is stale. Exit code 0 only when all of
 * that holds; 4 otherwise.
 */
import type { Command } from 'commander';
import { DeflatorError } from '../../../shared/errors.js';
import { toExactJson } from '../../../shared/records/exact-json.js';
import { formatReplay, poolRecompute, replayRun } from '../../runs/replay.js';
import { parseRunId } from '../../runs/runs.js';
import { defaultThreads, threadsFlag, withCompute, withStore } from '../compute.js';
import { out } from '../terminal.js';

export const REPLAY_MISMATCH_EXIT = 4;

interface ReplayOptions {
  db: string;
  json?: boolean;
  threads?: string;
  limit: string;
}

export function register(program: Command): void {
  program
    .command('replay')
    .description('recompute a recorded run and check that every number matches the stored result bit for bit (exit 4 if not, or if its data changed)')
    .argument('<run>', 'run id (see `deflator runs`)')
    .requiredOption('--db <path>', 'project database')
    .option('--threads <n>', `worker threads at most (default: the ${defaultThreads()} cores; the numbers do not depend on it)`)
    .option('--limit <n>', 'list at most this many differing values', '50')
    .option('--json', 'print the replay report as JSON')
    .action(async (run: string, opts: ReplayOptions) => {
      const id = parseRunId(run);
      const limit = Number(opts.limit);
      if (!Number.isInteger(limit) || limit < 1) throw new DeflatorError('INPUT_INVALID', `--limit ${opts.limit}: expected a whole number of at least 1`, 'e.g. --limit 50');
      const threads = threadsFlag(opts.threads);
      const report = await withStore(opts.db, (store) =>
        withCompute(threads, async (compute) => {
          const r = await replayRun(store, id, poolRecompute(compute), { limit });
          // the threads the recomputation actually used (in this process: 1)
          r.usedThreads = compute.threads;
          return r;
        }),
        'read',
      );
      out(opts.json ? `${JSON.stringify(toExactJson(report), null, 2)}\n` : `${formatReplay(report)}\n`);
      if (!report.ok) process.exitCode = REPLAY_MISMATCH_EXIT;
    });
}

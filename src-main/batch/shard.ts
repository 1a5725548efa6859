/**
 * `deflator batch run DIR --shard I/N`: runs the tasks of shard I of N from the batch
 * folder alone (no database), in a worker pool, and writes each task's result file
 * atomically as soon as it is done.
 *
 * Which tasks: task i belongs to shard i mod N. Neighbouring tasks differ in the
 * fastest-varying axes (stage, window, ...), which differ most in cost; dealing them out
 * in turn gives every shard a like mix, and a shard's share is known from I and N alone.
 *
 * A task whose result file exists and checks out is skipped, so a killed shard, started
 * again, goes on where it stopped (a task cut off mid-way left only a temporary file, and
 * runs again); a result file that does not check out (cut short by a crash of the
 * machine, from another plan, changed) is computed again and replaced.
 * A task that could not be computed at all (a worker died, memory ran out) is noted in
 * failed/ with the reason and the shard goes on; the next run retries it. Estimation
 * errors (a singular design, no convergence) are outcomes, not failures: they are in the
 * result, as `deflator fit` would report them, and are not retried.
 */
import { hostname } from 'node:os';
import { readFileSync, rmSync } from 'node:fs';
import path from 'node:path';
import { DeflatorError, describeError, isDeflatorError } from '../../shared/errors.js';
import { readSnapshot } from '../../shared/batch/snapshot.js';
import { stringifyExact } from '../../shared/records/exact-json.js';
import { parseFitSpec, type FitSpec } from '../../shared/spec.js';
import { VERSION } from '../version.js';
import type { Compute } from '../services/compute.js';
import { PARTIAL, checkResult, failedPath, partialFiles, readManifest, readSnapshotFiles, removeFailed, resultNames, resultPath, resultText, sha256, taskName, writeAtomic, type Manifest, type ManifestTask } from './folder.js';

/** Shard I of N (0 <= I < N). */
export interface Shard {
  index: number;
  count: number;
}

/** "I/N" -> shard; refuses anything else, naming the flag. */
export function parseShard(text: string | undefined): Shard {
  if (text === undefined) return { index: 0, count: 1 };
  const m = /^(\d{1,7})\/(\d{1,7})$/.exec(text.trim());
  const bad = () => new DeflatorError('INPUT_INVALID', `--shard: "${text}" is not I/N with 0 <= I < N`, 'pass e.g. --shard 0/4 for the first of four shards (a Slurm array: --shard $SLURM_ARRAY_TASK_ID/$SLURM_ARRAY_TASK_COUNT)');
  if (!m) throw bad();
  const index = Number(m[1]);
  const count = Number(m[2]);
  if (count < 1 || index >= count) throw bad();
  return { index, count };
}

export const shardTasks = (m: Pick<Manifest, 'tasks'>, s: Shard): ManifestTask[] => m.tasks.filter((t) => t.task % s.count === s.index);


export interface ShardProgress {
  /** Tasks of this shard finished in this run (results written or failures noted). */
  done: number;
  /** Tasks this run had to do (the shard's share less those already done). */
  todo: number;
  /** Tasks of the shard that were already done when it started. */
  skipped: number;
  failed: number;
  last?: { task: number; label: string; ok: boolean; seconds: number };
}

export interface ShardReport extends ShardProgress {
  shard: string;
  share: number;
  seconds: number;
  failures: { task: number; reason: string }[];
  /** Result files found that did not check out (cut short, another plan, changed), computed again. */
  replaced: { task: number; reason: string }[];
}

function loadSpec(dir: string, t: ManifestTask): FitSpec {
  let json: unknown;
  try {
    json = JSON.parse(readFileSync(path.join(dir, t.file), 'utf8'));
  } catch (e) {
    throw new DeflatorError('NOT_FOUND', `task ${t.task}: ${t.file} cannot be read (${(e as Error).message})`, 'copy the batch folder again from where it was planned');
  }
  const spec = parseFitSpec(json, `task ${t.task}`);
  if (sha256(stringifyExact(spec)) !== t.spec) {
    throw new DeflatorError('CONFLICT', `task ${t.task}: ${t.file} was changed after planning (its digest differs from the manifest's)`, 'plan the batch again rather than editing task files');
  }
  return spec;
}

export async function runShard(dir: string, pool: Compute, shard: Shard, opts: { onProgress?: (p: ShardProgress) => void; signal?: AbortSignal } = {}): Promise<ShardReport> {
  const started = performance.now();
  const m = readManifest(dir);
  const share = shardTasks(m, shard);
  const names = resultNames(dir);
  // a result found is done if it checks out (plan, data, spec, digest); one cut short by a
  // crash of the machine, or from another plan, is computed again and replaced
  const replaced: { task: number; reason: string }[] = [];
  const todo = share.filter((t) => {
    if (!names.has(t.task)) return true;
    const c = checkResult(dir, m, t);
    if (c.ok) return false;
    replaced.push({ task: t.task, reason: c.reason });
    return true;
  });
  const label = `${shard.index}/${shard.count}`;
  // temporary files of this shard's unfinished tasks, left by a killed run
  const mine = new Set(todo.map((t) => taskName(t.task)));
  for (const f of partialFiles(dir)) if (mine.has(f.slice(0, 6)) && f.slice(6, 11) === '.json') rmSync(path.join(dir, PARTIAL, f), { force: true });
  const progress: ShardProgress = { done: 0, todo: todo.length, skipped: share.length - todo.length, failed: 0 };
  const report = (): ShardReport => ({ ...progress, shard: label, share: share.length, seconds: (performance.now() - started) / 1000, failures, replaced });
  const failures: { task: number; reason: string }[] = [];
  if (todo.length === 0) return report();
  const snap = readSnapshotFiles(dir, m);
  const panels = readSnapshot(snap.index, snap.columns);
  const host = hostname();
  let next = 0;
  const worker = async (): Promise<void> => {
    while (next < todo.length) {
      if (opts.signal?.aborted) throw new DeflatorError('CANCELLED', 'the shard was stopped', 'run it again: finished tasks are kept');
      const t = todo[next++];
      const t0 = performance.now();
      let ok = true;
      try {
        const spec = loadSpec(dir, t);
        const panel = panels.get(t.panel);
        if (!panel) throw new DeflatorError('CONFLICT', `task ${t.task}: its panel ${t.panel.slice(0, 12)} is not in the snapshot`, 'plan the batch again');
        const outcome = await pool.runTask('batchTask', { spec, panel, backtest: t.backtest }, opts.signal ? { signal: opts.signal } : {});
        const seconds = (performance.now() - t0) / 1000;
        writeAtomic(resultPath(dir, t.task), resultText(m, t, outcome, { shard: label, threads: pool.threads ?? 1, host, pid: process.pid, seconds, at: new Date().toISOString(), deflator: VERSION }), path.join(dir, PARTIAL));
        removeFailed(dir, t.task);
      } catch (e) {
        if (opts.signal?.aborted || (isDeflatorError(e) && e.code === 'CANCELLED')) throw e;
        ok = false;
        const reason = isDeflatorError(e) ? `${e.code}: ${describeError(e)}` : describeError(e);
        failures.push({ task: t.task, reason });
        progress.failed++;
        writeAtomic(failedPath(dir, t.task), `${JSON.stringify({ task: t.task, reason, shard: label, host, at: new Date().toISOString() })}\n`, path.join(dir, 'failed', '.partial'));
      }
      progress.done++;
      progress.last = { task: t.task, label: t.label, ok, seconds: (performance.now() - t0) / 1000 };
      opts.onProgress?.({ ...progress });
    }
  };
  // twice as many tasks in flight as threads, so no thread waits while a result is written
  await Promise.all(Array.from({ length: Math.max(1, Math.min(todo.length, 2 * (pool.threads ?? 1))) }, worker));
  return report();
}

/**
 * `deflator batch status` and `deflator batch merge`.
 *
 * Status reads the folder alone: tasks done (with those whose model could not be fitted),
 * failed attempts with their reasons, remaining, and result files that do not belong.
 *
 * Merge refuses unless every task has a result that belongs to the plan (its plan id,
 * spec digest, panel and data fingerprints) with numbers matching its digest, and the
 * database still gives every planned panel bit for bit (so the recorded run replays).
 * It then builds one batch result (shared/batch/assemble.ts), in task order, and
 * records it as one run.
 */
import { BatchAssembler } from '../../shared/batch/assemble.js';
import { expandGrid, type GridSpec } from '../../shared/batch/grid.js';
import { DeflatorError } from '../../shared/errors.js';
import type { BatchResult } from '../../shared/results.js';
import type { RunRecord } from '../../shared/records/run-record.js';
import { recordRun } from '../runs/runs.js';
import type { Store } from '../store/store.js';
import { checkResult, partialFiles, readFailed, readManifest, resultNames, type Manifest } from './folder.js';
import { taskPanels } from './plan.js';

export interface BatchStatus {
  dir: string;
  label: string;
  plan: string;
  tasks: number;
  done: number;
  /** Done, but the model could not be fitted (the reason is the result, as `deflator fit` gives it). */
  notFitted: { task: number; label: string; error: string }[];
  /** Attempts that could not complete (retried by the next `batch run`). */
  failed: { task: number; label: string; reason: string; shard: string; host: string; at: string }[];
  /** Result files that do not belong to this plan or were changed. */
  rejected: { task: number; reason: string }[];
  remaining: number;
  /** Temporary files of interrupted writes (safe to delete when no shard runs). */
  partial: number;
}

const SHOWN = 10;

export function batchStatus(dir: string): BatchStatus {
  const m = readManifest(dir);
  const names = resultNames(dir);
  const failedNotes = readFailed(dir);
  const st: BatchStatus = { dir, label: m.label, plan: m.plan, tasks: m.tasks.length, done: 0, notFitted: [], failed: [], rejected: [], remaining: 0, partial: partialFiles(dir).length };
  for (const t of m.tasks) {
    if (names.has(t.task)) {
      const c = checkResult(dir, m, t);
      if (c.ok) {
        st.done++;
        if (!c.file.fitted) st.notFitted.push({ task: t.task, label: t.label, error: c.file.error ?? 'not fitted' });
        continue;
      }
      if (!c.missing) {
        st.rejected.push({ task: t.task, reason: c.reason });
        st.remaining++;
        continue;
      }
    }
    const f = failedNotes.get(t.task);
    if (f) st.failed.push({ task: t.task, label: t.label, reason: f.reason, shard: f.shard, host: f.host, at: f.at });
    else st.remaining++;
  }
  return st;
}

export function statusText(s: BatchStatus): string {
  const lines = [`Batch "${s.label}" (plan ${s.plan.slice(0, 12)}): ${s.tasks} tasks`];
  lines.push(`  done       ${s.done}${s.notFitted.length ? ` (${s.notFitted.length} whose model could not be fitted)` : ''}`);
  lines.push(`  failed     ${s.failed.length}${s.failed.length ? ' (the next `deflator batch run` retries them)' : ''}`);
  lines.push(`  remaining  ${s.remaining}`);
  if (s.rejected.length) lines.push(`  rejected   ${s.rejected.length} result file(s) that do not belong to this plan (counted as remaining)`);
  const list = <T>(title: string, xs: T[], line: (x: T) => string) => {
    if (!xs.length) return;
    lines.push('', title);
    for (const x of xs.slice(0, SHOWN)) lines.push(`  ${line(x)}`);
    if (xs.length > SHOWN) lines.push(`  ... and ${xs.length - SHOWN} more (--json lists all)`);
  };
  list('Failed', s.failed, (f) => `task ${f.task} (${f.label}), shard ${f.shard} on ${f.host}: ${f.reason.split('\n')[0]}`);
  list('Rejected results', s.rejected, (r) => `task ${r.task}: ${r.reason}`);
  list('Not fitted (part of the results)', s.notFitted, (n) => `task ${n.task} (${n.label}): ${n.error.split('\n')[0]}`);
  if (s.partial) lines.push('', `${s.partial} temporary file(s) in results/.partial from interrupted writes: safe to delete when no shard is running`);
  if (s.done === s.tasks) lines.push('', 'Every task is done: deflator batch merge DIR --db DB records the batch.');
  return `${lines.join('\n')}\n`;
}

/** Builds the batch result from the folder; refuses a missing, foreign or changed result. */
export function assembleFolder(dir: string, m: Manifest = readManifest(dir), onProgress?: (done: number, total: number) => void): BatchResult {
  const problems: string[] = [];
  let missing = 0;
  const asm = new BatchAssembler(m.label, m.tasks.length, m.axes);
  for (const t of m.tasks) {
    const c = checkResult(dir, m, t, { outcome: problems.length === 0 });
    if (!c.ok) {
      if (c.missing) missing++;
      if (problems.length < SHOWN) problems.push(`task ${t.task} (${t.label}): ${c.reason}`);
      continue;
    }
    if (problems.length === 0 && c.file.outcome) asm.add(t, c.file.outcome, c.file.sha256);
    onProgress?.(t.task + 1, m.tasks.length);
  }
  if (problems.length) {
    const bad = problems.length - Math.min(problems.length, missing);
    throw new DeflatorError(
      missing && !bad ? 'DATA_MISSING' : 'CONFLICT',
      `the batch in ${dir} cannot be merged:\n${problems.join('\n')}`,
      missing ? 'run the missing tasks (`deflator batch status DIR` lists them; `deflator batch run DIR --shard I/N`), then merge again' : 'delete the result files named above and run their shards again (`deflator batch run DIR`); they are recomputed from the plan',
    );
  }
  return asm.finish({ sha256: m.data.sha256, panels: m.data.panels.length });
}

/**
 * Checks that the database gives every panel of the plan bit for bit (the data the
 * results came from); returns the panels, which the run record fingerprints.
 */
export function checkDatabase(store: Store, m: Manifest): ReturnType<typeof taskPanels>['panels'] {
  const tasks = expandGrid(m.grid as GridSpec, { maxTasks: m.tasks.length });
  const { byTask, panels } = taskPanels(store, tasks);
  const wrong = m.tasks.filter((t, i) => byTask[i]?.sha256 !== t.panel);
  if (tasks.length !== m.tasks.length || wrong.length) {
    const t = wrong[0] ?? m.tasks[0];
    const now = byTask[t.task]?.sha256 ?? '(none)';
    throw new DeflatorError(
      'CONFLICT',
      `the data in ${store.path} differ from the data the batch was planned on: task ${t.task} (${t.label}) reads a returns panel with fingerprint ${now.slice(0, 12)}, planned ${t.panel.slice(0, 12)}${wrong.length > 1 ? ` (${wrong.length} tasks differ)` : ''}`,
      'merge into the database the batch was planned from (its name is in manifest.json, data.database), or plan the batch again on this one',
    );
  }
  return panels;
}

export interface MergeReport {
  result: BatchResult;
  record?: RunRecord;
}

/** Checks everything, then records the batch as one run (unless `record` is false). */
export function mergeBatch(store: Store, dir: string, opts: { record?: boolean; threads?: number; onProgress?: (done: number, total: number) => void } = {}): MergeReport {
  const m = readManifest(dir);
  const panels = checkDatabase(store, m);
  const result = assembleFolder(dir, m, opts.onProgress);
  if (opts.record === false) return { result };
  const record = recordRun(store, { spec: m.grid, result, panel: [...panels.values()], ...(opts.threads ? { threads: opts.threads } : {}) });
  return { result, record };
}

/**
 * A whole batch computed in one place from the project database: what replay does with
 * a recorded batch run. The tasks run side by side in the worker pool; their rows go
 * into the result in task order, so the result is the one a merge of any sharding gives.
 */
import { BatchAssembler, outcomeText, type TaskOutcome } from '../../shared/batch/assemble.js';
import { expandGrid, gridAxes, gridLabel, parseGridSpec } from '../../shared/batch/grid.js';
import { dataFingerprint } from '../../shared/batch/snapshot.js';
import type { ReturnsPanel } from '../../shared/panel.js';
import type { BatchResult } from '../../shared/results.js';
import type { FitSpec } from '../../shared/spec.js';
import type { Store } from '../store/store.js';
import { sha256 } from './folder.js';
import { taskPanels } from './plan.js';

export type BatchTaskRunner = (spec: FitSpec, panel: ReturnsPanel, backtest: boolean) => Promise<TaskOutcome>;

export interface RecomputedBatch {
  result: BatchResult;
  /** The distinct panels, in first-use order (for the fingerprint check). */
  panels: ReturnsPanel[];
}

/** Expands the recorded grid, builds its panels from the store and recomputes every task. */
export async function recomputeBatch(store: Store, gridJson: unknown, run: BatchTaskRunner, opts: { concurrency?: number; onProgress?: (done: number, total: number) => void } = {}): Promise<RecomputedBatch> {
  const grid = parseGridSpec(gridJson);
  const tasks = expandGrid(grid, { maxTasks: Number.MAX_SAFE_INTEGER });
  const { byTask, panels } = taskPanels(store, tasks);
  const asm = new BatchAssembler(gridLabel(grid), tasks.length, gridAxes(grid));
  const pending = new Map<number, { outcome: TaskOutcome; digest: string }>();
  let flushed = 0;
  let next = 0;
  let done = 0;
  const flush = () => {
    while (pending.has(flushed)) {
      const p = pending.get(flushed)!;
      pending.delete(flushed);
      asm.add(tasks[flushed], p.outcome, p.digest);
      flushed++;
    }
  };
  const worker = async (): Promise<void> => {
    while (next < tasks.length) {
      const i = next++;
      const t = tasks[i];
      const outcome = await run(t.spec, panels.get(byTask[i].sha256)!, t.spec.backtest !== undefined);
      pending.set(i, { outcome, digest: sha256(outcomeText(outcome)) });
      flush();
      opts.onProgress?.(++done, tasks.length);
    }
  };
  await Promise.all(Array.from({ length: Math.max(1, Math.min(tasks.length, opts.concurrency ?? 2)) }, worker));
  const result = asm.finish({ sha256: dataFingerprint(byTask.map((f) => f.sha256)), panels: panels.size });
  return { result, panels: [...panels.values()] };
}

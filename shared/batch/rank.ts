/**
 * Rankings of a merged batch: its fitted tasks ordered by one comparison column, in the
 * direction the one best rule gives that column (shared/present/best.ts ORDERS):
 * smallest HJ distance, largest p-value of the pricing-error test (Hansen's J at the
 * second stage), smallest out-of-sample RMSE. Tasks without the value (no HJ distance,
 * no back-test, a failed back-test) come after the others; ties keep task order.
 */
import { DeflatorError } from '../errors.js';
import { ORDERS, bestPerColumn } from '../present/best.js';
import type { BatchResult, BatchRow, CompareResult } from '../results.js';

/** The orders a batch can be ranked in: option value -> comparison column. */
export const RANK_BY = {
  hj: { column: 'hj.distance', title: 'HJ distance (smallest first)' },
  p: { column: 'test.p', title: 'p-value of the pricing-error test (largest first)' },
  oos: { column: 'oos.rmse', title: 'out-of-sample RMSE (smallest first)' },
} as const;
export type RankBy = keyof typeof RANK_BY;
export const RANK_KEYS = Object.keys(RANK_BY) as RankBy[];

export function isRankBy(x: unknown): x is RankBy {
  return typeof x === 'string' && Object.prototype.hasOwnProperty.call(RANK_BY, x);
}

/** The fitted tasks in rank order (a new array; the result is not changed). */
export function rankBatch(r: Pick<BatchResult, 'models'>, by: RankBy): BatchRow[] {
  const col = ORDERS.find((c) => c.key === RANK_BY[by].column);
  if (!col) throw new DeflatorError('INPUT_INVALID', `no comparison column ${RANK_BY[by].column}`, 'rank by hj, p or oos');
  const value = (row: BatchRow): number | undefined => {
    if (by === 'oos' && row.error) return undefined;
    const v = col.value(row);
    return v !== undefined && Number.isFinite(v) ? v : undefined;
  };
  const keyed = r.models.map((row) => ({ row, v: value(row) }));
  keyed.sort((a, b) => {
    if (a.v === undefined || b.v === undefined) return a.v === undefined && b.v === undefined ? a.row.task - b.row.task : a.v === undefined ? 1 : -1;
    if (a.v !== b.v) return col.better === 'min' ? a.v - b.v : b.v - a.v;
    return a.row.task - b.row.task;
  });
  return keyed.map((k) => k.row);
}

/** How many fitted tasks have a value to be ranked on. */
export function rankedCount(r: Pick<BatchResult, 'models'>, by: RankBy): number {
  const col = ORDERS.find((c) => c.key === RANK_BY[by].column)!;
  return r.models.filter((m) => !(by === 'oos' && m.error) && Number.isFinite(col.value(m) ?? NaN)).length;
}

/**
 * The top rows of a ranking as a comparison (models in rank order, labels prefixed with
 * the task number), so every comparison table and chart can show a batch.
 */
export function batchAsComparison(r: BatchResult, rows: BatchRow[]): CompareResult {
  const models = rows.map((m) => ({ ...m, label: `#${m.task} ${m.label}` }));
  // Marks among the rows shown, by the one rule (shared/present/best.ts).
  const warnings = models.flatMap((m) => (m.warnings ?? []).map((w) => ({ ...w, model: m.label })));
  return { kind: 'compare', sample: r.sample, models, hjTests: [], best: bestPerColumn(models), warnings };
}

/** What the app's comparison screen shows of a merged batch: the top of one ranking. */
export interface BatchRanking {
  run: number;
  label: string;
  tasks: number;
  fitted: number;
  axes: BatchResult['axes'];
  data: BatchResult['data'];
  rankBy: RankBy;
  /** e.g. "HJ distance (smallest first)". */
  title: string;
  /** Fitted tasks that have a value in this ranking (the others come last). */
  ranked: number;
  /** The shown rows: rank, task, settings (the numbers are in `comparison`, same order). */
  rows: { rank: number; task: number; label: string; settings: BatchResult['models'][number]['settings'] }[];
  /** The shown rows as a comparison (labels `#task settings`), for the comparison table and chart. */
  comparison: CompareResult;
  /** Tasks whose model could not be fitted: how many, and the first few with their reasons. */
  notFitted: number;
  failures: BatchResult['failures'];
}

export const RANKING_TOP_MAX = 1000;

export function batchRanking(run: number, r: BatchResult, by: RankBy, top: number): BatchRanking {
  const rows = rankBatch(r, by).slice(0, Math.max(1, Math.min(top, RANKING_TOP_MAX)));
  return {
    run,
    label: r.label,
    tasks: r.tasks,
    fitted: r.models.length,
    axes: r.axes,
    data: r.data,
    rankBy: by,
    title: RANK_BY[by].title,
    ranked: rankedCount(r, by),
    rows: rows.map((m, i) => ({ rank: i + 1, task: m.task, label: m.label, settings: m.settings })),
    comparison: batchAsComparison(r, rows),
    notFitted: r.failures.length,
    failures: r.failures.slice(0, 20),
  };
}

/**
 * The presentation of a merged batch: the top tasks of one ranking as the comparison's
 * tables (rank and task first), what could not be fitted, and, as appendix tables, every
 * task with its settings, measures and ranks, and every task's parameters.
 */
import type { BatchResult } from '../results.js';
import { CAUTION } from '../results.js';
import { RANK_BY, RANK_KEYS, batchAsComparison, rankBatch, rankedCount, type RankBy } from '../batch/rank.js';
import { bestRows } from './best.js';
import { numCol, opt, table, textCol } from './build.js';
import { compareTables, rowEstimator } from './compare.js';
import { noteText } from './fit.js';
import { annualPercent, percent, unitsFor } from './units.js';
import type { CellValue, Presentation, PresentedTable } from './types.js';

export interface BatchOptions {
  rankBy?: RankBy;
  /** Rows of the ranking shown (0: all). */
  top?: number;
}

export const DEFAULT_TOP = 20;

/** A comparison table of ranked batch rows with the rank and task number first (rows in rank order). */
export function withRankColumns(t: PresentedTable, rows: readonly { rank: number; task: number }[]): PresentedTable {
  return table({
    ...t,
    columns: [numCol('rank', 'Rank', 'integer'), numCol('task', 'Task', 'integer'), ...t.columns],
    rows: t.rows.map((row, i) => [rows[i]?.rank ?? i + 1, rows[i]?.task ?? null, ...row]),
    marks: Object.fromEntries(Object.entries(t.marks)),
    warnings: t.warnings,
  });
}

export function presentBatch(r: BatchResult, opts: BatchOptions = {}): Presentation {
  const by = opts.rankBy ?? 'hj';
  const top = opts.top ?? DEFAULT_TOP;
  const ranked = rankBatch(r, by);
  const shown = top > 0 ? ranked.slice(0, top) : ranked;
  const withValue = rankedCount(r, by);
  const u = unitsFor(r.sample.frequency, r.sample.periodsPerYear);
  const ppy = r.sample.periodsPerYear;
  const head = `Top ${shown.length === ranked.length ? `${ranked.length}` : `${shown.length} of ${ranked.length}`} by ${RANK_BY[by].title}`;
  // The ranking's rows as a comparison: the comparison's tables, rank and task first.
  const cmp = compareTables(batchAsComparison(r, shown)).filter((t) => ['models', 'fit', 'out-of-sample'].includes(t.id));
  const ranking = cmp.map((t) => {
    const ranked2 = withRankColumns(t, shown.map((m, i) => ({ rank: i + 1, task: m.task })));
    return {
      ...ranked2,
      id: `ranking-${t.id}`,
      title: `${head}: ${t.title.toLowerCase()}`,
      sheet: `Top ${t.sheet}`.slice(0, 31),
      notes: [...t.notes, ...(t.id === 'models' && withValue < ranked.length ? [`${ranked.length - withValue} fitted tasks have no value for this ranking and come last.`] : []), 'Marks: the best among the rows shown.'],
    };
  });
  const ranks = RANK_KEYS.map((k) => new Map(rankBatch(r, k).map((m, i) => [m.task, i + 1])));
  const has = (k: RankBy, m: BatchResult['models'][number]) => (k === 'hj' ? m.hj !== undefined : k === 'oos' ? m.oos !== undefined && !m.error : Number.isFinite(m.test.p));
  const best = bestRows(r.models);
  const marks = Object.fromEntries(
    Object.entries({ hj: 'hj.distance', hjP: 'hj.p', mape: 'fit.mape', rmse: 'fit.rmse', r2: 'fit.r2', oosRmse: 'oos.rmse', oosRmsePooled: 'oos.rmsePooled', oosR2: 'oos.r2' }).flatMap(([col, rule]) => (best[rule] ? [[col, best[rule]]] : [])),
  );
  const tasks = table({
    id: 'tasks',
    title: `Tasks (${r.models.length} fitted of ${r.tasks})`,
    sheet: 'Tasks',
    columns: [
      numCol('task', 'Task', 'integer'),
      textCol('label', 'Settings'),
      ...r.axes.map((a) => textCol(`axis.${a.axis}`, a.axis)),
      textCol('estimator', 'Estimator'),
      numCol('T', 'T', 'integer'),
      numCol('N', 'N', 'integer'),
      textCol('test', 'Test'),
      numCol('stat', 'Statistic', 'stat'),
      numCol('df', 'df', 'integer'),
      numCol('p', 'p', 'p'),
      numCol('hj', 'HJ distance', 'value', u.perPeriod),
      numCol('hjP', 'HJ p', 'p'),
      numCol('mape', 'MAPE', 'percent', u.pctYear),
      numCol('rmse', 'RMSE', 'percent', u.pctYear),
      numCol('r2', 'R^2 (cross-section)', 'ratio'),
      numCol('oosRmse', 'RMSE out of sample', 'percent', u.pctYear),
      numCol('oosRmsePooled', 'pooled RMSE out of sample', 'percent', u.pctPeriod),
      numCol('oosR2', 'R^2 against zero alpha, out of sample', 'ratio'),
      ...RANK_KEYS.map((k) => numCol(`rank.${k}`, `rank by ${RANK_BY[k].title}`, 'integer')),
      textCol('warnings', 'Warnings', "the codes of the task's warnings (each is explained in the result's warning list)"),
      textCol('sha256', 'Outcome SHA-256'),
    ],
    rows: r.models.map((m) => [
      m.task,
      m.label,
      ...r.axes.map((a) => {
        const v = m.settings.find((s) => s.axis === a.axis)?.value;
        return v === undefined || v === null ? null : String(v);
      }),
      rowEstimator(m),
      m.sample.T,
      m.sample.N,
      m.test.name,
      m.test.stat,
      opt(m.test.df ?? m.test.df1),
      m.test.p,
      m.hj ? m.hj.distance : null,
      m.hj ? m.hj.p : null,
      percent(m.fit.mapeAnnual),
      percent(m.fit.rmseAnnual),
      m.fit.r2,
      m.oos ? annualPercent(m.oos.rmse, ppy) : null,
      m.oos ? percent(m.oos.rmsePooled) : null,
      m.oos ? m.oos.r2 : null,
      ...RANK_KEYS.map((k, j) => (has(k, m) ? (ranks[j].get(m.task) ?? null) : null)),
      m.warnings?.length ? [...new Set(m.warnings.map((w) => w.code))].join('; ') : null,
      m.sha256,
    ] as CellValue[]),
    rowKeys: r.models.map((m) => String(m.task)),
    marks,
    notes: ['Marks: the best among all fitted tasks (docs/methods.md, the best in a column).'],
    role: 'appendix',
  });
  const tables: PresentedTable[] = [...ranking];
  if (r.failures.length)
    tables.push(
      table({
        id: 'not-fitted',
        title: `Tasks whose model could not be fitted (${r.failures.length})`,
        sheet: 'Not fitted',
        columns: [numCol('task', 'Task', 'integer'), textCol('label', 'Settings'), textCol('error', 'Reason'), textCol('sha256', 'Outcome SHA-256')],
        rows: r.failures.map((f) => [f.task, f.label, f.error, f.sha256]),
        rowKeys: r.failures.map((f) => String(f.task)),
      }),
    );
  tables.push(
    tasks,
    table({
      id: 'parameters',
      title: 'Parameter estimates by task',
      sheet: 'Parameters',
      columns: [numCol('task', 'Task', 'integer'), textCol('parameter', 'Parameter'), numCol('estimate', 'Estimate', 'value'), numCol('se', 's.e.', 'value'), numCol('t', 't', 'stat'), numCol('p', 'p', 'p'), numCol('seShanken', 's.e. (Shanken)', 'value')],
      rows: r.models.flatMap((m) => m.params.map((p) => [m.task, p.name, p.estimate, p.se, p.t, p.p, opt(p.seShanken)] as CellValue[])),
      rowKeys: r.models.flatMap((m) => m.params.map((p) => `${m.task}|${p.name}`)),
      role: 'appendix',
    }),
  );
  const s = r.sample;
  return {
    kind: 'batch',
    title: `Batch "${r.label}": ${r.tasks} tasks, ${r.models.length} fitted${r.failures.length ? `, ${r.failures.length} not fitted` : ''}`,
    caution: CAUTION,
    header: [
      { key: 'grid', value: r.axes.map((a) => `${a.axis} (${a.count})`).join(' x ') },
      { key: 'sample', value: `${s.start} to ${s.end}, ${s.frequency} (${s.periodsPerYear} periods per year), T = ${s.T}, N = ${s.N}, ${s.returns} returns${s.notes.some((n) => n.includes('vary by task')) ? '; varies by task' : ''}` },
      { key: 'data', value: `${r.data.sha256} (${r.data.panels} returns panel${r.data.panels === 1 ? '' : 's'})` },
      { key: 'ranked by', value: `${RANK_BY[by].title}; every task is in the tasks table of the CSV and XLSX exports` },
    ],
    tables,
    notes: [...new Set(s.notes.map(noteText))],
    warnings: r.warnings ?? [],
  };
}

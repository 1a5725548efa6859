/**
 * The tables of a result, in one neutral form that every export (CSV, XLSX, LaTeX,
 * HTML) writes. Building them once keeps the exports in step: a cell is a number
 * from the result itself, never a rounded copy.
 */
import type { AnyResult, BacktestResult, BatchResult, CompareResult, CompareRow, FitResult, TestResult } from '../results.js';
import { RANK_BY, RANK_KEYS, rankBatch } from '../batch/rank.js';
import type { NumberFormat } from './numbers.js';

export type CellValue = string | number | boolean | null;

export interface ReportColumn {
  /** Machine name (CSV header, XLSX header). */
  key: string;
  /** Human label (HTML, LaTeX). */
  label: string;
  type: 'text' | 'number' | 'boolean';
  /** Display rounding for numbers (shared/report/numbers.ts). */
  format?: NumberFormat;
}

export interface ReportTable {
  /** File-name-safe id: parameters, pricing-errors, tests, ... */
  id: string;
  title: string;
  columns: ReportColumn[];
  rows: CellValue[][];
}

const text = (key: string, label = key): ReportColumn => ({ key, label, type: 'text' });
const num = (key: string, label: string, format: NumberFormat = 'value'): ReportColumn => ({ key, label, type: 'number', format });
const bool = (key: string, label: string): ReportColumn => ({ key, label, type: 'boolean' });

const opt = <T>(x: T | undefined): T | null => (x === undefined ? null : x);

function testRows(tests: TestResult[]): CellValue[][] {
  return tests.map((t) => [t.name, t.stat, opt(t.df), opt(t.df1), opt(t.df2), t.p, opt(t.note)]);
}

const testColumns: ReportColumn[] = [
  text('test', 'Test'),
  num('stat', 'Statistic', 'stat'),
  num('df', 'df', 'integer'),
  num('df1', 'df1', 'integer'),
  num('df2', 'df2', 'integer'),
  num('p', 'p-value', 'p'),
  text('note', 'Note'),
];

/** The main test, then the further tests, without repeating the main one when `tests` lists it too. */
export function allTests(r: Pick<FitResult, 'test' | 'tests'>): TestResult[] {
  return [r.test, ...r.tests.filter((t) => !(t.name === r.test.name && Object.is(t.stat, r.test.stat) && Object.is(t.p, r.test.p)))];
}

export function fitTables(r: FitResult): ReportTable[] {
  const shanken = r.params.some((p) => p.seShanken !== undefined);
  // With instruments (METHODS 9) each row is one asset scaled by one instrument.
  const inst = r.pricingErrors.some((e) => e.instrument !== undefined);
  const hac = r.pricingErrors.some((e) => e.seHac !== undefined);
  const shankenAlpha = r.pricingErrors.some((e) => e.seShanken !== undefined);
  const paramCols: ReportColumn[] = [
    text('parameter', 'Parameter'),
    num('estimate', 'Estimate'),
    num('se', 's.e.'),
    num('t', 't', 'stat'),
    num('p', 'p-value', 'p'),
    ...(shanken ? [num('seShanken', 's.e. (Shanken)')] : []),
    text('note', 'Note'),
  ];
  const tables: ReportTable[] = [
    {
      id: 'parameters',
      title: 'Parameter estimates',
      columns: paramCols,
      rows: r.params.map((p) => [p.name, p.estimate, p.se, p.t, p.p, ...(shanken ? [opt(p.seShanken)] : []), opt(p.note)]),
    },
    {
      id: 'pricing-errors',
      title: 'Pricing errors',
      columns: [
        text('asset', 'Asset'),
        ...(inst ? [text('instrument', 'Instrument')] : []),
        num('alpha', 'alpha (per period)'),
        num('se', 's.e.'),
        num('t', 't', 'stat'),
        num('alphaAnnual', 'alpha (annual)'),
        num('seAnnual', 's.e. (annual)'),
        num('meanReturn', 'Mean return'),
        num('predicted', 'Predicted'),
        ...(hac ? [num('seHac', 's.e. (HAC)')] : []),
        ...(shankenAlpha ? [num('seShanken', 's.e. (Shanken)')] : []),
      ],
      rows: r.pricingErrors.map((e) => [
        e.asset,
        ...(inst ? [e.instrument ?? 'const'] : []),
        e.alpha,
        e.se,
        e.t,
        e.alphaAnnual,
        e.seAnnual,
        e.meanReturn,
        e.predicted,
        ...(hac ? [opt(e.seHac)] : []),
        ...(shankenAlpha ? [opt(e.seShanken)] : []),
      ]),
    },
    { id: 'tests', title: 'Tests', columns: testColumns, rows: testRows(allTests(r)) },
  ];
  const fitRows: CellValue[][] = [
    ['MAPE (per period)', r.fit.mape, null],
    ['RMSE (per period)', r.fit.rmse, null],
    ['R2 (cross-section)', r.fit.r2, null],
    ['MAPE (annual)', r.fit.mapeAnnual, null],
    ['RMSE (annual)', r.fit.rmseAnnual, null],
  ];
  if (r.hj) fitRows.push(['HJ distance', r.hj.distance, null], ['HJ distance p-value', r.hj.p, r.hj.method]);
  if (r.bound) {
    fitRows.push(['max Sharpe ratio (bound)', r.bound.maxSharpe, null]);
    if (r.bound.model) fitRows.push(['E[m] (model)', r.bound.model.mean, null], ['sigma(m) (model)', r.bound.model.sigma, null]);
  }
  if (r.sdf) fitRows.push(['E[m] (sample)', r.sdf.mean, null], ['std(m) (sample)', r.sdf.std, null]);
  if (r.convergence) {
    fitRows.push(['iterations', r.convergence.iterations, r.convergence.criterion], ['converged', r.convergence.converged ? 1 : 0, r.convergence.converged ? 'yes' : 'no']);
  }
  tables.push({ id: 'fit', title: 'Cross-sectional fit and distance', columns: [text('measure', 'Measure'), num('value', 'Value'), text('detail', 'Detail')], rows: fitRows });
  if (r.betas?.length) {
    tables.push({
      id: 'betas',
      title: 'Full-sample betas',
      columns: [text('asset', 'Asset'), text('factor', 'Factor'), num('estimate', 'Beta'), num('se', 's.e. (OLS)'), num('t', 't', 'stat')],
      rows: r.betas.map((b) => [b.asset, b.factor, b.estimate, b.se, b.t]),
    });
  }
  if (r.assetRegressions?.length) {
    tables.push({
      id: 'regressions',
      title: 'Time-series regressions',
      columns: [text('asset', 'Asset'), num('r2', 'R2'), num('residualSd', 'Residual s.d.')],
      rows: r.assetRegressions.map((a) => [a.asset, a.r2, a.residualSd]),
    });
  }
  if (r.sdf) {
    tables.push({
      id: 'sdf',
      title: 'Fitted discount factor',
      columns: [text('period', 'Period'), num('m', 'm')],
      rows: r.sdf.periods.map((p, i) => [p, r.sdf!.values[i]]),
    });
  }
  if (r.bound?.curve?.length) {
    tables.push({
      id: 'bound',
      title: 'Volatility bound',
      columns: [num('mean', 'E[m]'), num('sigma', 'minimum sigma(m)')],
      rows: r.bound.curve.map((c) => [c.mean, c.sigma]),
    });
  }
  return tables;
}

export function backtestTables(r: BacktestResult): ReportTable[] {
  const btInst = r.perAsset.some((a) => a.instrument !== undefined);
  const summary: CellValue[][] = [
    ['windows', r.windows],
    ['windows failed', r.windowsFailed],
    ['window length', r.spec.window],
    ['step', r.spec.step],
    ['horizon', r.spec.horizon],
    ['expanding', r.spec.expanding ? 1 : 0],
    ['out-of-sample RMSE', r.oos.rmse],
    ['out-of-sample RMSE (pooled)', r.oos.rmsePooled],
    ['out-of-sample R2', r.oos.r2],
    ['in-sample RMSE', r.inSample.rmse],
    ['in-sample R2', r.inSample.r2],
    ['in-sample MAPE', r.inSample.mape],
  ];
  return [
    { id: 'summary', title: 'Back-test summary', columns: [text('measure', 'Measure'), num('value', 'Value')], rows: summary },
    {
      id: 'per-asset',
      title: 'Pricing errors in and out of sample',
      columns: [text('asset', 'Asset'), ...(btInst ? [text('instrument', 'Instrument')] : []), num('alphaOos', 'alpha out of sample'), num('alphaIn', 'alpha in sample'), num('meanReturnOos', 'Mean return out of sample')],
      rows: r.perAsset.map((a) => [a.asset, ...(btInst ? [a.instrument ?? 'const'] : []), a.alphaOos, a.alphaIn, a.meanReturnOos]),
    },
    {
      id: 'paths',
      title: 'Parameter paths',
      columns: [text('end', 'Window end'), text('parameter', 'Parameter'), num('estimate', 'Estimate'), num('se', 's.e.')],
      rows: r.paths.flatMap((w) => w.params.map((p) => [w.end, p.name, p.estimate, p.se] as CellValue[])),
    },
    {
      id: 'windows',
      title: 'Windows',
      columns: [text('start', 'Start'), text('end', 'End'), text('oosStart', 'Held out from'), text('oosEnd', 'Held out to'), bool('ok', 'Estimated'), text('reason', 'Reason')],
      rows: r.windowList.map((w) => [w.start, w.end, w.oosStart, w.oosEnd, w.ok, opt(w.reason)]),
    },
  ];
}

/** The comparison table's columns after the model name (also the columns of a batch's tasks). */
export const compareModelColumns: ReportColumn[] = [
  text('test', 'Test'),
  num('stat', 'Statistic', 'stat'),
  num('df', 'df', 'integer'),
  num('df2', 'df2', 'integer'),
  num('p', 'p-value', 'p'),
  num('hj', 'HJ distance'),
  num('hjP', 'HJ p-value', 'p'),
  num('mape', 'MAPE'),
  num('rmse', 'RMSE'),
  num('r2', 'R2'),
  num('oosRmse', 'RMSE out of sample'),
  num('oosRmsePooled', 'RMSE out of sample (pooled)'),
  num('oosR2', 'R2 out of sample'),
  text('error', 'Error'),
];

/** One model's cells under compareModelColumns. */
export function compareModelCells(m: CompareRow): CellValue[] {
  return [
    m.test.name,
    m.test.stat,
    opt(m.test.df ?? m.test.df1),
    opt(m.test.df2),
    m.test.p,
    m.hj ? m.hj.distance : null,
    m.hj ? m.hj.p : null,
    m.fit.mape,
    m.fit.rmse,
    m.fit.r2,
    m.oos ? m.oos.rmse : null,
    m.oos ? m.oos.rmsePooled : null,
    m.oos ? m.oos.r2 : null,
    opt(m.error),
  ];
}

export function compareTables(r: CompareResult): ReportTable[] {
  const tables: ReportTable[] = [
    {
      id: 'models',
      title: 'Models',
      columns: [text('model', 'Model'), ...compareModelColumns],
      rows: r.models.map((m) => [m.label, ...compareModelCells(m)]),
    },
    {
      id: 'parameters',
      title: 'Parameter estimates by model',
      columns: [text('model', 'Model'), text('parameter', 'Parameter'), num('estimate', 'Estimate'), num('se', 's.e.'), num('t', 't', 'stat'), num('p', 'p-value', 'p'), num('seShanken', 's.e. (Shanken)')],
      rows: r.models.flatMap((m) => m.params.map((p) => [m.label, p.name, p.estimate, p.se, p.t, p.p, opt(p.seShanken)] as CellValue[])),
    },
  ];
  if (r.hjTests.length) {
    tables.push({
      id: 'hj-tests',
      title: 'Tests of equal HJ distance',
      columns: [text('a', 'Model A'), text('b', 'Model B'), num('diff', 'Difference of squared distances'), num('p', 'p-value', 'p'), num('replications', 'Replications', 'integer'), num('block', 'Block length', 'integer'), num('seed', 'Seed', 'integer')],
      rows: r.hjTests.map((h) => [h.a, h.b, h.diff, h.p, h.replications, h.block, h.seed]),
    });
  }
  return tables;
}

/** The tables of any result, in report order. */
export function resultTables(r: AnyResult): ReportTable[] {
  switch (r.kind) {
    case 'fit':
      return fitTables(r);
    case 'backtest':
      return backtestTables(r);
    case 'compare':
      return compareTables(r);
    case 'batch':
      return batchTables(r);
  }
}

/**
 * A merged batch: every fitted task in task order with its grid settings (one column per
 * axis), the comparison's columns, its rank in each ranking and its outcome digest; the
 * parameters by task; the tasks whose model could not be fitted.
 */
export function batchTables(r: BatchResult): ReportTable[] {
  const ranks = RANK_KEYS.map((by) => {
    const pos = new Map<number, number>();
    rankBatch(r, by).forEach((row, i) => pos.set(row.task, i + 1));
    return pos;
  });
  const hasValue = (by: (typeof RANK_KEYS)[number], m: CompareRow): boolean =>
    by === 'hj' ? m.hj !== undefined : by === 'oos' ? m.oos !== undefined && !m.error : Number.isFinite(m.test.p);
  const tables: ReportTable[] = [
    {
      id: 'tasks',
      title: `Tasks (${r.models.length} fitted of ${r.tasks})`,
      columns: [
        num('task', 'Task', 'integer'),
        text('label', 'Settings'),
        ...r.axes.map((a) => text(a.axis, a.axis)),
        num('T', 'T', 'integer'),
        num('N', 'N', 'integer'),
        ...compareModelColumns,
        ...RANK_KEYS.map((by) => num(`rank.${by}`, `Rank by ${RANK_BY[by].title}`, 'integer')),
        text('sha256', 'Outcome SHA-256'),
      ],
      rows: r.models.map((m) => [
        m.task,
        m.label,
        ...r.axes.map((a) => m.settings.find((s) => s.axis === a.axis)?.value ?? null),
        m.sample.T,
        m.sample.N,
        ...compareModelCells(m),
        ...RANK_KEYS.map((by, k) => (hasValue(by, m) ? (ranks[k].get(m.task) ?? null) : null)),
        m.sha256,
      ]),
    },
    {
      id: 'parameters',
      title: 'Parameter estimates by task',
      columns: [num('task', 'Task', 'integer'), text('parameter', 'Parameter'), num('estimate', 'Estimate'), num('se', 's.e.'), num('t', 't', 'stat'), num('p', 'p-value', 'p'), num('seShanken', 's.e. (Shanken)')],
      rows: r.models.flatMap((m) => m.params.map((p) => [m.task, p.name, p.estimate, p.se, p.t, p.p, opt(p.seShanken)] as CellValue[])),
    },
  ];
  if (r.failures.length) {
    tables.push({
      id: 'not-fitted',
      title: 'Tasks whose model could not be fitted',
      columns: [num('task', 'Task', 'integer'), text('label', 'Settings'), text('error', 'Error'), text('sha256', 'Outcome SHA-256')],
      rows: r.failures.map((f) => [f.task, f.label, f.error, f.sha256]),
    });
  }
  return tables;
}

/** A short title for the result: its label, or the compared models. */
export function resultTitle(r: AnyResult): string {
  if (r.kind === 'compare') return `Comparison: ${r.models.map((m) => m.label).join(' vs ')}`;
  if (r.kind === 'batch') return `Batch: ${r.label} (${r.tasks} tasks)`;
  return r.kind === 'backtest' ? `Back-test: ${r.label}` : r.label;
}

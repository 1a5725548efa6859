/** The presentation of a comparison: models and estimators, in-sample fit, out of sample, parameters, HJ tests. */
import type { CompareResult, CompareRow } from '../results.js';
import { CAUTION } from '../results.js';
import { estimatorLabel } from '../spec.js';
import { BEST_RULES, NOT_RANKED, bestRows } from './best.js';
import { numCol, opt, table, textCol } from './build.js';
import { noteText, R2_CS_NOTE } from './fit.js';
import { comparisonSampleLines, estimatorDescription } from './header.js';
import { R2_ZERO_ALPHA_NOTE } from './backtest.js';
import { ANNUALISING_NOTE, annualPercent, percent, unitsFor } from './units.js';
import type { CellValue, Presentation, PresentedTable, TableWarning } from './types.js';

/** The estimator of a comparison row in a few words (the spec's rule and the lags used). */
export function rowEstimator(m: CompareRow): string {
  const e = m.estimator;
  if (!e) return '';
  const base = estimatorLabel({ method: e.method as 'gmm', stage: e.stage as 'second', weight: e.weight as 'identity', lags: e.lags, centered: true, inferenceS: 'weighting', intercept: true, maxIterations: 100 });
  return e.lags === 'auto' ? base.replace(/lags auto$/, `lags auto = ${e.lagsUsed}`) : base;
}

/** The model of a comparison row in a few words: kind and factors. */
export function rowModel(m: CompareRow): string {
  return m.model ? `${m.model}(${(m.factors ?? []).join(',')})` : '';
}

function rankNote(keys: string[]): string {
  const rules = BEST_RULES.filter((r) => keys.includes(r.key));
  return rules.length ? `* best in the column: ${rules.map((r) => r.criterion).join('; ')}. Marked only with two or more models${rules.some((r) => r.oos) ? '; a model whose back-test failed or lost windows is not ranked out of sample' : ''}.` : '';
}

/** Model warnings, each on its model's row. */
function rowWarnings(r: CompareResult, codes?: string[]): TableWarning[] {
  const out: TableWarning[] = [];
  r.models.forEach((m, i) => {
    for (const w of m.warnings ?? []) if (!codes || codes.includes(w.code)) out.push({ ...w, model: m.label, rows: [i] });
  });
  return out;
}

export function compareTables(r: CompareResult): PresentedTable[] {
  const s = r.sample;
  const u = unitsFor(s.frequency, s.periodsPerYear);
  const ppy = s.periodsPerYear;
  const best = bestRows(r.models);
  const marks = (keys: Record<string, string>) => Object.fromEntries(Object.entries(keys).flatMap(([col, rule]) => (best[rule] ? [[col, best[rule]]] : [])));
  const labels = r.models.map((m) => m.label);
  const withF = r.models.some((m) => m.test.df2 !== undefined);
  const tables: PresentedTable[] = [
    table({
      id: 'models',
      title: 'Models and their tests',
      sheet: 'Models',
      columns: [
        textCol('model', 'Model'),
        textCol('kind', 'Discount factor or factors'),
        textCol('estimator', 'Estimator'),
        textCol('test', 'Test'),
        numCol('stat', 'Statistic', 'stat'),
        numCol('df', withF ? 'df1' : 'df', 'integer'),
        ...(withF ? [numCol('df2', 'df2', 'integer')] : []),
        numCol('p', 'p', 'p'),
      ],
      rows: r.models.map((m) => [m.label, rowModel(m), rowEstimator(m), m.test.name, m.test.stat, opt(m.test.df ?? m.test.df1), ...(withF ? [opt(m.test.df2)] : [])].concat([m.test.p])),
      rowKeys: labels,
      notes: [`${NOT_RANKED['test.stat']}; ${NOT_RANKED['test.p']}.`, 'Estimator: method, stage, first-stage weight (W = I or the Hansen-Jagannathan weight) and Newey-West lags.'],
      warnings: rowWarnings(r, ['FEW_PERIODS', 'S_NEAR_SINGULAR', 'ITERATION_CAP', 'START_AT_EDGE', 'SEVERAL_MINIMA']),
    }),
  ];
  const fitMarks = marks({ hj: 'hj.distance', hjP: 'hj.p', mape: 'fit.mape', rmse: 'fit.rmse', r2: 'fit.r2' });
  tables.push(
    table({
      id: 'fit',
      title: 'Fit in sample',
      sheet: 'Fit in sample',
      columns: [
        textCol('model', 'Model'),
        numCol('hj', 'HJ distance', 'value', u.perPeriod, { best: 'hj.distance' }),
        numCol('hjP', 'HJ p', 'p', undefined, { best: 'hj.p' }),
        numCol('mape', 'MAPE', 'percent', u.pctYear, { best: 'fit.mape' }),
        numCol('rmse', 'RMSE', 'percent', u.pctYear, { best: 'fit.rmse' }),
        numCol('r2', 'R^2 (cross-section)', 'ratio', undefined, { best: 'fit.r2' }),
      ],
      rows: r.models.map((m) => [m.label, m.hj ? m.hj.distance : null, m.hj ? m.hj.p : null, percent(m.fit.mapeAnnual), percent(m.fit.rmseAnnual), m.fit.r2]),
      rowKeys: labels,
      marks: fitMarks,
      notes: [rankNote(['hj.distance', 'hj.p', 'fit.mape', 'fit.rmse', 'fit.r2']), 'MAPE and RMSE: across the test assets, of each asset\'s pricing error.', R2_CS_NOTE, ANNUALISING_NOTE].filter((n) => n),
      warnings: rowWarnings(r, ['FEW_PERIODS', 'S_NEAR_SINGULAR', 'BELOW_VOLATILITY_BOUND']),
    }),
  );
  if (r.models.some((m) => m.oos || m.error)) {
    tables.push(
      table({
        id: 'out-of-sample',
        title: 'Out of sample (back-test)',
        sheet: 'Out of sample',
        columns: [
          textCol('model', 'Model'),
          numCol('oosRmse', 'RMSE out of sample', 'percent', u.pctYear, { best: 'oos.rmse' }),
          numCol('oosRmsePooled', 'pooled RMSE out of sample', 'percent', u.pctPeriod, { best: 'oos.rmsePooled' }),
          numCol('oosR2', 'R^2 against zero alpha, out of sample', 'ratio', undefined, { best: 'oos.r2' }),
          numCol('windowsFailed', 'windows failed', 'integer'),
          textCol('status', 'Status'),
        ],
        rows: r.models.map((m) => [m.label, m.oos ? annualPercent(m.oos.rmse, ppy) : null, m.oos ? percent(m.oos.rmsePooled) : null, m.oos ? m.oos.r2 : null, opt(m.oosWindowsFailed), m.error ?? 'ok'] as CellValue[]),
        rowKeys: labels,
        marks: marks({ oosRmse: 'oos.rmse', oosRmsePooled: 'oos.rmsePooled', oosR2: 'oos.r2' }),
        notes: [
          rankNote(['oos.rmse', 'oos.rmsePooled', 'oos.r2']),
          'RMSE out of sample: across the test assets, of each asset\'s mean held-out error (annualised); pooled: over every window and asset, not annualised.',
          R2_ZERO_ALPHA_NOTE,
        ].filter((n) => n),
        warnings: rowWarnings(r, ['FAILED_WINDOWS']),
      }),
    );
  }
  const shanken = r.models.some((m) => m.params.some((p) => p.seShanken !== undefined));
  tables.push(
    table({
      id: 'parameters',
      title: 'Parameter estimates by model',
      sheet: 'Parameters',
      columns: [textCol('model', 'Model'), textCol('parameter', 'Parameter'), numCol('estimate', 'Estimate', 'value'), numCol('se', 's.e.', 'value'), numCol('t', 't', 'stat'), numCol('p', 'p', 'p'), ...(shanken ? [numCol('seShanken', 's.e. (Shanken)', 'value')] : [])],
      rows: r.models.flatMap((m) => m.params.map((p) => [m.label, p.name, p.estimate, p.se, p.t, p.p, ...(shanken ? [opt(p.seShanken)] : [])] as CellValue[])),
      rowKeys: r.models.flatMap((m) => m.params.map((p) => `${m.label}|${p.name}`)),
      notes: ['p: two-sided, normal.'],
    }),
  );
  if (r.hjTests.length) {
    tables.push(
      table({
        id: 'hj-tests',
        title: 'Tests of equal squared HJ distance',
        sheet: 'HJ distance tests',
        columns: [
          textCol('a', 'Model A'),
          textCol('b', 'Model B'),
          numCol('diff', 'HJ_A^2 - HJ_B^2', 'value'),
          numCol('p', 'p', 'p'),
          numCol('used', 'replications used', 'integer'),
          numCol('replications', 'replications', 'integer'),
          numCol('block', 'block length', 'integer', 'periods'),
          numCol('seed', 'seed', 'integer'),
        ],
        rows: r.hjTests.map((h) => [h.a, h.b, h.diff, h.p, h.used ?? h.replications, h.replications, h.block, h.seed]),
        rowKeys: r.hjTests.map((h) => `${h.a}|${h.b}`),
        notes: r.bootstrap ? [`${r.bootstrap.method}. Block length ${r.bootstrap.blockRule}.`] : [],
        warnings: (r.warnings ?? []).filter((w) => w.code === 'FAILED_REPLICATIONS').map((w) => ({ ...w })),
      }),
    );
  }
  if (r.failures?.length) {
    tables.push(
      table({
        id: 'not-fitted',
        title: 'Models not fitted',
        sheet: 'Not fitted',
        columns: [textCol('model', 'Model'), textCol('error', 'Reason')],
        rows: r.failures.map((f) => [f.label, f.error]),
      }),
    );
  }
  return tables;
}

export function compareTitle(r: CompareResult): string {
  const n = r.models.length + (r.failures?.length ?? 0);
  return `Comparison of ${n} model${n === 1 ? '' : 's'}`;
}

export function presentCompare(r: CompareResult): Presentation {
  const header = comparisonSampleLines(r.sample, r.models.length + (r.failures?.length ?? 0));
  if (!r.models.every((m) => m.estimator)) header.push({ key: 'estimator', value: estimatorDescription(r.sample) });
  if (r.bootstrap) header.push({ key: 'HJ bootstrap', value: `${r.bootstrap.replications} replications, block ${r.bootstrap.block} periods, seed ${r.bootstrap.seed}` });
  return { kind: 'compare', title: compareTitle(r), caution: CAUTION, header, tables: compareTables(r), notes: [...new Set(r.sample.notes.map(noteText))], warnings: r.warnings ?? [] };
}

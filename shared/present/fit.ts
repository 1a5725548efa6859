/** The presentation of one fit: parameters, pricing errors, tests, fit measures, betas, the discount factor. */
import type { FitResult, TestResult } from '../results.js';
import { CAUTION } from '../results.js';
import { finite, numCol, opt, table, tableWarnings, textCol } from './build.js';
import { sampleLines } from './header.js';
import { ANNUALISING_NOTE, percent, unitsFor } from './units.js';
import type { CellValue, NumberFormat, Presentation, PresentedTable } from './types.js';

/** Warning codes that qualify estimates, standard errors and tests. */
export const ESTIMATE_WARNINGS = ['FEW_PERIODS', 'S_NEAR_SINGULAR', 'ITERATION_CAP', 'START_AT_EDGE', 'SEVERAL_MINIMA', 'INSTRUMENT_LEVEL'];
/** Warning codes that qualify the discount factor and its bound. */
export const SDF_WARNINGS = ['BELOW_VOLATILITY_BOUND'];

export const R2_CS_NOTE =
  'R^2 (cross-section) = `1 - sum alpha_i^2 / sum (mean R_i - average mean)^2`: how much of the spread of mean returns the model explains; negative when the pricing errors are larger than that spread. It is not the back-test\'s R^2 against zero alpha.';

/** The main test first, then the further tests, without repeating the main one. */
export function allTests(r: Pick<FitResult, 'test' | 'tests'>): TestResult[] {
  return [r.test, ...r.tests.filter((t) => !(t.name === r.test.name && Object.is(t.stat, r.test.stat) && Object.is(t.p, r.test.p)))];
}

/**
 * Result field names that stored notes use, in the words of the column headings (results
 * keep their notes as recorded; the presentation speaks the headings' language).
 */
const NOTE_WORDS: readonly [RegExp, string][] = [
  [/\bseShanken\b/g, 's.e. (Shanken)'],
  [/\bseHac\b/g, 's.e. (HAC)'],
  [/\bcentered\b/g, 'centred'],
];

/** Notes read as sentences: the "*" subject (the whole sample) is dropped, field names become the headings' words. */
export function noteText(n: string): string {
  return NOTE_WORDS.reduce((t, [re, w]) => t.replace(re, w), n.replace(/^\*:\s*/, ''));
}

/** The title of a fit: its label, then the estimator, once. */
export function fitTitle(r: FitResult): string {
  return r.label;
}

/** Which estimates are per period (factor means, risk premia, constants), named only where the table has them. */
function perPeriodNote(names: string[], word: string): string {
  const kinds = [
    ['factor means (mu)', (n: string) => n.startsWith('mu.')],
    ['risk premia (lambda)', (n: string) => n.startsWith('lambda.') && !n.endsWith('.const')],
    ['constants', (n: string) => n.endsWith('.const')],
  ]
    .filter(([, is]) => names.some(is as (n: string) => boolean))
    .map(([what]) => what as string);
  if (!kinds.length) return '';
  const list = kinds.length === 1 ? kinds[0] : `${kinds.slice(0, -1).join(', ')} and ${kinds[kinds.length - 1]}`;
  return ` ${list[0].toUpperCase()}${list.slice(1)} are per ${word}, as decimals.`;
}

export function fitTables(r: FitResult): PresentedTable[] {
  const s = r.sample;
  const u = unitsFor(s.frequency, s.periodsPerYear);
  const gross = s.returns === 'gross';
  const ws = r.warnings ?? [];
  const estWarn = tableWarnings(ws, ESTIMATE_WARNINGS);
  const tables: PresentedTable[] = [];

  const shanken = r.params.some((p) => p.seShanken !== undefined);
  const paramNotes = [...new Set(r.params.map((p) => p.note).filter((n): n is string => !!n))].map(
    (n) => `${r.params.filter((p) => p.note === n).map((p) => p.name).join(', ')}: ${noteText(n)}`,
  );
  tables.push(
    table({
      id: 'parameters',
      title: 'Parameter estimates',
      sheet: 'Parameters',
      columns: [
        textCol('parameter', 'Parameter'),
        numCol('estimate', 'Estimate', 'value'),
        numCol('se', 's.e.', 'value'),
        numCol('t', 't', 'stat'),
        numCol('p', 'p', 'p'),
        ...(shanken ? [numCol('seShanken', 's.e. (Shanken)', 'value')] : []),
      ],
      rows: r.params.map((p) => [p.name, p.estimate, p.se, p.t, p.p, ...(shanken ? [opt(p.seShanken)] : [])]),
      notes: [
        ...paramNotes,
        `p: two-sided, normal.${perPeriodNote(r.params.map((p) => p.name), u.word)}`,
      ],
      warnings: estWarn,
    }),
  );

  const inst = r.pricingErrors.some((e) => e.instrument !== undefined);
  const hac = r.pricingErrors.some((e) => e.seHac !== undefined);
  const shankenAlpha = r.pricingErrors.some((e) => e.seShanken !== undefined);
  const retUnit = gross ? u.grossPeriod : u.pctPeriod;
  const ret = (x: number) => (gross ? x : percent(x));
  tables.push(
    table({
      id: 'pricing-errors',
      title: 'Pricing errors',
      sheet: 'Pricing errors',
      columns: [
        textCol('asset', 'Asset'),
        ...(inst ? [textCol('instrument', 'Instrument', 'the instrument scaling this moment (const: the unscaled return)')] : []),
        numCol('alpha', 'alpha', 'percent', u.pctPeriod),
        numCol('se', 's.e.', 'percent', u.pctPeriod),
        numCol('t', 't', 'stat'),
        numCol('alphaAnnual', 'alpha', 'percent', u.pctYear),
        numCol('seAnnual', 's.e.', 'percent', u.pctYear),
        numCol('meanReturn', gross ? 'mean gross return' : 'mean return', gross ? 'value' : 'percent', retUnit),
        numCol('predicted', gross ? 'predicted gross return' : 'predicted', gross ? 'value' : 'percent', retUnit),
        ...(hac ? [numCol('seHac', 's.e. (HAC)', 'percent', u.pctPeriod)] : []),
        ...(shankenAlpha ? [numCol('seShanken', 's.e. (Shanken)', 'percent', u.pctPeriod)] : []),
      ],
      rows: r.pricingErrors.map((e) => [
        e.asset,
        ...(inst ? [e.instrument ?? 'const'] : []),
        percent(e.alpha),
        percent(e.se),
        e.t,
        percent(e.alphaAnnual),
        percent(e.seAnnual),
        ret(e.meanReturn),
        ret(e.predicted),
        ...(hac ? [e.seHac !== undefined ? percent(e.seHac) : null] : []),
        ...(shankenAlpha ? [e.seShanken !== undefined ? percent(e.seShanken) : null] : []),
      ]),
      rowKeys: r.pricingErrors.map((e) => (inst ? `${e.asset}|${e.instrument ?? 'const'}` : e.asset)),
      notes: [
        s.method === 'gmm'
          ? `alpha: the pricing error g_T of each asset at the estimate (\`${gross ? 'E[m R] - 1' : 'E[m R^e]'}\`); predicted = \`mean - alpha / E[m]\`.`
          : s.method === 'time-series'
            ? 'alpha: the time-series intercept of each asset; predicted = mean - alpha.'
            : 'alpha: the time mean of the cross-sectional residual of each asset; predicted = mean - alpha.',
        ANNUALISING_NOTE,
      ],
      warnings: estWarn,
    }),
  );

  const tests = allTests(r);
  const withF = tests.some((t) => t.df2 !== undefined);
  tables.push(
    table({
      id: 'tests',
      title: 'Tests of zero pricing errors',
      sheet: 'Tests',
      columns: [textCol('test', 'Test'), numCol('stat', 'Statistic', 'stat'), numCol('df', withF ? 'df1' : 'df', 'integer'), ...(withF ? [numCol('df2', 'df2', 'integer')] : []), numCol('p', 'p', 'p')],
      rows: tests.map((t) => [t.name, t.stat, opt(t.df ?? t.df1), ...(withF ? [opt(t.df2)] : [])].concat([t.p])),
      notes: tests.filter((t) => t.note).map((t) => `${t.name}: ${t.note}`),
      warnings: estWarn,
    }),
  );

  const rows: CellValue[][] = [
    ['MAPE', percent(r.fit.mape), u.pctPeriod],
    ['MAPE', percent(r.fit.mapeAnnual), u.pctYear],
    ['RMSE', percent(r.fit.rmse), u.pctPeriod],
    ['RMSE', percent(r.fit.rmseAnnual), u.pctYear],
    ['R^2 (cross-section)', r.fit.r2, 'ratio'],
  ];
  const formats: NumberFormat[] = ['percent', 'percent', 'percent', 'percent', 'ratio'];
  const notes = [
    'MAPE and RMSE: mean absolute and root mean square pricing error across the test assets.',
    R2_CS_NOTE,
  ];
  if (r.hj) {
    rows.push(['HJ distance', r.hj.distance, u.perPeriod], ['HJ distance p', r.hj.p, 'p-value']);
    formats.push('value', 'p');
    notes.push(`HJ distance: the largest pricing error per unit norm of a payoff (Hansen and Jagannathan 1997); p: ${r.hj.method}.`);
  }
  tables.push(
    table({
      id: 'fit',
      title: 'Cross-sectional fit',
      sheet: 'Fit',
      columns: [textCol('measure', 'Measure'), numCol('value', 'Value', 'value', undefined, { note: 'in the unit of its row' }), textCol('unit', 'Unit')],
      rows,
      rowKeys: rows.map((x) => `${x[0]} ${x[2]}`),
      rowFormats: formats,
      notes,
      warnings: tableWarnings(ws, ['FEW_PERIODS', 'S_NEAR_SINGULAR']),
    }),
  );

  if (r.sdf || r.bound) {
    const d: CellValue[][] = [];
    const f: NumberFormat[] = [];
    if (r.sdf) {
      d.push(['E[m], sample mean of the fitted m_t', r.sdf.mean, u.perPeriod], ['sigma(m), standard deviation of m_t', r.sdf.std, u.perPeriod], ['sigma(m) / E[m]', r.sdf.std / r.sdf.mean, u.perPeriod]);
      f.push('value', 'value', 'value');
    }
    if (r.bound) {
      if (r.bound.atModel !== undefined) {
        d.push(['bound: least sigma(m) at the model\'s E[m]', r.bound.atModel, u.perPeriod]);
        f.push('value');
      }
      d.push([gross ? 'largest Sharpe ratio of a zero-cost portfolio' : 'largest Sharpe ratio of the test assets', r.bound.maxSharpe, u.perPeriod]);
      f.push('value');
    }
    if (r.convergence) {
      d.push(['solver iterations', r.convergence.iterations, `${r.convergence.converged ? 'converged' : 'NOT converged'}: ${r.convergence.criterion}`]);
      f.push('integer');
    }
    tables.push(table({
      id: 'discount-factor',
      title: 'Discount factor, volatility bound and solver',
      sheet: 'Discount factor',
      columns: [textCol('measure', 'Measure'), numCol('value', 'Value', 'value', undefined, { note: 'in the unit of its row' }), textCol('unit', 'Unit')],
      rows: d,
      rowFormats: f,
      notes: [
        'Hansen-Jagannathan (1991): a discount factor that prices the test assets has sigma(m) at least the bound at its mean. Standard deviations and Sharpe ratios are per period, not annualised.',
      ],
      warnings: tableWarnings(ws, [...SDF_WARNINGS, 'ITERATION_CAP', 'START_AT_EDGE', 'SEVERAL_MINIMA']),
    }));
  }

  if (r.betas?.length) {
    tables.push(
      table({
        id: 'betas',
        title: 'Full-sample betas',
        sheet: 'Betas',
        columns: [textCol('asset', 'Asset'), textCol('factor', 'Factor'), numCol('estimate', 'Beta', 'value'), numCol('se', 's.e. (OLS)', 'value'), numCol('t', 't', 'stat')],
        rows: r.betas.map((b) => [b.asset, b.factor, b.estimate, b.se, b.t]),
        rowKeys: r.betas.map((b) => `${b.asset}|${b.factor}`),
      }),
    );
  }
  if (r.assetRegressions?.length) {
    tables.push(
      table({
        id: 'regressions',
        title: 'Time-series regressions',
        sheet: 'Regressions',
        columns: [textCol('asset', 'Asset'), numCol('r2', 'R^2 (time series)', 'ratio'), numCol('residualSd', 'residual s.d.', 'percent', u.pctPeriod)],
        rows: r.assetRegressions.map((a) => [a.asset, a.r2, percent(a.residualSd)]),
        notes: ['R^2 (time series): of each asset\'s regression on the factors; residual s.d. per period, not annualised.'],
      }),
    );
  }
  if (r.sdf) {
    tables.push(
      table({
        id: 'sdf',
        title: 'Fitted discount factor m_t',
        sheet: 'Discount factor series',
        columns: [textCol('period', 'Period'), numCol('m', 'm_t', 'value')],
        rows: () => r.sdf!.periods.map((p, i) => [p, finite(r.sdf!.values[i])]),
        role: 'appendix',
      }),
    );
  }
  const d = r.discounted;
  if (d && Object.keys(d.series).length) {
    const assets = Object.keys(d.series);
    const gains = d.form === 'gains';
    tables.push(
      table({
        id: 'discounted',
        title: gains ? 'Discounted gains G_t = sum of m_s R^e_s' : 'Discounted value prod of m_s R_s',
        sheet: gains ? 'Discounted gains' : 'Discounted value',
        columns: [textCol('period', 'Period'), ...assets.map((a) => numCol(a, a, 'value'))],
        rows: () => d.periods.map((p, t) => [p, ...assets.map((a) => finite(d.series[a][t]))]),
        notes: [
          gains
            ? 'Per asset, the sum of m_s R^e_s up to each period (0 before the first): its mean increment G_T / T is the pricing error, 0 for an asset the model prices.'
            : 'Per asset, the product of m_s R_s up to each period (1 before the first): its mean increment ratio is 1 + the pricing error.',
          ...(d.note ? [d.note] : []),
          ...(d.omitted ? [`${d.omitted.count} assets left out: ${d.omitted.rule}.`] : []),
        ],
        role: 'appendix',
      }),
    );
  }
  if (r.bound?.curve?.length) {
    tables.push(
      table({
        id: 'bound',
        title: 'Volatility bound',
        sheet: 'Volatility bound',
        columns: [numCol('mean', 'E[m]', 'value'), numCol('sigma', 'least sigma(m)', 'value', u.perPeriod)],
        rows: r.bound.curve.map((c) => [c.mean, c.sigma]),
        rowKeys: r.bound.curve.map((_, i) => String(i)),
        role: 'appendix',
      }),
    );
  }
  return tables;
}

export function presentFit(r: FitResult): Presentation {
  const notes = [...new Set([...r.sample.notes, ...r.notes].map(noteText))].filter(
    (n) => !/^Pricing errors are the sample moments/.test(n) && !/^Risk premia lambda = Sigma_f b/.test(n),
  );
  return { kind: 'fit', title: fitTitle(r), caution: CAUTION, header: sampleLines(r.sample), tables: fitTables(r), notes, warnings: r.warnings ?? [] };
}


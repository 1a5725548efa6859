/**
 * The presentation of the present-value analyses (METHODS 10): the dividend-price
 * decomposition and the drift split, as tables with units and notes that the terminal,
 * the app and every export render.
 */
import type { DriftResult, PresentValueResult, ValueResult } from '../results.js';
import { CAUTION } from '../results.js';
import { numCol, table, tableWarnings, textCol } from './build.js';
import { noteText } from './fit.js';
import { percent } from './units.js';
import type { CellValue, HeaderLine, NumberFormat, Presentation, PresentedColumn as ReportColumn, PresentedTable as ReportTable } from './types.js';

const text = (key: string, label = key): ReportColumn => textCol(key, label);
const num = (key: string, label: string, format: NumberFormat = 'value', unit?: string): ReportColumn => numCol(key, label, format, unit);

/** Warning codes of the value analyses and the tables whose numbers they qualify (listed beneath those tables). */
export const VALUE_WARNING_TABLES: Readonly<Record<string, readonly string[]>> = {
  FEW_YEARS: ['regressions', 'long-run'],
  DP_NEAR_UNIT_ROOT: ['long-run'],
  LARGE_IDENTITY_GAP: ['summary', 'long-run'],
  EQUAL_SHARES: ['summary', 'regressions', 'long-run'],
  ASSET_DROPPED: ['drift'],
};

function placed(ws: readonly ValueResult['warnings'][number][], id: string) {
  return tableWarnings(ws, Object.keys(VALUE_WARNING_TABLES).filter((c) => VALUE_WARNING_TABLES[c].includes(id)));
}

const REGRESSION_LABELS = { r: 'return r(t+1)', dd: 'dividend growth dd(t+1)', dp: 'dividend-price ratio dp(t+1)' } as const;

export function presentValueTables(r: PresentValueResult): ReportTable[] {
  const summary: CellValue[][] = [
    ['years used (T)', r.sample.T, `${r.sample.first}-${r.sample.last}`],
    ['mean dp', r.meanDp, 'over all T years'],
    ['rho', r.rho, '1 / (1 + exp(mean dp))'],
    ['identity b_r - b_d + rho phi', r.identity.value, 'near 1'],
    ['identity gap', r.identity.gap, 'value - 1: the linearisation error'],
    ['Newey-West lags', r.lags, r.lagsRule],
  ];
  const regs = (['r', 'dd', 'dp'] as const).map((k) => {
    const g = r.regressions[k];
    return [REGRESSION_LABELS[k], g.a, g.seA, g.b, g.seB, g.tB, g.r2] as CellValue[];
  });
  const T = r.sample.T;
  const years: CellValue[][] = r.series.years.map((y, t) => [y, r.series.closes[t], r.series.price[t], r.series.dividend[t], r.series.dp[t], t > 0 ? r.series.r[t - 1] : null, t > 0 ? r.series.dd[t - 1] : null]);
  return [
    { id: 'summary', title: 'Dividend-price decomposition', sheet: 'Decomposition', columns: [text('measure', 'Measure'), num('value', 'Value'), text('detail', 'Detail')], rows: summary, warnings: placed(r.warnings, 'summary') },
    {
      id: 'regressions',
      sheet: 'Predictive regressions',
      title: `Predictive regressions on dp(t), ${T - 1} years (Newey-West s.e.)`,
      columns: [text('regression', 'Regression of'), num('a', 'a'), num('seA', 's.e.(a)'), num('b', 'b (phi for dp)'), num('seB', 's.e.(b)'), num('tB', 't(b)', 'stat'), num('r2', 'R^2 (regression)', 'ratio')],
      rows: regs,
      warnings: placed(r.warnings, 'regressions'),
    },
    {
      id: 'long-run',
      sheet: 'Long-run coefficients',
      title: 'Long-run coefficients and variance shares of dp',
      columns: [text('part', 'Part'), num('b', 'Long-run coefficient'), num('se', 's.e. (delta method)'), num('share', 'Share of Var(dp)')],
      rows: [
        ['returns: b_r / (1 - rho phi)', r.longRun.r.b, r.longRun.r.se, r.varianceShares.r],
        ['dividend growth: b_d / (1 - rho phi)', r.longRun.dd.b, r.longRun.dd.se, r.varianceShares.dd],
      ],
      warnings: placed(r.warnings, 'long-run'),
    },
    {
      id: 'years',
      title: 'Yearly values',
      role: 'appendix' as const,
      columns: [text('year', 'Year'), text('close', 'Year-end close'), num('price', 'P (year end)'), num('dividend', 'D (paid in year)'), num('dp', 'dp = ln(D/P)'), num('r', 'r = ln R'), num('dd', 'dd = ln D growth')],
      rows: years,
    },
    {
      id: 'covariance',
      title: 'Joint Newey-West covariance of the coefficients',
      sheet: 'Coefficient covariance',
      columns: [text('coefficient', 'Coefficient'), ...r.covariance.names.map((n) => num(n, n))],
      rows: r.covariance.names.map((n, i) => [n, ...r.covariance.values[i]]),
    },
  ].map(table);
}

export function driftTables(r: DriftResult): ReportTable[] {
  // Percent per year, the unit of every other annualised mean on every surface (the JSON keeps decimals).
  const y = '% per year';
  const pct = (x: number | null): number | null => (x === null ? null : percent(x));
  return [
    {
      id: 'drift',
      title: `Drift split, annualised (${r.frequency}, ${r.periodsPerYear} periods per year)`,
      sheet: 'Drift split',
      columns: [
        text('asset', 'Asset'),
        text('source', 'Data'),
        num('drift', 'Drift mu', 'percent', y),
        num('seDrift', 's.e.', 'percent', y),
        num('priceGrowth', 'Price growth', 'percent', y),
        num('sePriceGrowth', 's.e.', 'percent', y),
        num('dividendYield', 'Dividend yield', 'percent', y),
        num('seDividendYield', 's.e.', 'percent', y),
        num('sigma', 'sigma', 'percent', '% per square root of a year'),
        num('logDrift', 'Log drift', 'percent', y),
        num('seLogDrift', 's.e.', 'percent', y),
        num('driftLessHalfVariance', 'mu - sigma^2/2', 'percent', y),
      ],
      rows: r.assets.map((a) => [a.asset, a.source, pct(a.drift), pct(a.se.drift), pct(a.priceGrowth), pct(a.se.priceGrowth), pct(a.dividendYield), pct(a.se.dividendYield), pct(a.sigma), pct(a.logDrift), pct(a.se.logDrift), pct(a.driftLessHalfVariance)]),
      // NO_PRICE_SPLIT qualifies the rows of the assets stored as returns; the other codes the whole table.
      warnings: [
        ...placed(r.warnings, 'drift'),
        ...r.warnings.filter((w) => w.code === 'NO_PRICE_SPLIT').map((w) => ({ ...w, rows: r.assets.flatMap((a, i) => (a.source === 'returns' ? [i] : [])) })),
      ],
    },
  ].map(table);
}

/** The sample header of either analysis, as key/value lines in a fixed order. */
export function valueHeaderLines(r: ValueResult): HeaderLine[] {
  if (r.kind === 'present-value') {
    const what = r.asset !== undefined ? `asset ${r.asset} (per current share)` : `aggregate of ${r.assets?.length ?? 0} assets (${r.weighting === 'shares' ? 'market values' : 'one share of each'})`;
    return [
      { key: 'analysis', value: 'dividend-price decomposition' },
      { key: 'data', value: what },
      { key: 'years', value: `${r.sample.first} to ${r.sample.last}, T = ${r.sample.T} (regressions on ${r.sample.T - 1})` },
      { key: 'frequency', value: 'annual (calendar years)' },
      { key: 'lags', value: `${r.lags} (${r.lagsRule})` },
      ...(r.assets ? [{ key: 'assets', value: r.assets.join(', ') }] : []),
    ];
  }
  return [
    { key: 'analysis', value: 'drift split' },
    { key: 'assets', value: `${r.assets.length}${r.dropped.length ? ` (${r.dropped.length} left out)` : ''}: ${r.assets.map((a) => a.asset).join(', ')}` },
    { key: 'sample', value: `${r.sample.first} to ${r.sample.last}, T = ${r.sample.T}` },
    { key: 'frequency', value: `${r.frequency} (${r.periodsPerYear} periods per year)` },
    { key: 'lags', value: `${r.lags} (${r.lagsRule})` },
  ];
}

export function presentPresentValue(r: PresentValueResult): Presentation {
  return { kind: r.kind, title: r.label, caution: CAUTION, header: valueHeaderLines(r), tables: presentValueTables(r), notes: [...new Set(r.notes.map(noteText))], warnings: r.warnings };
}

export function presentDrift(r: DriftResult): Presentation {
  return { kind: r.kind, title: r.label, caution: CAUTION, header: valueHeaderLines(r), tables: driftTables(r), notes: [...new Set(r.notes.map(noteText))], warnings: r.warnings };
}

/** The presentation of a back-test: in and out of sample, per asset, parameter paths, windows. */
import type { BacktestResult } from '../results.js';
import { CAUTION } from '../results.js';
import { boolCol, finite, numCol, opt, table, tableWarnings, textCol } from './build.js';
import { sampleLines } from './header.js';
import { noteText } from './fit.js';
import { ANNUALISING_NOTE, annualPercent, percent, unitsFor } from './units.js';
import type { CellValue, HeaderLine, NumberFormat, Presentation, PresentedTable } from './types.js';

export const R2_ZERO_ALPHA_NOTE =
  'R^2 against zero alpha = `1 - sum_i (mean alpha_i)^2 / sum_i (mean benchmark error_i)^2`, the benchmark pricing every asset with m = 1 (its error is the mean held-out excess return, or gross return - 1): how much of the assets\' average returns the model prices. It is not the cross-sectional R^2 of a fit.';

export const IN_SAMPLE_NOTE = "In sample: each window's own pricing errors on its estimation periods, averaged over the windows (not a fit on the full sample).";

export function backtestWindowLines(r: BacktestResult): HeaderLine[] {
  const b = r.spec;
  const first = r.windowList[0];
  const last = r.windowList[r.windowList.length - 1];
  return [
    { key: 'windows', value: `${b.expanding ? 'expanding from' : 'rolling,'} ${b.window} periods, step ${b.step}, ${b.horizon} held-out period${b.horizon === 1 ? '' : 's'} each; ${r.windows} windows, ${r.windowsFailed} failed` },
    ...(first && last ? [{ key: 'first and last', value: `${first.start} to ${first.end}; ${last.start} to ${last.end}` }] : []),
  ];
}

export function backtestTables(r: BacktestResult): PresentedTable[] {
  const s = r.sample;
  const u = unitsFor(s.frequency, s.periodsPerYear);
  const ppy = s.periodsPerYear;
  const gross = s.returns === 'gross';
  const failWarn = tableWarnings(r.warnings ?? [], ['FAILED_WINDOWS']);
  const rows: CellValue[][] = [
    ['RMSE across assets of mean errors', percent(r.inSample.rmse), percent(r.oos.rmse), u.pctPeriod],
    ['RMSE across assets of mean errors', annualPercent(r.inSample.rmse, ppy), annualPercent(r.oos.rmse, ppy), u.pctYear],
    ['MAPE across assets of mean errors', percent(r.inSample.mape), null, u.pctPeriod],
    ['MAPE across assets of mean errors', annualPercent(r.inSample.mape, ppy), null, u.pctYear],
    ['pooled RMSE over windows and assets', null, percent(r.oos.rmsePooled), u.pctPeriod],
    ['R^2 against zero alpha', r.inSample.r2, r.oos.r2, 'ratio'],
  ];
  const formats: NumberFormat[] = ['percent', 'percent', 'percent', 'percent', 'percent', 'ratio'];
  const tables: PresentedTable[] = [
    table({
      id: 'summary',
      title: 'In sample and out of sample',
      sheet: 'Summary',
      columns: [textCol('measure', 'Measure'), numCol('inSample', 'In sample', 'value'), numCol('outOfSample', 'Out of sample', 'value'), textCol('unit', 'Unit')],
      rows,
      rowKeys: rows.map((x) => `${x[0]} ${x[3]}`),
      rowFormats: formats,
      notes: [
        IN_SAMPLE_NOTE,
        'Out of sample: each window\'s estimate prices its held-out periods; an asset\'s error is the mean over its windows. The pooled RMSE is over every window and asset, a dispersion of single-window errors, so it is not annualised.',
        R2_ZERO_ALPHA_NOTE,
        ANNUALISING_NOTE,
      ],
      warnings: failWarn,
    }),
  ];
  const ret = (x: number) => (gross ? x : percent(x));
  const inst = r.perAsset.some((a) => a.instrument !== undefined);
  tables.push(
    table({
      id: 'per-asset',
      title: 'Pricing errors in and out of sample, per asset',
      sheet: 'Per asset',
      columns: [
        textCol('asset', 'Asset'),
        ...(inst ? [textCol('instrument', 'Instrument')] : []),
        numCol('alphaOos', 'alpha out of sample', 'percent', u.pctPeriod),
        numCol('alphaIn', 'alpha in sample', 'percent', u.pctPeriod),
        numCol('alphaOosAnnual', 'alpha out of sample', 'percent', u.pctYear),
        numCol('alphaInAnnual', 'alpha in sample', 'percent', u.pctYear),
        numCol('meanReturnOos', gross ? 'held-out mean gross return' : 'held-out mean return', gross ? 'value' : 'percent', gross ? u.grossPeriod : u.pctPeriod),
      ],
      rowKeys: r.perAsset.map((a) => (inst ? `${a.asset}|${a.instrument ?? 'const'}` : a.asset)),
      rows: r.perAsset.map((a) => [a.asset, ...(inst ? [a.instrument ?? 'const'] : []), percent(a.alphaOos), percent(a.alphaIn), annualPercent(a.alphaOos, ppy), annualPercent(a.alphaIn, ppy), ret(a.meanReturnOos)]),
      notes: ['Means over the windows that were estimated. ' + IN_SAMPLE_NOTE],
      warnings: failWarn,
    }),
  );
  if (r.paths.length) {
    const names = [...new Set(r.paths.flatMap((w) => w.params.map((p) => p.name)))];
    const summary = names.map((name) => {
      const v = r.paths.map((w) => w.params.find((p) => p.name === name)).filter((p) => p !== undefined);
      const est = v.map((p) => p.estimate);
      const se = v.map((p) => p.se);
      const mean = (x: number[]) => x.reduce((a, b) => a + b, 0) / x.length;
      return [name, est[0], est[est.length - 1], mean(est), Math.min(...est), Math.max(...est), mean(se)] as CellValue[];
    });
    tables.push(
      table({
        id: 'path-summary',
        title: `Parameter paths over ${r.paths.length} windows`,
        sheet: 'Path summary',
        columns: [textCol('parameter', 'Parameter'), numCol('first', 'first window', 'value'), numCol('last', 'last window', 'value'), numCol('mean', 'mean', 'value'), numCol('min', 'min', 'value'), numCol('max', 'max', 'value'), numCol('meanSe', 'mean s.e.', 'value')],
        rows: summary,
        notes: [`Estimates per window; the first window ends ${r.paths[0].end}, the last ${r.paths[r.paths.length - 1].end}.`],
      }),
      table({
        id: 'paths',
        title: 'Parameter paths',
        sheet: 'Parameter paths',
        columns: [textCol('end', 'Window end'), textCol('parameter', 'Parameter'), numCol('estimate', 'Estimate', 'value'), numCol('se', 's.e.', 'value')],
        rows: r.paths.flatMap((w) => w.params.map((p) => [w.end, p.name, p.estimate, p.se] as CellValue[])),
        rowKeys: r.paths.flatMap((w) => w.params.map((p) => `${w.end}|${p.name}`)),
        role: 'appendix',
      }),
    );
  }
  tables.push(
    table({
      id: 'windows',
      title: 'Windows',
      sheet: 'Windows',
      columns: [
        textCol('start', 'Start'),
        textCol('end', 'End'),
        textCol('oosStart', 'Held out from'),
        textCol('oosEnd', 'Held out to'),
        boolCol('ok', 'Estimated'),
        numCol('oosRmse', 'out-of-sample RMSE across assets', 'percent', u.pctPeriod),
        textCol('reason', 'Reason'),
      ],
      rows: r.windowList.map((w) => [w.start, w.end, w.oosStart, w.oosEnd, w.ok, w.oosRmse !== undefined ? finite(percent(w.oosRmse)) : null, opt(w.reason)]),
      rowKeys: r.windowList.map((w) => w.end),
      warnings: failWarn.map((w) => ({ ...w, rows: r.windowList.flatMap((x, i) => (x.ok ? [] : [i])) })),
      role: 'appendix',
    }),
  );
  return tables;
}

/**
 * The weighting of a GMM back-test in words. The result records the first-stage weight
 * ("identity" or "hj") in `sample.weighting`; each window runs the stage from it.
 */
export function backtestWeighting(stage: string, weight: string): string {
  if (weight !== 'identity' && weight !== 'hj') return weight;
  const w1 = weight === 'hj' ? "W = (E[RR'])^-1 (Hansen-Jagannathan)" : 'W = I';
  switch (stage) {
    case 'first':
      return `first stage in each window, ${w1}`;
    case 'second':
      return `second stage in each window, W = S^-1 with S from the window's first stage (${w1})`;
    case 'iterated':
      return `iterated in each window, W = S^-1 updated to its fixed point (start: ${w1})`;
    case 'cue':
      return `continuously updated in each window, W = S(theta)^-1 (start: second stage from ${w1})`;
    default:
      return `${stage} stage in each window, first-stage ${w1}`;
  }
}

/**
 * Sample notes the presentation already says elsewhere: the window rule (the header's
 * windows line) and the R^2 benchmark (the summary table's note).
 */
const REPEATED_NOTES = [/^back-test: (rolling|expanding) windows of /, /^in-sample and out-of-sample R\^2 both against/];

export function presentBacktest(r: BacktestResult): Presentation {
  const header = sampleLines(r.sample).map((l) => (l.key === 'weighting' && r.sample.method === 'gmm' ? { ...l, value: backtestWeighting(r.sample.stage, r.sample.weighting) } : l));
  return {
    kind: 'backtest',
    title: `Back-test: ${r.label}`,
    caution: CAUTION,
    header: [...header, ...backtestWindowLines(r)],
    tables: backtestTables(r),
    notes: [...new Set(r.sample.notes.map(noteText))].filter((n) => !REPEATED_NOTES.some((re) => re.test(n))),
    warnings: r.warnings ?? [],
  };
}

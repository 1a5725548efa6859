/**
 * The readable back-test summary (`deflator backtest` without --json). Pure function of
 * the result. Pricing errors and returns in percent per period (3 decimals), R^2 with 3
 * decimals, parameters with 6 significant digits; the JSON carries every number in full.
 */
import { CAUTION, type BacktestResult } from '../results.js';
import { alignTable } from '../report/fit-text.js';
import { instrumentText } from '../report/header.js';
import { fixed, significant } from '../report/numbers.js';

const pct = (x: number) => fixed(100 * x, 3);
const est = (x: number) => significant(x, 6);

export function backtestText(r: BacktestResult): string {
  const s = r.sample;
  const b = r.spec;
  const out: string[] = [];
  out.push(`Back-test: ${r.label} (${s.method === 'gmm' ? 'GMM' : s.method}, ${s.stage} stage)`);
  out.push('');
  out.push(`Sample        ${s.start} to ${s.end}, ${s.frequency}, T = ${s.T}, N = ${s.N}, K = ${s.K}`);
  if (s.instruments) out.push(`Instruments   ${instrumentText(s)}`);
  out.push(`Windows       ${b.expanding ? 'expanding from' : 'rolling,'} ${b.window} periods, step ${b.step}, ${b.horizon} held-out period(s) each`);
  out.push(`              ${r.windows} windows, ${r.windowsFailed} failed; first ${r.windowList[0]?.start} to ${r.windowList[0]?.end}, last ${r.windowList[r.windowList.length - 1]?.start} to ${r.windowList[r.windowList.length - 1]?.end}`);
  out.push(`Lags          ${s.lags} (${s.lagsRule}); ${s.centered ? 'centred' : 'uncentred'} Newey-West; first-stage weight ${s.weighting}`);
  out.push('');
  out.push('Fit (pricing errors in % per period)');
  out.push(
    alignTable(
      ['', 'in sample', 'out of sample'],
      [
        ['RMSE across assets', pct(r.inSample.rmse), pct(r.oos.rmse)],
        ['pooled RMSE (all windows, assets)', '', pct(r.oos.rmsePooled)],
        ['mean absolute error', pct(r.inSample.mape), ''],
        ['R^2 against zero alpha', fixed(r.inSample.r2, 3), fixed(r.oos.r2, 3)],
      ],
    ),
  );
  out.push('');
  out.push('Per asset (mean over windows, % per period)');
  const inst = r.perAsset.some((a) => a.instrument !== undefined);
  out.push(
    alignTable(
      ['asset', ...(inst ? ['instrument'] : []), 'alpha in', 'alpha out', 'held-out return'],
      r.perAsset.map((a) => [a.asset, ...(inst ? [a.instrument ?? 'const'] : []), pct(a.alphaIn), pct(a.alphaOos), pct(a.meanReturnOos)]),
    ),
  );
  if (r.paths.length) {
    const names = r.paths[0].params.map((p) => p.name);
    const rows = names.map((name, k) => {
      const v = r.paths.map((p) => p.params[k].estimate);
      const se = r.paths.map((p) => p.params[k].se);
      const mean = v.reduce((a, x) => a + x, 0) / v.length;
      return [name, est(v[0]), est(v[v.length - 1]), est(mean), est(Math.min(...v)), est(Math.max(...v)), est(se.reduce((a, x) => a + x, 0) / se.length)];
    });
    out.push('');
    out.push(`Parameter paths over ${r.paths.length} windows (first ends ${r.paths[0].end}, last ${r.paths[r.paths.length - 1].end})`);
    out.push(alignTable(['parameter', 'first', 'last', 'mean', 'min', 'max', 'mean s.e.'], rows));
  }
  if (r.failures.length) {
    out.push('');
    out.push(`Failed windows (${r.failures.length}, left out of the summaries)`);
    const shown = r.failures.slice(0, 10);
    out.push(alignTable(['window end', 'reason'], shown.map((f) => [f.end, f.reason])));
    if (r.failures.length > shown.length) out.push(`  ... and ${r.failures.length - shown.length} more (see --json)`);
  }
  out.push('');
  for (const n of s.notes) out.push(`Note: ${n}`);
  out.push('');
  out.push(CAUTION);
  return `${out.join('\n')}\n`;
}

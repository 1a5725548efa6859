/**
 * The readable report of one fit (`deflator fit` without --json): plain text a
 * researcher can paste into a working paper's appendix. Pure function of the result.
 *
 * Layout: title and sample header (window, T, N, K, lags and how they were chosen,
 * stage, weighting); parameter table; pricing-error table per period and annualised (in
 * percent); tests; Hansen-Jagannathan distance; cross-sectional fit; the fitted discount
 * factor against the volatility bound; convergence; notes; the caution line.
 * Roundings: estimates and s.e. 6 significant digits, t and statistics 3 decimals,
 * p-values 4 decimals, pricing errors and mean returns in percent with 3 decimals
 * (annualised: 2). The JSON output carries every number in full precision.
 */
import { CAUTION, type FitResult, type TestResult } from '../results.js';
import { instrumentText } from './header.js';
import { fixed, significant } from './numbers.js';

const PERIOD_WORD: Record<string, string> = { daily: 'day', weekly: 'week', monthly: 'month', quarterly: 'quarter', annual: 'year' };

/** Columns padded to their widest cell; the first column left-aligned, the others right-aligned. */
export function alignTable(header: string[], rows: string[][], indent = '  '): string {
  const widths = header.map((h, j) => Math.max(h.length, ...rows.map((r) => (r[j] ?? '').length)));
  const line = (cells: string[]) => indent + cells.map((c, j) => (j === 0 ? c.padEnd(widths[j]) : c.padStart(widths[j]))).join('  ').trimEnd();
  const rule = indent + widths.map((w) => '-'.repeat(w)).join('  ');
  return [line(header), rule, ...rows.map(line)].join('\n');
}

const est = (x: number) => significant(x, 6);
const stat = (x: number) => fixed(x, 3);
const pval = (x: number) => (x > 0 && x < 0.0001 ? '<0.0001' : fixed(x, 4));
const pct = (x: number, d: number) => fixed(100 * x, d);

function testRow(t: TestResult): string[] {
  const df = t.df !== undefined ? String(t.df) : t.df1 !== undefined ? `${t.df1}, ${t.df2}` : '';
  return [t.name, stat(t.stat), df, pval(t.p)];
}

function modelLine(r: FitResult): string {
  const s = r.sample;
  switch (s.model) {
    case 'linear':
      return "linear, demeaned: m = 1 - b'(f - mu), mu estimated";
    case 'linear-raw':
      return "linear: m = 1 - b'f";
    case 'linear-gross':
      return "linear on gross returns: m = a - b'f, E[m R] = 1";
    case 'consumption':
      return `consumption, power utility: m = delta (C_t/C_t-1)^(-gamma), ${s.returns === 'gross' ? 'E[m R] = 1' : 'E[m R^e] = 0'}`;
    default:
      return s.model;
  }
}

export function fitText(r: FitResult): string {
  const s = r.sample;
  const per = PERIOD_WORD[s.frequency] ?? 'period';
  const out: string[] = [];
  const method = s.method === 'gmm' ? 'GMM' : s.method === 'time-series' ? 'time-series regressions' : s.method === 'two-pass' ? 'two-pass cross-sectional regressions' : s.method;
  const stage = s.method !== 'gmm' ? s.stage : s.stage === 'cue' ? 'continuously updated' : `${s.stage} stage`;
  out.push(`${r.label}: ${method}, ${stage}`);
  out.push('');
  out.push(`Sample        ${s.start} to ${s.end}, ${s.frequency}, T = ${s.T}`);
  out.push(`Test assets   N = ${s.N} (${s.returns} returns): ${s.assets.join(', ')}`);
  out.push(`Factors       K = ${s.K}: ${s.factors.join(', ')}`);
  if (s.instruments) out.push(`Instruments   ${instrumentText(s)}`);
  out.push(`Model         ${modelLine(r)}`);
  out.push(`Weighting     ${s.weighting}`);
  out.push(`Long-run cov. Newey-West, Bartlett, ${s.lags} lag${s.lags === 1 ? '' : 's'} (${s.lagsRule}), ${s.centered ? 'centered' : 'uncentered'} moments, divide by T`);
  out.push('');

  const shanken = r.params.some((p) => p.seShanken !== undefined);
  out.push('Parameter estimates');
  out.push(
    alignTable(
      ['parameter', 'estimate', 's.e.', 't', 'p', ...(shanken ? ['s.e. (Shanken)'] : [])],
      r.params.map((p) => [p.name, est(p.estimate), est(p.se), stat(p.t), pval(p.p), ...(shanken ? [p.seShanken !== undefined ? est(p.seShanken) : ''] : [])]),
    ),
  );
  const paramNotes = [...new Set(r.params.map((p) => p.note).filter((n): n is string => !!n))];
  for (const n of paramNotes) out.push(`  (${r.params.filter((p) => p.note === n).map((p) => p.name).join(', ')}: ${n})`);
  out.push('  p: two-sided, normal');
  out.push('');

  const inst = r.pricingErrors.some((e) => e.instrument !== undefined);
  out.push(`Pricing errors (percent; per ${per}, and annualised x ${s.periodsPerYear})${inst ? '; a scaled row is the asset\'s return times the instrument' : ''}`);
  out.push(
    alignTable(
      ['asset', ...(inst ? ['instrument'] : []), 'alpha', 's.e.', 't', 'alpha ann.', 's.e. ann.', 'mean ret.', 'predicted'],
      r.pricingErrors.map((e) => [e.asset, ...(inst ? [e.instrument ?? 'const'] : []), pct(e.alpha, 3), pct(e.se, 3), stat(e.t), pct(e.alphaAnnual, 2), pct(e.seAnnual, 2), pct(e.meanReturn, 3), pct(e.predicted, 3)]),
    ),
  );
  out.push('');

  out.push('Tests');
  const tests = [r.test, ...r.tests.filter((t) => !(t.name === r.test.name && t.stat === r.test.stat))];
  out.push(alignTable(['test', 'statistic', 'df', 'p'], tests.map(testRow)));
  for (const t of tests) if (t.note) out.push(`  (${t.name}: ${t.note})`);
  out.push('');

  if (r.hj) {
    out.push('Hansen-Jagannathan distance');
    out.push(`  HJ = ${est(r.hj.distance)}, p = ${pval(r.hj.p)}`);
    out.push(`  (${r.hj.method})`);
    out.push('');
  }

  out.push('Cross-sectional fit');
  out.push(
    alignTable(
      ['measure', `per ${per}`, 'annualised'],
      [
        ['MAPE (percent)', pct(r.fit.mape, 3), pct(r.fit.mapeAnnual, 2)],
        ['RMSE (percent)', pct(r.fit.rmse, 3), pct(r.fit.rmseAnnual, 2)],
        ['R^2 (cross-section)', fixed(r.fit.r2, 4), ''],
      ],
    ),
  );
  out.push('');

  if (r.sdf || r.bound) {
    out.push('Discount factor and volatility bound');
    if (r.sdf) out.push(`  fitted m_t: E[m] = ${est(r.sdf.mean)}, sigma(m) = ${est(r.sdf.std)}, sigma(m)/E[m] = ${est(r.sdf.std / r.sdf.mean)}`);
    if (r.bound) {
      if (r.bound.curve && r.bound.curve.length) {
        const lowest = r.bound.curve.reduce((a, b) => (b.sigma < a.sigma ? b : a));
        out.push(`  bound (gross returns): lowest sigma_min on the plotted range ${est(lowest.sigma)} at E[m] = ${est(lowest.mean)}; max Sharpe ratio of zero-cost portfolios ${est(r.bound.maxSharpe)} per ${per}`);
      } else out.push(`  bound (excess returns): sigma(m)/E[m] >= max Sharpe ratio = ${est(r.bound.maxSharpe)} per ${per}`);
    }
    out.push('');
  }

  if (r.convergence) {
    out.push(`Convergence   ${r.convergence.converged ? 'converged' : 'not converged'} after ${r.convergence.iterations} iteration${r.convergence.iterations === 1 ? '' : 's'} (${r.convergence.criterion})`);
    out.push('');
  }

  const notes = [...new Set([...s.notes, ...r.notes])];
  if (notes.length) {
    out.push('Notes');
    for (const n of notes) out.push(`  - ${n}`);
    out.push('');
  }
  out.push(CAUTION);
  return `${out.join('\n')}\n`;
}

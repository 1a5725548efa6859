/**
 * LaTeX export: booktabs tables ready to \input (the including document loads
 * \usepackage{booktabs}). Parameters show the estimate with its standard error in
 * parentheses beneath; pricing errors show alpha with its t-statistic. Every table
 * carries a note stating the displayed rounding; the stored result keeps full precision.
 */
import type { AnyResult, BacktestResult, CompareResult, FitResult } from '../results.js';
import { CAUTION } from '../results.js';
import type { ExportRecord } from './header.js';
import { fixed } from './numbers.js';
import { allTests, resultTitle } from './tables.js';
import { batchAsComparison, rankBatch } from '../batch/rank.js';

/** A batch's LaTeX tables: its best tasks by HJ distance (a paper's table, not the whole grid). */
const BATCH_LATEX_TOP = 20;

const SPECIAL: Record<string, string> = {
  '\\': '\\textbackslash{}',
  '{': '\\{',
  '}': '\\}',
  '$': '\\$',
  '&': '\\&',
  '#': '\\#',
  '%': '\\%',
  '_': '\\_',
  '^': '\\textasciicircum{}',
  '~': '\\textasciitilde{}',
  '<': '\\textless{}',
  '>': '\\textgreater{}',
};

/** Text safe in a LaTeX paragraph or cell. */
export function latexEscape(s: string): string {
  return s.replace(/[\\{}$&#%_^~<>]/g, (c) => SPECIAL[c]).replace(/[\r\n]+/g, ' ');
}

/** A number in text mode, rounded to `decimals`, with a true minus sign. */
export function latexNumber(x: number, decimals: number): string {
  if (x !== 0 && Math.abs(x) < 0.5 * 10 ** -decimals) {
    const [m, e] = x.toExponential(2).split('e');
    return `$${m}\\times 10^{${Number(e)}}$`;
  }
  const s = fixed(x, decimals);
  return s.startsWith('-') ? `$-$${s.slice(1)}` : s;
}

const DEC = { value: 4, se: 4, t: 2, p: 3, stat: 3, pct: 3, pctAnnual: 2 } as const;

/** Significance stars, common practice: * 10%, ** 5%, *** 1%. */
function stars(p: number): string {
  return p < 0.01 ? '^{***}' : p < 0.05 ? '^{**}' : p < 0.1 ? '^{*}' : '';
}

function table(caption: string, label: string, spec: string, head: string, body: string[], note: string): string {
  return [
    '\\begin{table}[htbp]',
    '\\centering',
    `\\caption{${latexEscape(caption)}}`,
    `\\label{${label}}`,
    `\\begin{tabular}{${spec}}`,
    '\\toprule',
    `${head} \\\\`,
    '\\midrule',
    ...body,
    '\\bottomrule',
    '\\end{tabular}',
    '',
    '\\smallskip',
    `{\\footnotesize ${note}\\par}`,
    '\\end{table}',
    '',
  ].join('\n');
}

function sampleNote(r: AnyResult): string {
  const s = r.sample;
  return latexEscape(
    `Sample ${s.start} to ${s.end}, ${s.frequency}, T = ${s.T}, N = ${s.N}, K = ${s.K}; ${s.method}, ${s.stage} stage, ${s.weighting} weighting, ${s.lags} lags (${s.lagsRule}).`,
  );
}

function withStars(text: string, p: number): string {
  const st = stars(p);
  return st ? `${text}$${st}$` : text;
}

function fitLatex(r: FitResult, tag: string): string {
  const params = r.params.flatMap((p) => [
    `${latexEscape(p.name)} & ${withStars(latexNumber(p.estimate, DEC.value), p.p)} & ${latexNumber(p.t, DEC.t)} & ${latexNumber(p.p, DEC.p)} \\\\`,
    ` & (${latexNumber(p.se, DEC.se)}) & & \\\\`,
    ...(p.seShanken !== undefined ? [` & [${latexNumber(p.seShanken, DEC.se)}] & & \\\\`] : []),
  ]);
  const shanken = r.params.some((p) => p.seShanken !== undefined) ? 'Shanken (1992) corrected standard errors in brackets; $t$ and $p$ use the first. ' : '';
  const pe = r.pricingErrors.map(
    (e) =>
      `${latexEscape(e.asset)} & ${latexNumber(100 * e.alpha, DEC.pct)} & ${latexNumber(e.t, DEC.t)} & ${latexNumber(100 * e.alphaAnnual, DEC.pctAnnual)} & ${latexNumber(100 * e.meanReturn, DEC.pct)} & ${latexNumber(100 * e.predicted, DEC.pct)} \\\\`,
  );
  const tests = allTests(r).map(
    (t) => `${latexEscape(t.name)} & ${latexNumber(t.stat, DEC.stat)} & ${t.df !== undefined ? String(t.df) : t.df1 !== undefined ? `${t.df1}, ${t.df2 ?? ''}` : ''} & ${latexNumber(t.p, DEC.p)} \\\\`,
  );
  if (r.hj) tests.push(`HJ distance & ${latexNumber(r.hj.distance, DEC.value)} & & ${latexNumber(r.hj.p, DEC.p)} \\\\`);
  const rounding = `Estimates and standard errors rounded to ${DEC.value} decimals, $t$ to ${DEC.t}, $p$ to ${DEC.p}; values smaller than the last shown decimal in scientific notation.`;
  return [
    table(
      `Parameter estimates: ${resultTitle(r)}`,
      `tab:${tag}-params`,
      'lrrr',
      'Parameter & Estimate & $t$ & $p$',
      params,
      `Standard errors in parentheses. ${shanken}${rounding} Significance (common practice): $^{*}$ 10\\%, $^{**}$ 5\\%, $^{***}$ 1\\%. ${sampleNote(r)}`,
    ),
    table(
      `Pricing errors: ${resultTitle(r)}`,
      `tab:${tag}-alphas`,
      'lrrrrr',
      'Asset & $\\hat\\alpha$ (\\%) & $t$ & $\\hat\\alpha$ annual (\\%) & Mean (\\%) & Predicted (\\%)',
      pe,
      `Per-period values in percent rounded to ${DEC.pct} decimals, annualised to ${DEC.pctAnnual}; $t$ to ${DEC.t}. ${sampleNote(r)}`,
    ),
    table(`Tests: ${resultTitle(r)}`, `tab:${tag}-tests`, 'lrrr', 'Test & Statistic & df & $p$', tests, `Statistics rounded to ${DEC.stat} decimals, $p$ to ${DEC.p}. ${sampleNote(r)}`),
  ].join('\n');
}

function backtestLatex(r: BacktestResult, tag: string): string {
  const rows = r.perAsset.map(
    (a) => `${latexEscape(a.asset)} & ${latexNumber(100 * a.alphaOos, DEC.pct)} & ${latexNumber(100 * a.alphaIn, DEC.pct)} & ${latexNumber(100 * a.meanReturnOos, DEC.pct)} \\\\`,
  );
  const summary = [
    `Windows (failed) & ${r.windows} (${r.windowsFailed}) \\\\`,
    `Window, step, horizon & ${r.spec.window}, ${r.spec.step}, ${r.spec.horizon}${r.spec.expanding ? ' (expanding)' : ''} \\\\`,
    `RMSE out of sample (\\%) & ${latexNumber(100 * r.oos.rmse, DEC.pct)} \\\\`,
    `RMSE out of sample, pooled (\\%) & ${latexNumber(100 * r.oos.rmsePooled, DEC.pct)} \\\\`,
    `$R^2$ out of sample & ${latexNumber(r.oos.r2, DEC.p)} \\\\`,
    `RMSE in sample (\\%) & ${latexNumber(100 * r.inSample.rmse, DEC.pct)} \\\\`,
    `$R^2$ in sample & ${latexNumber(r.inSample.r2, DEC.p)} \\\\`,
  ];
  return [
    table(`Back-test summary: ${r.label}`, `tab:${tag}-summary`, 'lr', 'Measure & Value', summary, `Percent values rounded to ${DEC.pct} decimals, $R^2$ to ${DEC.p}. ${sampleNote(r)}`),
    table(
      `Pricing errors in and out of sample: ${r.label}`,
      `tab:${tag}-peralpha`,
      'lrrr',
      'Asset & $\\hat\\alpha$ out of sample (\\%) & $\\hat\\alpha$ in sample (\\%) & Mean out of sample (\\%)',
      rows,
      `Per-period values in percent rounded to ${DEC.pct} decimals. ${sampleNote(r)}`,
    ),
  ].join('\n');
}

function compareLatex(r: CompareResult, tag: string): string {
  const models = r.models.map((m) =>
    m.error
      ? `${latexEscape(m.label)} & \\multicolumn{6}{l}{failed: ${latexEscape(m.error)}} \\\\`
      : `${latexEscape(m.label)} & ${latexNumber(m.test.stat, DEC.stat)} & ${latexNumber(m.test.p, DEC.p)} & ${m.hj ? latexNumber(m.hj.distance, DEC.value) : ''} & ${m.hj ? latexNumber(m.hj.p, DEC.p) : ''} & ${latexNumber(100 * m.fit.rmse, DEC.pct)} & ${latexNumber(m.fit.r2, DEC.p)} \\\\`,
  );
  const params = r.models.flatMap((m) =>
    m.params.flatMap((p) => [
      `${latexEscape(m.label)} & ${latexEscape(p.name)} & ${withStars(latexNumber(p.estimate, DEC.value), p.p)} & ${latexNumber(p.t, DEC.t)} \\\\`,
      ` & & (${latexNumber(p.se, DEC.se)}) & \\\\`,
    ]),
  );
  const out = [
    table(
      resultTitle(r),
      `tab:${tag}-models`,
      'lrrrrrr',
      'Model & Statistic & $p$ & HJ & $p$ (HJ) & RMSE (\\%) & $R^2$',
      models,
      `Statistics rounded to ${DEC.stat} decimals, $p$ and $R^2$ to ${DEC.p}, HJ distance to ${DEC.value}, RMSE in percent per period to ${DEC.pct}. ${sampleNote(r)}`,
    ),
    table(
      `Parameter estimates by model`,
      `tab:${tag}-params`,
      'llrr',
      'Model & Parameter & Estimate & $t$',
      params,
      `Standard errors in parentheses. Estimates rounded to ${DEC.value} decimals, $t$ to ${DEC.t}. Significance (common practice): $^{*}$ 10\\%, $^{**}$ 5\\%, $^{***}$ 1\\%.`,
    ),
  ];
  if (r.hjTests.length) {
    const rows = r.hjTests.map((h) => `${latexEscape(h.a)} & ${latexEscape(h.b)} & ${latexNumber(h.diff, DEC.value)} & ${latexNumber(h.p, DEC.p)} \\\\`);
    out.push(
      table(
        'Tests of equal squared HJ distance',
        `tab:${tag}-hjtests`,
        'llrr',
        'Model A & Model B & Difference & $p$',
        rows,
        latexEscape(`Block bootstrap, ${r.hjTests[0].replications} replications, block length ${r.hjTests[0].block}, seed ${r.hjTests[0].seed}. Differences rounded to ${DEC.value} decimals, p to ${DEC.p}.`),
      ),
    );
  }
  return out.join('\n');
}

/** The LaTeX tables of a result, with a comment block naming the run. */
export function resultToLatex(result: AnyResult, record?: ExportRecord): string {
  const tag = record ? `deflator-run${record.id}` : 'deflator';
  const head = [
    `% deflator ${record ? `run ${record.id}, recorded ${record.createdAt}, version ${record.version}` : 'result'}`,
    record ? `% panel sha256 ${record.panel.sha256}` : '',
    `% ${CAUTION}`,
    '% Needs \\usepackage{booktabs} in the including document.',
    '',
  ].filter((l, i) => l !== '' || i === 4);
  const body =
    result.kind === 'fit'
      ? fitLatex(result, tag)
      : result.kind === 'backtest'
        ? backtestLatex(result, tag)
        : result.kind === 'batch'
          ? `% The ${Math.min(BATCH_LATEX_TOP, result.models.length)} tasks with the smallest HJ distance of ${result.tasks}; the CSV and XLSX exports hold every task.\n${compareLatex(batchAsComparison(result, rankBatch(result, 'hj').slice(0, BATCH_LATEX_TOP)), tag)}`
          : compareLatex(result, tag);
  return `${head.join('\n')}\n${body}`;
}

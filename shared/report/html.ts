/**
 * The self-contained HTML report: one file with inline CSS and inline SVG charts
 * (shared/report/svg.ts), no scripts and no external resources, so it opens the same
 * offline, in a mail attachment or printed to PDF. It renders the presentation model
 * (shared/present): caution, header, warnings, charts, every table with its marks,
 * notes and warnings, the result's notes, the run record and the spec. Numeric cells
 * show the display rounding and hold the exact stored double in `data-value`.
 * Long listings (the m_t series, parameter paths, windows) form an appendix, left out
 * of the printed (PDF) report unless asked for; the m_t series is drawn as a chart.
 */
import type { BacktestResult, CompareResult, DriftResult, FitResult, PresentValueResult, ResultWarning, RunResult } from '../results.js';
import { stringifyExact } from '../records/exact-json.js';
import { present, warningNumbers, type Presentation, type PresentedTable } from '../present/index.js';
import { exactNumber, plainText, tableCellText, ROUNDING_NOTE } from '../present/format.js';
import { annualPercent, percent, unitsFor } from '../present/units.js';
import { recordLines, type ExportRecord } from './header.js';
import { barChart, lineChart, scatterChart, stackedBarChart, standOut, xmlEscape } from './svg.js';
import { flatLevel, mostDrifting } from '../charts/values.js';
import { splitColumns } from './wide.js';
import { batchAsComparison, rankBatch } from '../batch/rank.js';

/** A batch's charts show its best tasks by HJ distance. */
const BATCH_CHART_TOP = 20;

const esc = xmlEscape;

/** Most columns a printed (PDF) table keeps side by side at the print font size, A4 portrait. */
const PRINT_COLUMNS = 10;

/** Normal 97.5% quantile for the whiskers (alpha ± 1.96 s.e.): common practice for a 95% band. */
const Z95 = 1.959963984540054;

const CSS = `
body{font-family:Helvetica,Arial,sans-serif;color:#1d1d1d;margin:24px auto;max-width:1040px;padding:0 16px;line-height:1.4}
h1{font-size:22px;margin:0 0 4px}h2{font-size:17px;margin:28px 0 8px;border-bottom:1px solid #ccc;padding-bottom:3px}
.caution{background:#fff6e0;border:1px solid #e0b84a;padding:6px 10px;margin:10px 0;font-size:13px}
.warnings{background:#fdecea;border:1px solid #d9534f;padding:6px 10px;margin:10px 0;font-size:12.5px}
.warnings li{margin:2px 0}
table{border-collapse:collapse;margin:6px 0 4px;font-size:12px}
th,td{padding:3px 8px;border-bottom:1px solid #e2e2e2;text-align:left;vertical-align:top}
th{border-bottom:2px solid #777;background:#f4f4f4}
td.num{text-align:right;font-variant-numeric:tabular-nums;white-space:nowrap}
td.best{font-weight:bold;background:#eef6ee}
tr.warned td:first-child{color:#a02a22}
table.header td:first-child,table.record td:first-child{color:#555;white-space:nowrap}
code,.mono{font-family:Menlo,Consolas,monospace;font-size:11.5px;word-break:break-all}
.charts{display:flex;flex-wrap:wrap;gap:16px}
.charts figure{margin:0}
.charts figcaption{font-size:11.5px;color:#555;max-width:640px}
.charts svg{border:1px solid #ddd}
pre.spec{background:#f7f7f7;border:1px solid #e2e2e2;padding:8px;font-size:11.5px;white-space:pre-wrap}
p.note,ul.tnotes{font-size:11.5px;color:#555;margin:2px 0 14px}
ul.tnotes{padding-left:18px}
p.twarn{font-size:11.5px;color:#a02a22;margin:2px 0}
@media print{body{margin:0;max-width:none;font-size:11px}h2{break-after:avoid}table,svg,figure{break-inside:avoid}table{font-size:9px}th,td{padding:1px 5px}
.charts{display:grid;grid-template-columns:1fr 1fr;gap:8px}.charts svg{width:100%;height:auto}.charts figcaption{font-size:9px}
ul.tnotes,p.note{font-size:9px}pre.spec{font-size:8px}table.record,table.header{font-size:9px}}
`;

function tableHtml(t: PresentedTable, ref: (w: ResultWarning) => number): string {
  const head = t.columns.map((c) => `<th data-key="${esc(c.key)}"${c.note ? ` title="${esc(c.note)}"` : ''}>${esc(c.header)}</th>`).join('');
  const rowWarn = new Map<number, number[]>();
  for (const w of t.warnings) for (const i of w.rows ?? []) rowWarn.set(i, [...(rowWarn.get(i) ?? []), ref(w)]);
  const rows = t.rows.map((row, i) => {
    const cells = row.map((v, j) => {
      const col = t.columns[j];
      const best = (t.marks[col.key] ?? []).includes(i);
      const warn = j === 0 && rowWarn.has(i) ? ` <sup>!${[...new Set(rowWarn.get(i))].join(',')}</sup>` : '';
      if (v === null) return '<td></td>';
      if (typeof v === 'number') {
        return `<td class="num${best ? ' best' : ''}" data-value="${exactNumber(v)}">${esc(tableCellText(t, i, j))}${best ? '*' : ''}</td>`;
      }
      if (typeof v === 'boolean') return `<td data-value="${v}">${v ? 'yes' : 'no'}</td>`;
      return `<td>${esc(v)}${warn}</td>`;
    });
    return `<tr data-row="${esc(t.rowKeys[i] ?? String(i))}"${rowWarn.has(i) ? ' class="warned"' : ''}>${cells.join('')}</tr>`;
  });
  const notes = t.notes.length ? `<ul class="tnotes">${t.notes.map((n) => `<li>${esc(plainText(n))}</li>`).join('')}</ul>` : '';
  const warns = t.warnings
    .filter((w) => !w.rows)
    .map((w) => `<p class="twarn" data-warning="${esc(w.code)}">! Warning ${ref(w)} (${esc(w.code)}) applies to this table.</p>`)
    .join('');
  return `<table class="result" id="table-${esc(t.id)}" data-table="${esc(t.id)}"><caption style="caption-side:top;text-align:left;font-weight:bold;padding:2px 0">${esc(t.title)}</caption><thead><tr>${head}</tr></thead><tbody>${rows.join('')}</tbody></table>${warns}${notes}`;
}

function keyValueTable(cls: string, lines: { key: string; value: string }[]): string {
  return `<table class="${cls}"><tbody>${lines.map((l) => `<tr><td>${esc(l.key)}</td><td${/sha256/.test(l.key) ? ' class="mono"' : ''}>${esc(l.value)}</td></tr>`).join('')}</tbody></table>`;
}

function figure(svg: string, caption: string): string {
  return `<figure>${svg}<figcaption>${esc(caption)}</figcaption></figure>`;
}

const LABELLED = 6;

function fitCharts(r: FitResult): string[] {
  if (!r.pricingErrors.length) return [];
  const u = unitsFor(r.sample.frequency, r.sample.periodsPerYear);
  const ppy = r.sample.periodsPerYear;
  const gross = r.sample.returns === 'gross';
  const many = r.pricingErrors.length > 40;
  const bigAlpha = new Set([...standOut(r.pricingErrors, (e) => Math.abs(e.t), LABELLED)].map((e) => e.asset));
  const charts = [
    figure(
      barChart({
        id: 'chart-pricing-errors',
        title: `Pricing errors (${u.pctYear}), 95% band`,
        yLabel: `alpha, ${u.pctYear}`,
        bars: r.pricingErrors.map((e) => ({
          label: e.asset,
          value: percent(e.alphaAnnual),
          low: percent(e.alphaAnnual - Z95 * e.seAnnual),
          high: percent(e.alphaAnnual + Z95 * e.seAnnual),
        })),
        labelled: bigAlpha,
      }),
      `Annualised pricing error of each test asset with alpha ± 1.96 s.e. (a 95% normal band, common practice).${many ? ` Labelled: the ${LABELLED} assets with the largest |t|; every asset is in the pricing errors table.` : ''}`,
    ),
  ];
  if (!gross) {
    const off = new Set([...standOut(r.pricingErrors, (e) => Math.abs(e.alpha), LABELLED)].map((e) => e.asset));
    charts.push(
      figure(
        scatterChart({
          id: 'chart-predicted-realised',
          title: `Predicted and realised mean return (${u.pctYear})`,
          xLabel: `predicted, ${u.pctYear}`,
          yLabel: `realised, ${u.pctYear}`,
          diagonal: true,
          points: r.pricingErrors.map((e) => ({ label: e.asset, x: annualPercent(e.predicted, ppy), y: annualPercent(e.meanReturn, ppy) })),
          labelled: off,
        }),
        `On the dashed 45-degree line the model prices the asset exactly. Labelled: the ${Math.min(LABELLED, r.pricingErrors.length)} assets farthest from the line, where a label has room; every asset is in the pricing errors table.`,
      ),
    );
  }
  if (r.sdf && r.sdf.values.length > 1) {
    charts.push(
      figure(
        lineChart({ id: 'chart-sdf', title: 'Fitted discount factor m_t', yLabel: 'm_t', steps: r.sdf.periods, series: [{ name: 'm_t', values: r.sdf.values }], showLegend: false }),
        `The fitted discount factor in each period (E[m] = ${r.sdf.mean.toPrecision(6)}, sigma(m) = ${r.sdf.std.toPrecision(6)} per ${u.word}); the values are in the appendix table and the CSV and XLSX exports.`,
      ),
    );
  }
  const discounted = discountedChart(r);
  if (discounted) charts.push(discounted);
  return charts;
}

/** Paths drawn in a report's discounted-value chart: the ones that drift most (every path is in the CSV and XLSX exports). */
const DISCOUNTED_DRAWN = 6;

function discountedChart(r: FitResult): string | null {
  const d = r.discounted;
  if (!d || d.periods.length < 2 || !Object.keys(d.series).length) return null;
  const gains = d.form === 'gains';
  const k = gains ? 100 : 1;
  const named = mostDrifting(d, DISCOUNTED_DRAWN);
  const flat = flatLevel(d) * k;
  return figure(
    lineChart({
      id: 'chart-discounted',
      title: gains ? 'Discounted gains G_t (%)' : 'Discounted value',
      yLabel: gains ? 'sum of m_s R^e_s, %' : 'prod of m_s R_s',
      steps: d.periods,
      series: [{ name: `priced (flat at ${flat})`, values: d.periods.map(() => flat) }, ...named.map((a) => ({ name: a, values: d.series[a].map((v) => v * k) }))],
    }),
    `${gains ? "Each asset's discounted gains: their mean increment is its pricing error, zero for an asset the model prices (the flat line)." : "Each asset's discounted value: its mean increment ratio is 1 + its pricing error, 1 for an asset the model prices (the flat line)."} Drawn: the ${named.length} of ${Object.keys(d.series).length} paths that end farthest from the flat line; every path is in the appendix table and the CSV and XLSX exports.${d.note ? ` ${d.note}.` : ''}`,
  );
}

function presentValueCharts(r: PresentValueResult): string[] {
  const years = r.series.years;
  const charts = [
    figure(
      lineChart({ id: 'chart-dp', title: 'Dividend-price ratio dp = ln(D/P)', yLabel: 'dp', steps: years, series: [{ name: 'dp', values: r.series.dp }, { name: 'mean', values: years.map(() => r.meanDp) }] }),
      `dp each year and its mean over the ${r.sample.T} years (rho = 1/(1 + exp(mean dp)) = ${r.rho.toPrecision(6)}).`,
    ),
  ];
  const x = r.series.dp.slice(0, -1);
  const ys = { r: r.series.r, dd: r.series.dd, dp: r.series.dp.slice(1) };
  const names = { r: ['Return r(t+1)', 'b_r'], dd: ['Dividend growth dd(t+1)', 'b_d'], dp: ['dp(t+1)', 'phi'] } as const;
  for (const key of ['r', 'dd', 'dp'] as const) {
    const g = r.regressions[key];
    charts.push(
      figure(
        scatterChart({
          id: `chart-regression-${key}`,
          title: `${names[key][0]} on dp(t)`,
          xLabel: 'dp(t)',
          yLabel: names[key][0],
          points: x.map((v, t) => ({ label: years[t + 1], x: v, y: ys[key][t] })),
          fitLine: { intercept: g.a, slope: g.b },
          labelled: new Set<string>(),
        }),
        `Each year's dp against the next year's value, with the OLS line: ${names[key][1]} = ${g.b.toPrecision(4)} (Newey-West s.e. ${g.seB.toPrecision(3)}), R^2 ${g.r2.toPrecision(3)}.`,
      ),
    );
  }
  return charts;
}

function driftCharts(r: DriftResult): string[] {
  const pct = (v: number | null) => (v === null ? null : v * 100);
  return [
    figure(
      stackedBarChart({
        id: 'chart-drift-split',
        title: 'Drift split (% per year)',
        yLabel: '% per year',
        partNames: ['price growth', 'dividend yield', 'drift (no split)'],
        markerName: 'drift mu',
        bars: r.assets.map((a) => ({ label: a.asset, parts: a.source === 'returns' ? [null, null, pct(a.drift)] : [pct(a.priceGrowth), pct(a.dividendYield), null], marker: a.drift * 100 })),
      }),
      "Each asset's annual drift as price growth plus dividend yield (they add up to the drift, the marker); an asset stored as returns has no split and shows its drift alone.",
    ),
  ];
}

function backtestCharts(r: BacktestResult): string[] {
  const charts: string[] = [];
  const u = unitsFor(r.sample.frequency, r.sample.periodsPerYear);
  const ppy = r.sample.periodsPerYear;
  if (r.perAsset.length) {
    const big = new Set([...standOut(r.perAsset, (a) => Math.abs(a.alphaOos), LABELLED)].map((a) => a.asset));
    const off = new Set([...standOut(r.perAsset, (a) => Math.abs(a.alphaOos - a.alphaIn), LABELLED)].map((a) => a.asset));
    charts.push(
      figure(
        barChart({
          id: 'chart-oos-errors',
          title: `Out-of-sample pricing errors (${u.pctYear})`,
          yLabel: `alpha out of sample, ${u.pctYear}`,
          bars: r.perAsset.map((a) => ({ label: a.asset, value: annualPercent(a.alphaOos, ppy) })),
          labelled: big,
        }),
        "Each asset's held-out pricing error, averaged over the windows, annualised.",
      ),
      figure(
        scatterChart({
          id: 'chart-in-vs-out',
          title: `Pricing error in and out of sample (${u.pctYear})`,
          xLabel: `in sample (mean over windows), ${u.pctYear}`,
          yLabel: `out of sample, ${u.pctYear}`,
          diagonal: true,
          points: r.perAsset.map((a) => ({ label: a.asset, x: annualPercent(a.alphaIn, ppy), y: annualPercent(a.alphaOos, ppy) })),
          labelled: off,
        }),
        `In sample: each window's own errors on its estimation periods, averaged over the windows. Labelled: the ${Math.min(LABELLED, r.perAsset.length)} assets farthest from the line, where a label has room; every asset is in the per-asset table.`,
      ),
    );
  }
  if (r.paths.length) {
    const names = r.paths[0].params.map((p) => p.name);
    const series = names
      .map((name) => ({ name, values: r.paths.map((w) => w.params.find((p) => p.name === name)?.estimate ?? NaN) }))
      .filter((s) => s.values.every(Number.isFinite));
    if (series.length) charts.push(figure(lineChart({ id: 'chart-paths', title: 'Parameter paths', yLabel: 'estimate', steps: r.paths.map((w) => w.end), series }), 'Each parameter estimated on each window, by the window\'s last period.'));
  }
  return charts;
}

function compareCharts(r: CompareResult): string[] {
  const ok = r.models;
  if (!ok.length) return [];
  const u = unitsFor(r.sample.frequency, r.sample.periodsPerYear);
  const charts = [
    figure(
      barChart({ id: 'chart-rmse', title: `RMSE of pricing errors (${u.pctYear})`, yLabel: `RMSE, ${u.pctYear}`, bars: ok.map((m) => ({ label: m.label, value: percent(m.fit.rmseAnnual) })) }),
      'Root mean square pricing error across the test assets, in sample, annualised.',
    ),
  ];
  const hj = ok.filter((m) => m.hj);
  if (hj.length) charts.push(figure(barChart({ id: 'chart-hj', title: 'HJ distance', yLabel: `HJ distance, ${u.perPeriod}`, bars: hj.map((m) => ({ label: m.label, value: m.hj!.distance })) }), 'Hansen-Jagannathan distance of each model (the same weighting for every model).'));
  return charts;
}

export interface HtmlOptions {
  /** Generated-at stamp shown in the footer; omitted when absent (keeps output deterministic). */
  generatedAt?: string;
  /** Add the appendix tables (long listings). Default true. */
  appendix?: boolean;
  /** For print (PDF): wide tables split into column groups that fit the page. */
  print?: boolean;
}

function warningsHtml(p: Presentation): string {
  if (!p.warnings.length) return '';
  return `<div class="warnings" id="warnings"><b>Warnings: these results should not be trusted as they stand.</b><ol>${p.warnings
    .map((w) => `<li data-warning="${esc(w.code)}"><b>${esc(w.code)}</b>${w.model ? ` (${esc(w.model)})` : ''}: ${esc(w.message)}</li>`)
    .join('')}</ol></div>`;
}

/** The whole report as one HTML document. */
export function resultToHtml(result: RunResult, record?: ExportRecord, options: HtmlOptions = {}): string {
  const p = present(result);
  const ref = warningNumbers(p.warnings);
  const charts =
    result.kind === 'fit'
      ? fitCharts(result)
      : result.kind === 'backtest'
        ? backtestCharts(result)
        : result.kind === 'batch'
          ? compareCharts(batchAsComparison(result, rankBatch(result, 'hj').slice(0, BATCH_CHART_TOP)))
          : result.kind === 'present-value'
            ? presentValueCharts(result)
            : result.kind === 'drift'
              ? driftCharts(result)
              : compareCharts(result);
  const fitPage = (t: PresentedTable) => (options.print ? splitColumns(t, PRINT_COLUMNS) : [t]);
  const main = p.tables.filter((t) => t.role === 'main');
  const appendix = p.tables.filter((t) => t.role === 'appendix');
  const withAppendix = options.appendix ?? true;
  const parts = [
    '<!DOCTYPE html>',
    '<html lang="en"><head><meta charset="utf-8">',
    `<title>${esc(`deflator: ${p.title}${record ? ` (run ${record.id})` : ''}`)}</title>`,
    `<meta name="generator" content="deflator${record ? ` ${esc(record.version)}` : ''}">`,
    `<style>${CSS}</style></head><body>`,
    `<h1>${esc(p.title)}</h1>`,
    record ? `<div class="sub">Run ${record.id}, recorded ${esc(record.createdAt)}, deflator ${esc(record.version)}</div>` : '',
    `<p class="caution" id="caution">${esc(p.caution)}</p>`,
    warningsHtml(p),
    keyValueTable('header', p.header),
    charts.length ? `<h2>Charts</h2><div class="charts">${charts.join('\n')}</div>` : '',
    '<h2>Tables</h2>',
    `<p class="note">${esc(ROUNDING_NOTE)} Cells marked * are the best in their column by the rule in the table's note; !n refers to warning n.</p>`,
    ...main.flatMap(fitPage).map((t) => tableHtml(t, ref)),
    p.notes.length ? `<h2>Notes</h2><ul>${p.notes.map((n) => `<li>${esc(plainText(n))}</li>`).join('')}</ul>` : '',
  ];
  if (appendix.length) {
    if (withAppendix) parts.push('<h2>Appendix</h2>', ...appendix.flatMap(fitPage).map((t) => tableHtml(t, ref)));
    else parts.push(`<p class="note">Left out of this report: ${esc(appendix.map((t) => t.title.toLowerCase()).join(', '))}; the CSV, XLSX and HTML exports hold them.</p>`);
  }
  if (record) {
    parts.push(
      '<h2>Record</h2>',
      keyValueTable('record', recordLines(record)),
      '<h3 style="font-size:14px">Spec</h3>',
      `<pre class="spec" id="spec">${esc(stringifyExact(record.spec, 2))}</pre>`,
    );
  }
  parts.push(`<p class="note">deflator${record ? ` ${esc(record.version)}` : ''}${options.generatedAt ? `, generated ${esc(options.generatedAt)}` : ''}. ${esc(p.caution)}</p>`, '</body></html>', '');
  return parts.filter((x) => x !== '').join('\n');
}

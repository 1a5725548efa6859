/**
 * The self-contained HTML report: one file with inline CSS and inline SVG charts
 * (shared/report/svg.ts), no scripts and no external resources, so it opens the same
 * offline, in a mail attachment or printed to PDF. It carries the caution, the sample
 * header, every table, the run record and its fingerprints. Numeric cells show a
 * rounded value and hold the exact stored double in `data-value` (and as a tooltip).
 */
import type { AnyResult, BacktestResult, CompareResult, FitResult } from '../results.js';
import { CAUTION } from '../results.js';
import { stringifyExact } from '../records/exact-json.js';
import { recordLines, sampleHeaderLines, type ExportRecord } from './header.js';
import { displayNumber, exactNumber } from './numbers.js';
import { barChart, lineChart, scatterChart, xmlEscape } from './svg.js';
import { resultTables, resultTitle, type ReportTable } from './tables.js';
import { batchAsComparison, rankBatch } from '../batch/rank.js';

/** A batch's charts show its best tasks by HJ distance. */
const BATCH_CHART_TOP = 20;

const esc = xmlEscape;

/** Normal 97.5% quantile for the whiskers (alpha ± 1.96 s.e.): common practice for a 95% band. */
const Z95 = 1.959963984540054;

const CSS = `
body{font-family:Helvetica,Arial,sans-serif;color:#1d1d1d;margin:24px auto;max-width:1040px;padding:0 16px;line-height:1.4}
h1{font-size:22px;margin:0 0 4px}h2{font-size:17px;margin:28px 0 8px;border-bottom:1px solid #ccc;padding-bottom:3px}
.caution{background:#fff6e0;border:1px solid #e0b84a;padding:6px 10px;margin:10px 0;font-size:13px}
table{border-collapse:collapse;margin:6px 0 14px;font-size:12.5px}
th,td{padding:3px 9px;border-bottom:1px solid #e2e2e2;text-align:left;vertical-align:top}
th{border-bottom:2px solid #777;background:#f4f4f4}
td.num{text-align:right;font-variant-numeric:tabular-nums;white-space:nowrap}
table.header td:first-child,table.record td:first-child{color:#555;white-space:nowrap}
code,.mono{font-family:Menlo,Consolas,monospace;font-size:11.5px;word-break:break-all}
.charts{display:flex;flex-wrap:wrap;gap:16px}
.charts svg{border:1px solid #ddd}
pre.spec{background:#f7f7f7;border:1px solid #e2e2e2;padding:8px;font-size:11.5px;white-space:pre-wrap}
p.note{font-size:12px;color:#555}
@media print{body{margin:0;max-width:none}h2{break-after:avoid}table,svg{break-inside:avoid}}
`;

function tableHtml(t: ReportTable): string {
  const head = t.columns.map((c) => `<th data-key="${esc(c.key)}">${esc(c.label)}</th>`).join('');
  const rows = t.rows.map((row) => {
    const cells = row.map((v, j) => {
      const col = t.columns[j];
      if (v === null) return '<td></td>';
      if (typeof v === 'number') {
        const exact = exactNumber(v);
        return `<td class="num" data-value="${exact}" title="${exact}">${esc(displayNumber(v, col.format))}</td>`;
      }
      if (typeof v === 'boolean') return `<td data-value="${v}">${v ? 'yes' : 'no'}</td>`;
      return `<td>${esc(v)}</td>`;
    });
    return `<tr>${cells.join('')}</tr>`;
  });
  return `<table class="result" id="table-${esc(t.id)}" data-table="${esc(t.id)}"><caption style="caption-side:top;text-align:left;font-weight:bold;padding:2px 0">${esc(t.title)}</caption><thead><tr>${head}</tr></thead><tbody>${rows.join('')}</tbody></table>`;
}

function keyValueTable(cls: string, lines: { key: string; value: string }[]): string {
  return `<table class="${cls}"><tbody>${lines.map((l) => `<tr><td>${esc(l.key)}</td><td${/sha256/.test(l.key) ? ' class="mono"' : ''}>${esc(l.value)}</td></tr>`).join('')}</tbody></table>`;
}

function fitCharts(r: FitResult): string[] {
  if (!r.pricingErrors.length) return [];
  const ppy = r.sample.periodsPerYear;
  return [
    barChart({
      id: 'chart-pricing-errors',
      title: 'Pricing errors (annualised, %), 95% band',
      yLabel: 'alpha, % per year',
      bars: r.pricingErrors.map((e) => ({
        label: e.asset,
        value: 100 * e.alphaAnnual,
        low: 100 * (e.alphaAnnual - Z95 * e.seAnnual),
        high: 100 * (e.alphaAnnual + Z95 * e.seAnnual),
      })),
    }),
    scatterChart({
      id: 'chart-predicted-realised',
      title: 'Predicted vs realised mean return (%, annual)',
      xLabel: 'predicted, % per year',
      yLabel: 'realised, % per year',
      diagonal: true,
      points: r.pricingErrors.map((e) => ({ label: e.asset, x: 100 * ppy * e.predicted, y: 100 * ppy * e.meanReturn })),
    }),
  ];
}

function backtestCharts(r: BacktestResult): string[] {
  const charts: string[] = [];
  if (r.perAsset.length) {
    charts.push(
      barChart({
        id: 'chart-oos-errors',
        title: 'Out-of-sample pricing errors (% per period)',
        yLabel: 'alpha out of sample, %',
        bars: r.perAsset.map((a) => ({ label: a.asset, value: 100 * a.alphaOos })),
      }),
      scatterChart({
        id: 'chart-in-vs-out',
        title: 'Pricing error in vs out of sample (% per period)',
        xLabel: 'in sample, %',
        yLabel: 'out of sample, %',
        diagonal: true,
        points: r.perAsset.map((a) => ({ label: a.asset, x: 100 * a.alphaIn, y: 100 * a.alphaOos })),
      }),
    );
  }
  if (r.paths.length) {
    const names = r.paths[0].params.map((p) => p.name);
    const series = names
      .map((name) => ({ name, values: r.paths.map((w) => w.params.find((p) => p.name === name)?.estimate ?? NaN) }))
      .filter((s) => s.values.every(Number.isFinite));
    if (series.length) charts.push(lineChart({ id: 'chart-paths', title: 'Parameter paths', yLabel: 'estimate', steps: r.paths.map((w) => w.end), series }));
  }
  return charts;
}

function compareCharts(r: CompareResult): string[] {
  const ok = r.models.filter((m) => !m.error);
  if (!ok.length) return [];
  const charts = [
    barChart({ id: 'chart-rmse', title: 'RMSE of pricing errors (% per period)', yLabel: 'RMSE, %', bars: ok.map((m) => ({ label: m.label, value: 100 * m.fit.rmse })) }),
  ];
  const hj = ok.filter((m) => m.hj);
  if (hj.length) charts.push(barChart({ id: 'chart-hj', title: 'HJ distance', yLabel: 'HJ distance', bars: hj.map((m) => ({ label: m.label, value: m.hj!.distance })) }));
  return charts;
}

export interface HtmlOptions {
  /** Generated-at stamp shown in the footer; omitted when absent (keeps output deterministic). */
  generatedAt?: string;
}

/** The whole report as one HTML document. */
export function resultToHtml(result: AnyResult, record?: ExportRecord, options: HtmlOptions = {}): string {
  const title = resultTitle(result);
  const charts =
    result.kind === 'fit'
      ? fitCharts(result)
      : result.kind === 'backtest'
        ? backtestCharts(result)
        : result.kind === 'batch'
          ? compareCharts(batchAsComparison(result, rankBatch(result, 'hj').slice(0, BATCH_CHART_TOP)))
          : compareCharts(result);
  const notes = result.kind === 'fit' ? result.notes : [];
  const parts = [
    '<!DOCTYPE html>',
    '<html lang="en"><head><meta charset="utf-8">',
    `<title>${esc(`deflator: ${title}${record ? ` (run ${record.id})` : ''}`)}</title>`,
    `<meta name="generator" content="deflator${record ? ` ${esc(record.version)}` : ''}">`,
    `<style>${CSS}</style></head><body>`,
    `<h1>${esc(title)}</h1>`,
    record ? `<div class="sub">Run ${record.id}, recorded ${esc(record.createdAt)}, deflator ${esc(record.version)}</div>` : '',
    `<p class="caution" id="caution">${esc(CAUTION)}</p>`,
    '<h2>Sample</h2>',
    keyValueTable('header', sampleHeaderLines(result.sample)),
    charts.length ? `<h2>Charts</h2><div class="charts">${charts.join('\n')}</div>` : '',
    '<h2>Tables</h2>',
    '<p class="note">Numbers are shown to 6 significant digits (test statistics to 3 decimals, p-values to 4); each cell holds the exact stored value (hover to see it).</p>',
    ...resultTables(result).map(tableHtml),
    notes.length ? `<h2>Notes</h2><ul>${notes.map((n) => `<li>${esc(n)}</li>`).join('')}</ul>` : '',
  ];
  if (record) {
    parts.push(
      '<h2>Record</h2>',
      keyValueTable('record', recordLines(record)),
      '<h3 style="font-size:14px">Spec</h3>',
      `<pre class="spec" id="spec">${esc(stringifyExact(record.spec, 2))}</pre>`,
    );
  }
  parts.push(`<p class="note">deflator${record ? ` ${esc(record.version)}` : ''}${options.generatedAt ? `, generated ${esc(options.generatedAt)}` : ''}. ${esc(CAUTION)}</p>`, '</body></html>', '');
  return parts.filter((p) => p !== '').join('\n');
}

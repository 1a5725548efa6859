/**
 * The readable terminal report of a present-value analysis (`deflator present-value`,
 * `deflator drift`, and `deflator show` of such a run): title, caution, sample lines,
 * warnings, the tables of value-tables.ts, notes.
 */
import { CAUTION, type DriftResult, type PresentValueResult } from '../results.js';
import { tableToText } from './text.js';
import { driftTables, presentValueTables } from './value-tables.js';

function kv(lines: [string, string][]): string {
  const w = Math.max(...lines.map(([k]) => k.length));
  return lines.map(([k, v]) => `  ${k.padEnd(w)}  ${v}`).join('\n');
}

export function valueSampleLines(r: PresentValueResult | DriftResult): [string, string][] {
  if (r.kind === 'present-value') {
    const what = r.asset !== undefined ? `asset ${r.asset} (per current share)` : `aggregate of ${r.assets?.length ?? 0} assets (${r.weighting === 'shares' ? 'market values' : 'one share of each'})`;
    return [
      ['data', what],
      ['years', `${r.sample.first} to ${r.sample.last}, T = ${r.sample.T} (regressions on ${r.sample.T - 1})`],
      ['frequency', 'annual (calendar years)'],
      ['lags', `${r.lags} (${r.lagsRule})`],
    ];
  }
  return [
    ['assets', `${r.assets.length}${r.dropped.length ? ` (${r.dropped.length} left out)` : ''}`],
    ['sample', `${r.sample.first} to ${r.sample.last}, T = ${r.sample.T}`],
    ['frequency', `${r.frequency} (${r.periodsPerYear} periods per year)`],
    ['lags', `${r.lags} (${r.lagsRule})`],
  ];
}

export function valueResultText(r: PresentValueResult | DriftResult, footer?: string): string {
  const tables = r.kind === 'present-value' ? presentValueTables(r) : driftTables(r);
  const parts = [r.label, CAUTION, '', 'Sample', kv(valueSampleLines(r)), ''];
  if (r.warnings.length) parts.push('Warnings', ...r.warnings.map((w) => `  [${w.code}] ${w.message}`), '');
  for (const t of tables) parts.push(tableToText(t), '');
  if (r.notes.length) parts.push('Notes', ...r.notes.map((n) => `  ${n}`), '');
  if (footer) parts.push(footer);
  return `${parts.join('\n')}\n`;
}

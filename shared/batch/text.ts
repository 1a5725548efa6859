/**
 * The readable ranking of a merged batch (`deflator batch merge` and `deflator show` of a
 * batch run): the top tasks in one ranking with the comparison table's columns, then
 * what could not be fitted, the data fingerprint and the caution. Pure function of the result.
 */
import { CAUTION, type BatchResult } from '../results.js';
import { alignColumns } from '../report/text.js';
import { COMPARE_TABLE_NOTE, compareTableCells } from '../compare/text.js';
import { RANK_BY, rankBatch, rankedCount, type RankBy } from './rank.js';

export interface BatchTextOptions {
  rankBy?: RankBy;
  /** Rows shown (0: all). */
  top?: number;
}

export const DEFAULT_TOP = 20;

export function batchText(r: BatchResult, opts: BatchTextOptions = {}): string {
  const by = opts.rankBy ?? 'hj';
  const top = opts.top ?? DEFAULT_TOP;
  const ranked = rankBatch(r, by);
  const withValue = rankedCount(r, by);
  const shown = top > 0 ? ranked.slice(0, top) : ranked;
  const s = r.sample;
  const out: string[] = [];
  out.push(`Batch "${r.label}": ${r.tasks} tasks, ${r.models.length} fitted${r.failures.length ? `, ${r.failures.length} not fitted` : ''}`);
  out.push('');
  out.push(`Grid          ${r.axes.map((a) => `${a.axis} (${a.count})`).join(' x ')}`);
  out.push(`Sample        ${s.start} to ${s.end}, ${s.frequency}, T = ${s.T}, N = ${s.N} (${s.returns} returns)${s.notes.some((n) => n.includes('vary by task')) ? '; varies by task' : ''}`);
  out.push(`Data          ${r.data.sha256} (${r.data.panels} returns panel${r.data.panels === 1 ? '' : 's'})`);
  out.push('');
  out.push(`Ranked by ${RANK_BY[by].title}: ${shown.length === ranked.length ? `all ${ranked.length}` : `top ${shown.length} of ${ranked.length}`} fitted tasks${withValue < ranked.length ? ` (${ranked.length - withValue} without a value at the end)` : ''}`);
  const { header, rows } = compareTableCells(shown, r.best);
  const head = ['rank', 'task', ...header];
  const right = head.map((h) => h !== 'model' && h !== 'test');
  out.push(...alignColumns(head, rows.map((row, i) => [String(i + 1), String(shown[i].task), ...row]), right).map((l) => `  ${l}`));
  out.push(`${COMPARE_TABLE_NOTE}, among all ${r.models.length} fitted tasks`);
  for (const m of shown) if (m.error) out.push(`  task ${m.task}: ${m.error}`);
  if (r.failures.length) {
    out.push('');
    out.push(`Not fitted (${r.failures.length})`);
    for (const f of r.failures.slice(0, 10)) out.push(`  task ${f.task} (${f.label}): ${f.error.split('\n')[0]}`);
    if (r.failures.length > 10) out.push(`  ... and ${r.failures.length - 10} more (every export lists them)`);
  }
  out.push('');
  out.push(CAUTION);
  return `${out.join('\n')}\n`;
}

/**
 * The terminal report of any result (`deflator fit|backtest|compare|show`): the title
 * once, the caution, the header, the warnings, then each table of the presentation
 * model (shared/present) with its "best" marks, notes and the warnings that qualify it,
 * then the result's notes. Long listings (the m_t series, parameter paths, windows) are
 * left out unless asked for; the exports and --json carry them.
 */
import type { ResultWarning } from '../results.js';
import { present, warningNumbers, type Presentation, type PresentableResult, type PresentedTable } from '../present/index.js';
import { plainText, tableCellText } from '../present/format.js';
import { recordLines, type ExportRecord } from './header.js';

/**
 * Pads cells into aligned columns: `right[j]` right-aligns column j (default: all but the
 * first). `head` may have a second line (`head2`, e.g. the units) printed beneath it.
 */
export function alignTable(head: string[], rows: string[][], indent = '  ', right?: boolean[], head2?: string[]): string {
  const widths = head.map((h, j) => Math.max(h.length, (head2?.[j] ?? '').length, ...rows.map((r) => (r[j] ?? '').length)));
  const isRight = (j: number) => (right ? right[j] : j > 0);
  const line = (cells: string[]) => indent + cells.map((c, j) => (isRight(j) ? c.padStart(widths[j]) : c.padEnd(widths[j]))).join('  ').trimEnd();
  const rule = indent + widths.map((w) => '-'.repeat(w)).join('  ');
  return [line(head), ...(head2 ? [line(head2)] : []), rule, ...rows.map(line)].join('\n');
}

/** A presented table as aligned text: marks as `*`, warned rows as `!n`, notes and table warnings beneath. */
export function tableToText(t: PresentedTable, ref: (w: ResultWarning) => number = () => 0): string {
  const keep = t.columns.map((c, j) => c.type !== 'number' || t.rows.some((r) => r[j] !== null) || t.rows.length === 0);
  const cols = t.columns.map((c, j) => ({ c, j })).filter((x) => keep[x.j]);
  const rowWarn = new Map<number, number[]>();
  for (const w of t.warnings) for (const i of w.rows ?? []) rowWarn.set(i, [...(rowWarn.get(i) ?? []), ref(w)]);
  const marked = (i: number, key: string) => (t.marks[key] ?? []).includes(i);
  const rows = t.rows.map((_, i) =>
    cols.map(({ c, j }, k) => {
      let text = plainText(tableCellText(t, i, j));
      // A marked cell ends in *; the others in its column keep their digits aligned.
      if ((t.marks[c.key] ?? []).length) text += marked(i, c.key) ? '*' : ' ';
      if (k === 0 && rowWarn.has(i)) text += ` !${[...new Set(rowWarn.get(i))].join(',')}`;
      return text;
    }),
  );
  // Units on a second heading line keep wide tables within a terminal; the words are the same as every surface's heading.
  const units = cols.some((x) => x.c.unit) ? cols.map((x) => (x.c.unit ? `(${x.c.unit})` : '')) : undefined;
  const out = [t.title, alignTable(cols.map((x) => (units ? x.c.label : x.c.header)), rows, '  ', cols.map((x) => x.c.type === 'number'), units)];
  for (const n of t.notes) out.push(`  ${plainText(n)}`);
  for (const w of t.warnings.filter((x) => !x.rows)) out.push(`  ! warning ${ref(w)} (${w.code}) applies to this table`);
  return out.join('\n');
}

/** A title inside a sentence: its first word in lower case unless it is a symbol (m_t, G_t, HJ). */
function lowerFirst(title: string): string {
  const [first] = title.split(' ');
  return /^[A-Z][a-z]+$/.test(first) ? title[0].toLowerCase() + title.slice(1) : title;
}

export interface TextOptions {
  /** Print the appendix tables (series and per-window listings) too. */
  appendix?: boolean;
}

/** A presentation as text. */
export function presentationText(p: Presentation, options: TextOptions = {}): string {
  const ref = warningNumbers(p.warnings);
  const w = Math.max(...p.header.map((l) => l.key.length));
  const out: string[] = [p.title, '', ...p.header.map((l) => `  ${l.key.padEnd(w)}  ${l.value}`), ''];
  if (p.warnings.length) {
    out.push('Warnings');
    p.warnings.forEach((x, i) => out.push(`  [${i + 1}] ${x.code}${x.model ? ` (${x.model})` : ''}: ${x.message}`));
    out.push('');
  }
  const shown = p.tables.filter((t) => options.appendix || t.role === 'main');
  for (const t of shown) out.push(tableToText(t, ref), '');
  const left = p.tables.filter((t) => !shown.includes(t));
  if (p.notes.length) {
    out.push('Notes');
    for (const n of p.notes) out.push(`  - ${plainText(n)}`);
    out.push('');
  }
  if (left.length) out.push(`Not printed here: ${left.map((t) => lowerFirst(t.title)).join(', ')} (in every export and in --json).`, '');
  out.push(p.caution);
  return `${out.join('\n')}\n`;
}

/** The whole result as text, and the record when there is one. */
export function resultToText(result: PresentableResult, record?: ExportRecord, options: TextOptions = {}): string {
  const text = presentationText(present(result), options);
  if (!record) return text;
  const lines = recordLines(record);
  const w = Math.max(...lines.map((l) => l.key.length));
  return `${text}\nRecord\n${lines.map((l) => `  ${l.key.padEnd(w)}  ${l.value}`).join('\n')}\n`;
}

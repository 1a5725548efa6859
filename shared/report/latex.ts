/**
 * LaTeX export: the presentation model's tables as booktabs tables ready to \input (the
 * including document loads \usepackage{booktabs}). Every number has the display rounding
 * every other surface shows (shared/present/format.ts), with a true minus sign; headings
 * carry their units; notes and formulas are typeset in math mode; a table wider than the
 * page is split into column groups (shared/report/wide.ts). Cells marked * are the best
 * in their column; !n refers to warning n, listed at the top and under each table.
 */
import type { ResultWarning, RunResult } from '../results.js';
import { present, warningNumbers, type PresentedTable } from '../present/index.js';
import { tableCellText, ROUNDING_NOTE } from '../present/format.js';
import type { ExportRecord } from './header.js';
import { MAX_PRINT_COLUMNS, splitColumns } from './wide.js';

const SPECIAL: Record<string, string> = {
  '\\': '\\textbackslash{}',
  '{': '\\{',
  '}': '\\}',
  $: '\\$',
  '&': '\\&',
  '#': '\\#',
  '%': '\\%',
  _: '\\_',
  '^': '\\textasciicircum{}',
  '~': '\\textasciitilde{}',
  '<': '\\textless{}',
  '>': '\\textgreater{}',
};

/** Text safe in a LaTeX paragraph or cell. */
export function latexEscape(s: string): string {
  return s.replace(/[\\{}$&#%_^~<>]/g, (c) => SPECIAL[c]).replace(/[\r\n]+/g, ' ');
}

const GREEK_WORDS = 'alpha|beta|gamma|delta|lambda|mu|sigma|theta|kappa|rho|epsilon|Sigma|Omega|Lambda|Delta';
const GREEK = new RegExp(`(?<![A-Za-z\\\\])(${GREEK_WORDS})(?![A-Za-z])`, 'g');

/** Is a word a formula (a sub- or superscript, a Greek letter, an expectation E[...])? */
function isMath(core: string): boolean {
  // A bare Greek name is a word ("delta method", "zero alpha"); with a script, argument or prime it is a symbol.
  return /[\^_]/.test(core) || new RegExp(`^(${GREEK_WORDS})[(']`).test(core) || /^E\[.*\]$/.test(core);
}

/** One formula word in math mode: Greek letters, sums, scripts in braces, `>=` as \geq. */
function mathWord(core: string): string {
  let m = core.replace(/[{}$&#%~\\]/g, (c) => (c === '%' ? '\\%' : c === '&' ? '\\&' : c === '#' ? '\\#' : c === '$' ? '\\$' : c === '~' ? '\\sim' : c === '\\' ? '\\backslash' : `\\${c}`));
  m = m.replace(GREEK, '\\$1 ').replace(/\bsum\b/g, '\\sum ').replace(/\bsqrt\b/g, '\\sqrt ').replace(/>=/g, '\\geq ').replace(/<=/g, '\\leq ');
  m = m.replace(/([\^_])(\([^()]*\)|[A-Za-z0-9.+-]+|\\[a-z]+ ?)/g, (_s, op: string, arg: string) => `${op}{${arg.trim()}}`);
  return `$${m.replace(/ +/g, ' ').replace(/ (?=[}^_)])/g, '').trim()}$`;
}

/** A whole formula (a note's `...` span) in math mode: words upright, scripts in braces, Greek letters and sums as symbols. */
export function latexFormula(f: string): string {
  let m = f.replace(/[%&#$~{}]/g, (c) => (c === '~' ? '\\sim' : `\\${c}`)).replace(/\\(?![%&#${}]|sim)/g, '\\backslash ');
  m = m.replace(/>=/g, '\\geq ').replace(/<=/g, '\\leq ');
  m = m.replace(/(?<![A-Za-z\\])[A-Za-z]{2,}(?![A-Za-z])/g, (w) => (new RegExp(`^(${GREEK_WORDS}|sum|sqrt)$`).test(w) ? `\\${w} ` : /^(geq|leq|sim|backslash)$/.test(w) ? w : `\\mathrm{${w}}`));
  m = m.replace(/([\^_])(\([^()]*\)|[A-Za-z0-9.+-]+|\\[a-z]+ ?|\\mathrm\{[^}]*\})/g, (_s, op: string, arg: string) => `${op}{${arg.trim()}}`);
  m = m.replace(/ +/g, ' ').trim().replace(/(\\mathrm\{[^}]*\}) (?=\\mathrm)/g, '$1\\ ');
  return `$${m}$`;
}

/** Prose with its formulas in math mode: `...` spans whole, and single formula words (R^2, alpha_i, E[m]). */
export function latexText(s: string): string {
  return s
    .replace(/[\r\n]+/g, ' ')
    .split('`')
    .map((part, k) => (k % 2 === 1 ? latexFormula(part) : proseText(part)))
    .join('');
}

function proseText(s: string): string {
  return s
    .split(/( +)/)
    .map((w) => {
      if (/^ +$/.test(w) || w === '') return w;
      let [, lead, core, trail] = /^([("]*)(.*?)([),.;:"]*)$/.exec(w) as RegExpExecArray;
      // A formula keeps its own closing parentheses: sigma(m), not sigma(m plus a stray ")".
      while (trail.startsWith(')') && (core.match(/\(/g) ?? []).length > (core.match(/\)/g) ?? []).length) {
        core += ')';
        trail = trail.slice(1);
      }
      if (!isMath(core)) return latexEscape(w);
      return `${latexEscape(lead)}${mathWord(core)}${latexEscape(trail)}`;
    })
    .join('');
}

/** A number's display text in LaTeX: a true minus sign, "<0.0001" as $<$0.0001. */
function latexNumber(text: string): string {
  if (text.startsWith('<')) return `$<$${text.slice(1)}`;
  const e = /^(-?)(\d+(?:\.\d+)?)e([+-]\d+)$/.exec(text);
  if (e) return `$${e[1]}${e[2]}\\times 10^{${Number(e[3])}}$`;
  return text.startsWith('-') ? `$-$${text.slice(1)}` : text;
}

/** Text columns whose cells are measure or test names, set with their formulas in math mode. */
const FORMULA_COLUMNS = ['measure', 'test'];

/**
 * Width budget of a table, in points: the text width of the standard article class at
 * 10 pt (345 pt); a table of more than five columns is set in \small (about 4.6 pt a
 * character, 8 pt between columns), others at about 5 pt a character and 12 pt between.
 */
export const TEXT_WIDTH_PT = 345;
/** What the estimate below aims at: the text width less a margin for its error (widths are estimated per character). */
const TARGET_PT = TEXT_WIDTH_PT - 20;
const NARROWEST_TEXT_PT = 60;

/** Width of text in characters of an average lower-case letter (capitals wider, punctuation narrower). */
function ems(text: string): number {
  let w = 0;
  for (const c of text) w += /[A-Z%#&@MW]/.test(c) ? 1.5 : /[.,:;'!|() il-]/.test(c) ? 0.6 : 1;
  return w;
}

/** Column widths in points as typeset (headings on two lines: the label, then the unit). */
function columnWidths(t: PresentedTable, small: boolean): { natural: number[]; cells: number[]; word: number[]; gap: number } {
  const ch = small ? 4.6 : 5;
  const gap = small ? 8 : 12;
  const cells = t.columns.map((c, j) => t.rows.reduce((m, _r, i) => Math.max(m, t.rows[i][j] === null ? 0 : ems(tableCellText(t, i, j)) + ((t.marks[c.key] ?? []).includes(i) ? 1 : 0)), 0) * ch);
  const natural = t.columns.map((c, j) => Math.max(ems(c.label) * ch, c.unit ? ems(`(${c.unit})`) * ch : 0, cells[j]));
  // The longest piece a wrapped heading or cell cannot break (breaks at spaces and after commas).
  const word = t.columns.map((c, j) =>
    Math.max(...[c.header, ...t.rows.map((_r, i) => (t.rows[i][j] === null ? '' : tableCellText(t, i, j)))].flatMap((x) => x.split(/[ ,]/).map((w) => (ems(w) + 1) * ch))),
  );
  return { natural, cells, word, gap };
}

/**
 * Widths of the columns that must wrap so the table fits TEXT_WIDTH_PT (undefined: the
 * column keeps its natural width). A number column wraps its heading only, down to its
 * widest cell; then the widest text columns give way, none below its longest unbreakable
 * piece, nor below NARROWEST_TEXT_PT where its cells are wider than that.
 */
export function wrapWidths(t: PresentedTable): (number | undefined)[] {
  return layout(t).widths;
}

/** The wrapped widths and the table's width with them, in points. */
function layout(t: PresentedTable): { widths: (number | undefined)[]; total: number } {
  const small = t.columns.length > 5;
  const { natural, cells, word, gap } = columnWidths(t, small);
  const out: (number | undefined)[] = t.columns.map(() => undefined);
  const width = (j: number) => out[j] ?? natural[j];
  const total = () => t.columns.reduce((a, _c, j) => a + width(j) + gap, 0);
  if (total() <= TARGET_PT) return { widths: out, total: total() };
  t.columns.forEach((c, j) => {
    if (c.type !== 'number') return;
    const w = Math.ceil(Math.max(cells[j], word[j], 30));
    if (w < natural[j]) out[j] = w;
  });
  if (total() <= TARGET_PT) return { widths: out, total: total() };
  const text = t.columns.map((c, j) => (c.type === 'number' ? -1 : j)).filter((j) => j >= 0);
  let room = TARGET_PT - t.columns.reduce((a, c, j) => a + gap + (c.type === 'number' ? width(j) : 0), 0);
  // Narrow text columns keep their width while the rest share what is left equally.
  let left = text.length;
  for (const j of text.sort((a, b) => natural[a] - natural[b])) {
    const share = Math.max(Math.min(NARROWEST_TEXT_PT, cells[j]), word[j], room / left);
    if (natural[j] <= share) room -= natural[j];
    else {
      out[j] = Math.floor(share);
      room -= share;
    }
    left -= 1;
  }
  return { widths: out, total: total() };
}

/**
 * Column groups that fit the page: the fewest groups (each repeating the first column,
 * shared/report/wide.ts), at most MAX_PRINT_COLUMNS columns wide, whose tables, wrapped,
 * are no wider than TEXT_WIDTH_PT.
 */
export function fittingGroups(t: PresentedTable): PresentedTable[] {
  for (let max = MAX_PRINT_COLUMNS; max > 2; max--) {
    const groups = splitColumns(t, max);
    if (groups.every((g) => layout(g).total <= TARGET_PT)) return groups;
  }
  return splitColumns(t, 2);
}

/** A heading: the label, and under it the unit in parentheses; within `width` points when the column wraps. */
function headingTex(c: PresentedTable['columns'][number], width: number | undefined): string {
  if (width !== undefined) return `\\parbox[b]{${width}pt}{${c.type === 'number' ? '\\raggedleft' : '\\raggedright'} ${latexText(c.header)}}`;
  if (!c.unit) return latexText(c.label);
  const align = c.type === 'number' ? 'r' : 'l';
  return `\\begin{tabular}[b]{@{}${align}@{}}${latexText(c.label)}\\\\(${latexText(c.unit)})\\end{tabular}`;
}

function tableTex(t: PresentedTable, label: string, ref: (w: ResultWarning) => number, sampleNote: string): string {
  const spec = t.columns.map((c) => (c.type === 'number' ? 'r' : 'l')).join('');
  const widths = wrapWidths(t);
  const head = t.columns.map((c, j) => headingTex(c, widths[j])).join(' & ');
  const rowWarn = new Map<number, number[]>();
  for (const w of t.warnings) for (const i of w.rows ?? []) rowWarn.set(i, [...(rowWarn.get(i) ?? []), ref(w)]);
  const body = t.rows.map((row, i) => {
    const cells = row.map((v, j) => {
      const c = t.columns[j];
      if (v === null) return '';
      const text = tableCellText(t, i, j);
      const best = (t.marks[c.key] ?? []).includes(i);
      // Measure and test names may hold formulas (R^2, sigma(m)); data names (assets, models) are escaped verbatim.
      const shown = typeof v === 'number' ? latexNumber(text) : FORMULA_COLUMNS.includes(c.key) ? latexText(text) : latexEscape(text);
      const warn = j === 0 && rowWarn.has(i) ? `\\textsuperscript{!${[...new Set(rowWarn.get(i))].join(',')}}` : '';
      const cell = best ? `\\textbf{${shown}}*` : `${shown}${warn}`;
      return widths[j] !== undefined && c.type !== 'number' ? `\\parbox[t]{${widths[j]}pt}{\\raggedright ${cell.replace(/,(?! )/g, ',\\allowbreak{}')}}` : cell;
    });
    return `${cells.join(' & ')} \\\\`;
  });
  const sentence = (n: string) => (/[.:;!?]$/.test(n.trim()) ? n.trim() : `${n.trim()}.`);
  const notes = [...t.notes.map((n) => latexText(sentence(n))), ...t.warnings.filter((w) => !w.rows).map((w) => `Warning ${ref(w)} (${latexEscape(w.code)}) applies to this table.`), sampleNote].filter((n) => n);
  const small = t.columns.length > 5;
  return [
    '\\begin{table}[htbp]',
    '\\centering',
    ...(small ? ['\\small', '\\setlength{\\tabcolsep}{4pt}'] : []),
    `\\caption{${latexText(t.title)}}`,
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
    `{\\footnotesize ${notes.join(' ')}\\par}`,
    '\\end{table}',
    '',
  ].join('\n');
}

/** The LaTeX tables of a result (the appendix listings left out unless `appendix`), with a comment block naming the run. */
export function resultToLatex(result: RunResult, record?: ExportRecord, options: { appendix?: boolean } = {}): string {
  const p = present(result);
  const tag = record ? `deflator-run${record.id}` : 'deflator';
  const ref = warningNumbers(p.warnings);
  const head = [
    `% deflator ${record ? `run ${record.id}, recorded ${record.createdAt}, version ${record.version}` : 'result'}: ${p.title}`,
    ...(record ? [`% panel sha256 ${record.panel.sha256}`] : []),
    `% ${p.caution}`,
    ...p.header.map((h) => `% ${h.key}: ${h.value}`),
    ...p.warnings.map((w, i) => `% WARNING ${i + 1} ${w.code}${w.model ? ` (${w.model})` : ''}: ${w.message}`),
    '% Needs \\usepackage{booktabs} in the including document.',
    '',
  ].map((l) => l.replace(/[\r\n]+/g, ' '));
  const sampleText =
    result.kind === 'present-value'
      ? `Years ${result.sample.first} to ${result.sample.last}, annual, T = ${result.sample.T}.`
      : result.kind === 'drift'
        ? `Sample ${result.sample.first} to ${result.sample.last}, ${result.frequency}, T = ${result.sample.T}, N = ${result.assets.length}.`
        : `Sample ${result.sample.start} to ${result.sample.end}, ${result.sample.frequency}, T = ${result.sample.T}, N = ${result.sample.N}.`;
  const sampleNote = latexText(`${sampleText} ${ROUNDING_NOTE.replace(/ CSV and XLSX.*$/, '')} ${p.caution}`);
  const tables = p.tables.filter((t) => options.appendix || t.role === 'main').flatMap((t) => fittingGroups(t));
  const warnBlock = p.warnings.length
    ? [`\\paragraph{Warnings} ${p.warnings.map((w, i) => `(${i + 1}) ${latexEscape(w.code)}${w.model ? ` (${latexEscape(w.model)})` : ''}: ${latexText(w.message)}`).join(' ')}`, '']
    : [];
  return `${head.join('\n')}\n${[...warnBlock, ...tables.map((t) => tableTex(t, `tab:${tag}-${t.id}`, ref, sampleNote))].join('\n')}`;
}

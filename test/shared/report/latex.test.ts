import { execFileSync, spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import type { AnyResult, CompareResult } from '../../../shared/results.js';
import { latexEscape, resultToLatex } from '../../../shared/report/latex.js';
import { present } from '../../../shared/present/index.js';
import { tableCellText } from '../../../shared/present/format.js';
import { sampleBacktest, sampleCompare, sampleFit, sampleRecord } from './sample-results.js';

/**
 * A small independent reader of LaTeX structure: strips comments (unescaped %), then
 * checks that braces balance (escaped \{ \} excluded) and that every \begin{env} is
 * closed by the matching \end{env} in order.
 */
function checkStructure(tex: string): { envs: string[]; problems: string[] } {
  const problems: string[] = [];
  const envs: string[] = [];
  const body = tex
    .split('\n')
    .map((l) => l.replace(/(^|[^\\])%.*$/, '$1'))
    .join('\n');
  let depth = 0;
  for (let i = 0; i < body.length; i++) {
    const c = body[i];
    if (c === '\\') {
      i++; // skip the escaped character (\{, \}, \\, \%)
      continue;
    }
    if (c === '{') depth++;
    if (c === '}') depth--;
    if (depth < 0) problems.push(`unmatched } at offset ${i}`);
  }
  if (depth !== 0) problems.push(`brace depth ${depth} at end`);
  const stack: string[] = [];
  for (const m of body.matchAll(/\\(begin|end)\{([^}]+)\}/g)) {
    if (m[1] === 'begin') {
      stack.push(m[2]);
      envs.push(m[2]);
    } else if (stack.pop() !== m[2]) problems.push(`\\end{${m[2]}} closes the wrong environment`);
  }
  if (stack.length) problems.push(`unclosed: ${stack.join(', ')}`);
  // math-mode dollars pair up (escaped \$ excluded)
  const dollars = (body.replace(/\\\$/g, '').match(/\$/g) ?? []).length;
  if (dollars % 2) problems.push('odd number of $');
  return { envs, problems };
}

const kinds: [string, () => AnyResult][] = [
  ['fit', () => sampleFit()],
  ['backtest', () => sampleBacktest()],
  ['compare', () => sampleCompare()],
];

/** A comparison of one model at two stages and another, labelled as the default labels read (model and estimator). */
function longLabels(): CompareResult {
  const r = sampleCompare();
  const names = ['linear(MKT,SIZE) [GMM second, start W = I, lags auto]', 'linear(MKT,SIZE) [GMM first, W = I, lags auto]', 'consumption(CONS) [GMM iterated, start W = HJ, lags 6]'];
  r.models.forEach((m, i) => {
    m.label = names[i];
    m.model = i === 2 ? 'consumption' : 'linear';
    m.factors = i === 2 ? ['CONS'] : ['MKT', 'SIZE'];
    m.estimator = { method: 'gmm', stage: i === 1 ? 'first' : i === 2 ? 'iterated' : 'second', weight: i === 2 ? 'hj' : 'identity', lags: i === 2 ? 6 : 'auto', lagsUsed: i === 2 ? 6 : 3 };
    m.oos = { rmse: 0.002 + i / 1000, rmsePooled: 0.003, r2: -0.25 };
    m.oosWindowsFailed = 0;
  });
  r.hjTests = [{ a: names[0], b: names[1], diff: 0.0123456789, p: 0.2, replications: 499, block: 4, seed: 20261201 }];
  return r;
}

describe('LaTeX export', () => {
  it.each(kinds)('%s: balanced braces, dollars and environments; booktabs rules; rounding note', (_k, make) => {
    const tex = resultToLatex(make(), sampleRecord());
    const { envs, problems } = checkStructure(tex);
    expect(problems).toEqual([]);
    expect(envs.filter((e) => e === 'table').length).toBeGreaterThanOrEqual(2);
    expect(tex).toMatch(/\\toprule[\s\S]*\\midrule[\s\S]*\\bottomrule/);
    expect(tex).not.toMatch(/\\hline/);
    expect(tex).toMatch(/to \d decimals/);
    expect(tex).not.toMatch(/NaN|Infinity|undefined/);
  });

  it('fit: every number at the display rounding every surface shows, headings with units, names escaped', () => {
    const r = sampleFit();
    const tex = resultToLatex(r, sampleRecord());
    const p = present(r);
    const shown = (text: string) => (text.startsWith('-') ? `$-$${text.slice(1)}` : text);
    const params = p.tables.find((t) => t.id === 'parameters')!;
    const q = 1;
    expect(tex).toContain(`${latexEscape(r.params[q].name)} & ${shown(tableCellText(params, q, 1))} & ${shown(tableCellText(params, q, 2))} &`);
    // A value below 1e-4 keeps 6 significant digits in exponent form, as in the terminal.
    expect(tex).toContain('$1.23457\\times 10^{-7}$');
    const pe = p.tables.find((t) => t.id === 'pricing-errors')!;
    expect(tex).toContain(`${latexEscape(r.pricingErrors[0].asset)} & ${shown(tableCellText(pe, 0, 1))} & ${shown(tableCellText(pe, 0, 2))} &`);
    expect(tex).toContain('alpha (\\% per month)'); // a bare Greek name stays a word, as on every surface
    // Names are escaped: & _ " # % { } ~ never appear raw inside a cell.
    expect(tex).toContain('Birch \\& Pine\\_2');
    expect(tex).toContain('Dune, Ltd \\#4');
    expect(tex).toContain('Elm 50\\% \\{x\\}');
    expect(tex).toContain('Fir\\textasciitilde{}Co');
    // Formulas in notes are in math mode, never \textasciicircum.
    expect(tex).toContain('$R^{2}$ (cross-section) = $1 - \\sum');
    expect(tex).not.toContain('textasciicircum');
  });

  it('splits a table wider than the page into column groups that repeat the first column', () => {
    const tex = resultToLatex(sampleFit(), sampleRecord());
    expect(tex).toContain('Pricing errors (1 of 2)');
    expect(tex).toContain('Pricing errors (2 of 2)');
    for (const m of tex.matchAll(/\\begin\{tabular\}\{([lr]+)\}/g)) expect(m[1].length).toBeLessThanOrEqual(7);
  });

  it('a formula word keeps its own parentheses in math mode: sigma(m), E[m]', () => {
    const r = sampleFit();
    r.warnings = [{ code: 'BELOW_VOLATILITY_BOUND', message: 'the fitted discount factor has sigma(m) = 0.1 at E[m] = 0.99, below the bound (0.3)' }];
    const tex = resultToLatex(r, sampleRecord());
    expect(tex).toContain('has $\\sigma (m)$ = 0.1 at $E[m]$ = 0.99');
    expect(tex).not.toContain('(m$)');
  });

  it('long model labels and headings wrap inside their columns instead of widening the table', () => {
    const tex = resultToLatex(longLabels(), sampleRecord());
    expect(tex).toContain('\\parbox[t]{');
    expect(tex).toMatch(/\\raggedright linear\(MKT,\\allowbreak\{\}SIZE\)/);
  });

  // Compiler check: Debian's texlive (pdflatex) when installed; skipped with the reason otherwise.
  const which = spawnSync('sh', ['-c', 'command -v pdflatex'], { encoding: 'utf8' });
  const pdflatex = which.status === 0 ? which.stdout.trim() : '';
  it.skipIf(!pdflatex)(`compiles with pdflatex${pdflatex ? '' : ' (skipped: pdflatex not on PATH; Debian: apt-get install texlive-latex-recommended)'}`, () => {
    const dir = mkdtempSync(path.join(tmpdir(), 'deflator-tex-'));
    for (const [k, make] of kinds) {
      writeFileSync(path.join(dir, `${k}.tex`), resultToLatex(make(), sampleRecord()));
      const doc = `\\documentclass{article}\n\\usepackage[T1]{fontenc}\n\\usepackage{booktabs}\n\\begin{document}\n\\input{${k}.tex}\n\\end{document}\n`;
      writeFileSync(path.join(dir, `doc-${k}.tex`), doc);
      execFileSync(pdflatex, ['-interaction=nonstopmode', '-halt-on-error', `doc-${k}.tex`], { cwd: dir, stdio: 'pipe' });
      expect(existsSync(path.join(dir, `doc-${k}.pdf`))).toBe(true);
      expect(readFileSync(path.join(dir, `doc-${k}.log`), 'utf8')).not.toMatch(/^! /m);
    }
  });

  // Wide tables fit the page: pdflatex reports no line wider than the text (article class, 10 pt, its default text width).
  it.skipIf(!pdflatex)(`every table fits the text width: no overfull box in pdflatex's log${pdflatex ? '' : ' (skipped: pdflatex not on PATH; Debian: apt-get install texlive-latex-recommended)'}`, () => {
    const dir = mkdtempSync(path.join(tmpdir(), 'deflator-tex-'));
    const cases: [string, () => AnyResult][] = [...kinds, ['long-labels', longLabels]];
    for (const [k, make] of cases) {
      writeFileSync(path.join(dir, `${k}.tex`), resultToLatex(make(), sampleRecord(), { appendix: true }));
      writeFileSync(path.join(dir, `doc-${k}.tex`), `\\documentclass{article}\n\\usepackage{booktabs}\n\\begin{document}\n\\input{${k}.tex}\n\\end{document}\n`);
      execFileSync(pdflatex, ['-interaction=nonstopmode', '-halt-on-error', `doc-${k}.tex`], { cwd: dir, stdio: 'pipe' });
      const log = readFileSync(path.join(dir, `doc-${k}.log`), 'utf8');
      expect(log.match(/^Overfull \\hbox.*$/gm) ?? [], `${k}: overfull lines`).toEqual([]);
    }
  });
});

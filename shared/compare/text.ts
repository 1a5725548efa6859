/**
 * The readable comparison table (`deflator compare` without --json): one row per model,
 * the best value of each column marked with *, then the bootstrap tests of equal
 * squared HJ distances. Pure function of the result.
 */
import { CAUTION, type CompareResult, type CompareRow } from '../results.js';
import { alignTable } from '../report/fit-text.js';
import { fixed } from '../report/numbers.js';

const pct = (x: number) => fixed(100 * x, 3);
const pval = (x: number) => (x > 0 && x < 0.0001 ? '<0.0001' : fixed(x, 4));

/** The comparison table's header and rows (model label first), best values marked with *. */
export function compareTableCells(models: CompareRow[], best: Record<string, string>): { header: string[]; rows: string[][] } {
  const mark = (col: string, label: string, text: string) => (best[col] === label ? `${text}*` : text);
  const withOos = models.some((m) => m.oos);
  const header = ['model', 'test', 'stat', 'p', 'HJ', 'HJ p', 'MAPE %', 'RMSE %', 'R^2', ...(withOos ? ['OOS RMSE %', 'OOS R^2'] : [])];
  const rows = models.map((m) => [
    m.label,
    m.test.name,
    fixed(m.test.stat, 3),
    mark('test.p', m.label, pval(m.test.p)),
    m.hj ? mark('hj.distance', m.label, fixed(m.hj.distance, 4)) : '',
    m.hj ? mark('hj.p', m.label, pval(m.hj.p)) : '',
    mark('fit.mape', m.label, pct(m.fit.mape)),
    mark('fit.rmse', m.label, pct(m.fit.rmse)),
    mark('fit.r2', m.label, fixed(m.fit.r2, 3)),
    ...(withOos ? [m.oos ? mark('oos.rmse', m.label, pct(m.oos.rmse)) : '', m.oos ? mark('oos.r2', m.label, fixed(m.oos.r2, 3)) : ''] : []),
  ]);
  return { header, rows };
}

/** The note under a comparison table. */
export const COMPARE_TABLE_NOTE = '  * best in the column (largest p and R^2, smallest distance and errors); errors in % per period';

export function compareText(r: CompareResult): string {
  const s = r.sample;
  const { header, rows } = compareTableCells(r.models, r.best ?? {});
  const out: string[] = [];
  out.push(`Comparison of ${r.models.length + (r.failures?.length ?? 0)} models`);
  out.push('');
  out.push(`Sample        ${s.start} to ${s.end}, ${s.frequency}, T = ${s.T}, N = ${s.N} (${s.returns} returns)`);
  out.push('');
  out.push(alignTable(header, rows));
  out.push(COMPARE_TABLE_NOTE);
  for (const m of r.models) if (m.error) out.push(`  ${m.label}: ${m.error}`);
  if (r.failures?.length) {
    out.push('');
    out.push('Not fitted');
    for (const f of r.failures) out.push(`  ${f.label}: ${f.error}`);
  }
  if (r.hjTests.length && r.bootstrap) {
    out.push('');
    out.push(`Equal squared HJ distances: ${r.bootstrap.replications} moving-block bootstrap replications, block ${r.bootstrap.block} periods (${r.bootstrap.blockRule}), seed ${r.bootstrap.seed}`);
    out.push(alignTable(['model a', 'model b', 'HJ_a^2 - HJ_b^2', 'p', 'used'], r.hjTests.map((t) => [t.a, t.b, fixed(t.diff, 6), pval(t.p), String(t.used ?? t.replications)])));
    out.push(`  ${r.bootstrap.method}`);
    for (const f of r.bootstrap.failures) out.push(`  replications lost: ${f}`);
  }
  out.push('');
  out.push(CAUTION);
  return `${out.join('\n')}\n`;
}

/**
 * The one "best in the column" rule of a comparison. The comparison result's `best`
 * (column key -> label), the terminal table, the app's marks and every export read it.
 *
 * - Only the columns listed in BEST_RULES are ranked, each by its stated criterion.
 *   Test statistics (J, the pricing-error chi-square, GRS) are never ranked: the models
 *   differ in degrees of freedom and weighting matrices, so a smaller statistic is not a
 *   better model. Their p-values are not ranked either: each test uses its own model's
 *   weighting, and "larger p" is not a criterion across models. The HJ distance uses the
 *   same weighting, (E[RR'])^-1, for every model; its p-value is ranked by the stated
 *   criterion "the model whose zero distance the data reject least".
 * - Nothing is marked with fewer than two models that have a value in the column.
 * - A model whose back-test failed, or lost windows, is not ranked on out-of-sample
 *   columns (its summaries would cover other windows than the others').
 * - Models that price different returns (gross and excess) are not ranked at all: their
 *   errors and distances are on different scales.
 * - Ties (equal doubles) are all marked; `best` names the first listed.
 */
import type { CompareRow } from '../results.js';

export interface BestRule {
  /** Column key, as in CompareResult.best. */
  key: string;
  better: 'min' | 'max';
  value: (r: CompareRow) => number | undefined;
  /** An out-of-sample column (back-test summaries). */
  oos: boolean;
  /** The criterion in words, shown in each table's note. */
  criterion: string;
}

export const BEST_RULES: readonly BestRule[] = [
  { key: 'hj.distance', better: 'min', oos: false, value: (r) => r.hj?.distance, criterion: 'smallest HJ distance (the same weighting for every model)' },
  { key: 'hj.p', better: 'max', oos: false, value: (r) => r.hj?.p, criterion: 'largest p of HJ = 0 (the distance the data reject least)' },
  { key: 'fit.mape', better: 'min', oos: false, value: (r) => r.fit.mape, criterion: 'smallest mean absolute pricing error' },
  { key: 'fit.rmse', better: 'min', oos: false, value: (r) => r.fit.rmse, criterion: 'smallest root mean square pricing error' },
  { key: 'fit.r2', better: 'max', oos: false, value: (r) => r.fit.r2, criterion: 'largest cross-sectional R^2' },
  { key: 'oos.rmse', better: 'min', oos: true, value: (r) => r.oos?.rmse, criterion: 'smallest out-of-sample RMSE' },
  { key: 'oos.rmsePooled', better: 'min', oos: true, value: (r) => r.oos?.rmsePooled, criterion: 'smallest pooled out-of-sample RMSE' },
  { key: 'oos.r2', better: 'max', oos: true, value: (r) => r.oos?.r2, criterion: 'largest out-of-sample R^2 against zero alpha' },
];

/**
 * Sort orders of the comparison's columns for rankings (a batch ranked by one column):
 * the marked columns in their rule's direction, and the pricing-error test's p-value,
 * largest first. A ranking by that p orders the tasks; it never marks a "best" cell.
 */
export const ORDERS: readonly Pick<BestRule, 'key' | 'better' | 'value' | 'oos'>[] = [
  ...BEST_RULES,
  { key: 'test.p', better: 'max', oos: false, value: (r) => r.test.p },
];

/** Columns shown but never ranked, with the reason (for the tables' notes). */
export const NOT_RANKED: Readonly<Record<string, string>> = {
  'test.stat': 'test statistics are not ranked: the models differ in degrees of freedom and weighting matrices',
  'test.p': "the test's p-value is not ranked: each model's test uses its own weighting",
};

/** May row r be ranked in this column? */
function eligible(rule: BestRule, r: CompareRow): boolean {
  if (rule.oos && (r.error !== undefined || (r.oosWindowsFailed ?? 0) > 0)) return false;
  const v = rule.value(r);
  return v !== undefined && Number.isFinite(v);
}

/** Column key -> indices of the best rows (all ties); a column with no mark is absent. */
export function bestRows(rows: readonly CompareRow[]): Record<string, number[]> {
  const out: Record<string, number[]> = {};
  const bases = new Set(rows.map((r) => r.returns ?? 'excess'));
  if (bases.size > 1) return out;
  for (const rule of BEST_RULES) {
    const idx = rows.map((r, i) => (eligible(rule, r) ? i : -1)).filter((i) => i >= 0);
    if (idx.length < 2) continue;
    let best = rule.value(rows[idx[0]]) as number;
    for (const i of idx) {
      const v = rule.value(rows[i]) as number;
      if (rule.better === 'min' ? v < best : v > best) best = v;
    }
    out[rule.key] = idx.filter((i) => rule.value(rows[i]) === best);
  }
  return out;
}

/** Column key -> label of the best row (the first listed on a tie): CompareResult.best. */
export function bestPerColumn(rows: readonly CompareRow[]): Record<string, string> {
  const out: Record<string, string> = {};
  for (const [k, idx] of Object.entries(bestRows(rows))) out[k] = rows[idx[0]].label;
  return out;
}

/** The rule for a column key, if the column is ranked. */
export function bestRule(key: string): BestRule | undefined {
  return BEST_RULES.find((r) => r.key === key);
}

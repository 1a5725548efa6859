/**
 * The present-value and drift warnings that no real data of the demo raise, each from a case
 * built to raise it (the thresholds are our own, docs/methods.md "Warnings"), and each placed
 * under the table it qualifies on the terminal report and the HTML report:
 *   DP_NEAR_UNIT_ROOT   dp falling by 0.02 a year (phi = 1 up to a wiggle): 1 - rho phi is
 *                       about 1 - rho < 0.05 once mean dp is below ln(0.05/0.95) = -2.94
 *   LARGE_IDENTITY_GAP  dp climbing from -4 to +4 in steps of 2 and falling back every five
 *                       years: the return's first-order expansion around mean dp is poor that
 *                       far out, and the identity misses 1 by about 0.16
 *   ASSET_DROPPED       a return series with one month missing inside the common sample
 * The data are invented; each expected warning follows from how the data were built.
 */
import { describe, expect, it } from 'vitest';
import type { ReturnSeries } from '../../../shared/data.js';
import { present } from '../../../shared/present/index.js';
import type { PresentValueResult } from '../../../shared/results.js';
import { resultToHtml } from '../../../shared/report/html.js';
import { resultToText } from '../../../shared/report/text.js';
import type { YearlyValues } from '../../../shared/returns/yearly.js';
import { parseDriftSpec, parsePresentValueSpec } from '../../../shared/spec.js';
import { LARGE_GAP, NEAR_UNIT_ROOT } from '../../../shared/values/dividendPrice.js';
import { driftAnalysis, driftPanel } from '../../../shared/values/drift.js';
import { presentValueOf } from '../../../shared/values/presentValue.js';
import { demoHistories } from './helpers.js';

/** Yearly values whose dp, r and dd are the given log series (P_0 = 100). */
function yearly(dp: number[], dd: number[]): YearlyValues {
  const T = dp.length;
  const dividend = new Float64Array(T);
  const price = new Float64Array(T);
  dividend[0] = 5;
  for (let t = 1; t < T; t++) dividend[t] = dividend[t - 1] * Math.exp(dd[t]);
  for (let t = 0; t < T; t++) price[t] = dividend[t] / Math.exp(dp[t]);
  const years = Array.from({ length: T }, (_, t) => String(1990 + t));
  return { years, closes: years.map((y) => `${y}-12-31`), price, dividend, weighting: 'single', withoutShares: [], limitedBy: { first: [], last: [] } };
}

function decomposition(v: YearlyValues): PresentValueResult {
  return presentValueOf(parsePresentValueSpec({ analysis: 'present-value', asset: 'built' }), ['built'], v);
}

/** The warning is listed at the top and under each named table, in the text and HTML reports. */
function placedEverywhere(r: PresentValueResult | ReturnType<typeof driftAnalysis>, code: string, tables: string[]): void {
  expect(r.warnings.map((w) => w.code)).toContain(code);
  const p = present(r);
  for (const id of tables) expect(p.tables.find((t) => t.id === id)?.warnings.map((w) => w.code), id).toContain(code);
  const text = resultToText(r);
  expect(text).toContain(`${code}:`);
  expect(text).toMatch(new RegExp(`! warning \\d+ \\(${code}\\) applies to this table`));
  const html = resultToHtml(r);
  for (const id of tables) expect(html).toMatch(new RegExp(`data-table="${id}"[\\s\\S]*?data-warning="${code}"`));
}

describe('present-value warnings from built cases', () => {
  it('DP_NEAR_UNIT_ROOT: dp falling by 0.02 a year for 40 years', () => {
    const T = 40;
    const dp = Array.from({ length: T }, (_, t) => -3.2 - 0.02 * t + 0.005 * Math.sin(3 * t));
    const dd = Array.from({ length: T }, (_, t) => 0.02 + 0.01 * Math.sin(t));
    const r = decomposition(yearly(dp, dd));
    expect(1 - r.rho * r.regressions.dp.b).toBeLessThan(NEAR_UNIT_ROOT);
    placedEverywhere(r, 'DP_NEAR_UNIT_ROOT', ['long-run']);
  });

  it('LARGE_IDENTITY_GAP: dp climbing from -4 to +4 every five years, far from where the return is linearised', () => {
    const T = 40;
    const dp = Array.from({ length: T }, (_, t) => -4 + 8 * ((t % 5) / 4));
    const dd = Array.from({ length: T }, (_, t) => 0.02 + 0.01 * Math.sin(t));
    const r = decomposition(yearly(dp, dd));
    expect(Math.abs(r.identity.gap)).toBeGreaterThan(LARGE_GAP);
    placedEverywhere(r, 'LARGE_IDENTITY_GAP', ['summary', 'long-run']);
  });
});

describe('drift warnings from built cases', () => {
  it('ASSET_DROPPED: a return series with a month missing inside the common sample is left out, by name and month', () => {
    const histories = demoHistories();
    const months = histories[0].dates.slice(1).filter((d) => !d.startsWith('2010-06'));
    const fund: ReturnSeries = { name: 'gapped-fund', frequency: 'monthly', periods: months, net: Float64Array.from(months, (_, t) => 0.004 + 0.03 * Math.sin(t)) };
    const spec = parseDriftSpec({ analysis: 'drift', assets: ['lanternfold-power', 'gapped-fund'] });
    const r = driftAnalysis(spec, driftPanel(spec, histories, [fund]));
    expect(r.assets.map((a) => a.asset)).toEqual(['lanternfold-power']);
    const w = r.warnings.find((x) => x.code === 'ASSET_DROPPED');
    expect(w?.message).toMatch(/^gapped-fund left out: no value in 1 of the \d+ periods .*first missing: 2010-06/);
    placedEverywhere(r, 'ASSET_DROPPED', ['drift']);
  });
});

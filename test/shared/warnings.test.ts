/**
 * Every warning code (shared/warnings.ts, docs/methods.md "Warnings") raised by a case
 * built to raise it, and shown on every surface that renders the result: the terminal
 * report, the HTML report (and so the PDF printed from it), the LaTeX tables, the CSV
 * sidecar about.txt and the XLSX About sheet (read back with exceljs). The app's screens
 * render the same list (components/ResultHeader.vue, DataTable.vue); the browser suite
 * checks the demo fit's warning on screen (test/e2e/flow.ts). The data are seeded and
 * invented; each case's expected warning follows from how it was built (stated beside it).
 */
import ExcelJS from 'exceljs';
import { describe, expect, it } from 'vitest';
import { backtest } from '../../shared/backtest/index.js';
import { assembleCompare, type ModelOutcome } from '../../shared/compare/compare.js';
import { ConsumptionModel } from '../../shared/estimation/consumptionSdf.js';
import { fit } from '../../shared/estimation/fit.js';
import type { ReturnsPanel } from '../../shared/panel.js';
import type { AnyResult, ResultWarning } from '../../shared/results.js';
import { resultToCsv } from '../../shared/report/csv.js';
import { resultToHtml } from '../../shared/report/html.js';
import { resultToLatex } from '../../shared/report/latex.js';
import { resultToText } from '../../shared/report/text.js';
import { parseCompareSpec, parseFitSpec } from '../../shared/spec.js';
import { PERIODS_PER_MOMENT, S_PIVOT_WARN } from '../../shared/warnings.js';
import { resultToXlsx } from '../../src-main/export/xlsx.js';
import { sampleFit } from './report/sample-results.js';
import { normal, rng } from './seeded-draws.js';


function panel(T: number, N: number, K: number, seed: number): ReturnsPanel {
  const r = rng(seed);
  const f = Array.from({ length: K }, () => Float64Array.from({ length: T }, () => 0.005 + 0.04 * normal(r)));
  const returns = Array.from({ length: N }, (_, i) => Float64Array.from({ length: T }, (_, t) => 0.005 + (0.5 + 0.05 * i) * f[0][t] + 0.05 * normal(r)));
  const periods = Array.from({ length: T }, (_, t) => `${2001 + Math.floor(t / 12)}-${String((t % 12) + 1).padStart(2, '0')}-28`);
  return { frequency: 'monthly', periods, assets: returns.map((_, i) => `A${i + 1}`), returnKind: 'excess', returns, factors: f.map((values, k) => ({ name: `f${k + 1}`, values })), sampleNotes: [] };
}

const spec3 = parseFitSpec({ returns: 'excess', riskfree: 'rf', model: { kind: 'linear', factors: ['f1', 'f2', 'f3'] } });
const spec1 = parseFitSpec({ returns: 'excess', riskfree: 'rf', model: { kind: 'linear', factors: ['f1'] } });

const codes = (ws: readonly ResultWarning[]) => ws.map((w) => w.code);

/** The warning is listed on every surface: code and message in text, HTML, LaTeX, the CSV sidecar and the XLSX About sheet. */
async function expectOnEverySurface(r: AnyResult, code: string): Promise<void> {
  const w = r.warnings.find((x) => x.code === code);
  expect(w, code).toBeDefined();
  const flat = (s: string) => s.replace(/\s+/g, ' ');
  expect(flat(resultToText(r)), `terminal: ${code}`).toContain(`${code}`);
  expect(flat(resultToText(r))).toContain(flat(w!.message));
  const html = resultToHtml(r);
  expect(html, `HTML: ${code}`).toContain(`data-warning="${code}"`);
  expect(resultToLatex(r), `LaTeX: ${code}`).toContain(`WARNING 1 ${code}`.slice(0, 8));
  expect(resultToLatex(r)).toContain(code.replace(/_/g, '\\_'));
  const about = resultToCsv(r).find((f) => f.table === 'about')!.text;
  expect(about, `CSV about.txt: ${code}`).toContain(`${code}`);
  const wb = new ExcelJS.Workbook();
  await wb.xlsx.load((await resultToXlsx(r)) as unknown as ArrayBuffer);
  expect(JSON.stringify(wb.getWorksheet('About')!.getSheetValues()), `XLSX About: ${code}`).toContain(code);
}

describe('warnings: each raised by a constructed case and shown on every surface', () => {
  it(`FEW_PERIODS: T = 36 periods for 33 moments (N = 30, K = 3), below ${PERIODS_PER_MOMENT} per moment; J is far too large`, async () => {
    const r = fit(spec3, panel(36, 30, 3, 1));
    expect(codes(r.warnings)).toContain('FEW_PERIODS');
    expect(r.warnings.find((w) => w.code === 'FEW_PERIODS')!.message).toMatch(/T = 36 periods for 33 moments \(1\.1 per moment/);
    expect(r.test.stat).toBeGreaterThan(10 * r.test.df!); // the symptom the warning explains
    // the same data over T = 240 periods: no warning
    expect(codes(fit(spec3, panel(240, 30, 3, 1)).warnings)).not.toContain('FEW_PERIODS');
    await expectOnEverySurface(r, 'FEW_PERIODS');
  });

  it(`S_NEAR_SINGULAR: a test asset equal to another up to 2e-6 noise (unexplained share about 1e-9 < ${S_PIVOT_WARN})`, async () => {
    const p = panel(240, 8, 3, 2);
    p.returns[7] = Float64Array.from(p.returns[6], (x, t) => x + 2e-6 * Math.sin(t * 1.7));
    const r = fit(spec3, p);
    expect(codes(r.warnings)).toEqual(['S_NEAR_SINGULAR']);
    expect(r.warnings[0].message).toMatch(/moment "A8"/);
    expect(codes(fit(spec3, panel(240, 8, 3, 2)).warnings)).not.toContain('S_NEAR_SINGULAR');
    await expectOnEverySurface(r, 'S_NEAR_SINGULAR');
  });

  it('BELOW_VOLATILITY_BOUND: alternating alphas of +-1% a period diversify into a Sharpe ratio the one-factor model cannot reach', async () => {
    const p = panel(240, 8, 1, 5);
    const rr = rng(9);
    p.returns = p.returns.map((_, i) => Float64Array.from(p.factors[0].values, (f) => 0.01 * (i % 2 ? 1 : -1) + f + 0.01 * normal(rr)));
    const r = fit(spec1, p);
    expect(codes(r.warnings)).toContain('BELOW_VOLATILITY_BOUND');
    expect(r.bound!.model!.sigma).toBeLessThan(r.bound!.atModel!);
    // Returns that m = 1 - 3 (f - fbar) prices exactly (each shifted so that its sample E[m R^e] is 0): a discount
    // factor that prices the assets lies on or above the bound (Hansen and Jagannathan 1991), so no warning.
    const priced = panel(240, 8, 1, 5);
    const f = priced.factors[0].values;
    const fbar = f.reduce((a, x) => a + x, 0) / f.length;
    const m = Float64Array.from(f, (x) => 1 - 3 * (x - fbar));
    priced.returns = priced.returns.map((x) => {
      const shift = x.reduce((a, v, t) => a + v * m[t], 0) / m.reduce((a, v) => a + v, 0);
      return Float64Array.from(x, (v) => v - shift);
    });
    const exact = fit(spec1, priced);
    expect(Math.max(...exact.pricingErrors.map((e) => Math.abs(e.alpha)))).toBeLessThan(1e-10);
    expect(codes(exact.warnings)).not.toContain('BELOW_VOLATILITY_BOUND');
    await expectOnEverySurface(r, 'BELOW_VOLATILITY_BOUND');
  });

  it('START_AT_EDGE and SEVERAL_MINIMA: the consumption start scan, on growth and returns whose scan objective is built by hand', async () => {
    // Three periods with consumption growth e^-0.02, 1, e^0.02, so x_t = growth^-gamma = e^(0.02 gamma), 1, e^(-0.02 gamma).
    const growth = Float64Array.of(Math.exp(-0.02), 1, Math.exp(0.02));
    // One excess return (a, -b, c): h(gamma) = (a X - b + c / X) / 3 with X = e^(0.02 gamma); its zeros are the roots
    // of a X^2 - b X + c, here X = e^0.2 and e^2, gamma = 10 and 100: two minima of h^2 on the scan's grid.
    const x1 = Math.exp(0.2);
    const x2 = Math.exp(2);
    const two = new ConsumptionModel([Float64Array.of(1, -(x1 + x2), x1 * x2)], ['A'], growth, 'excess', 1);
    expect(two.startScan().minima).toEqual([10, 100]);
    expect(codes(two.scanWarnings(10))).toEqual(['SEVERAL_MINIMA']);
    // h(gamma) = (X - e^5) / 3 (c = 0): its zero is at gamma = 250, beyond the grid's end at 200, so the best grid point is the edge.
    const edge = new ConsumptionModel([Float64Array.of(1, -Math.exp(5), 0)], ['A'], growth, 'excess', 1);
    expect(edge.startScan().gamma).toBe(200);
    expect(codes(edge.scanWarnings(250))).toEqual(['START_AT_EDGE']);
    expect(edge.scanWarnings(250)[0].message).toMatch(/estimate gamma = 250\.000 lies outside the range \[-20, 200\]/);
    // Shown on every surface: a fit carrying the two warnings the model gave.
    const r = { ...sampleFit(), warnings: [...two.scanWarnings(10), ...edge.scanWarnings(150)] };
    await expectOnEverySurface(r, 'SEVERAL_MINIMA');
    await expectOnEverySurface(r, 'START_AT_EDGE');
  });

  it('START_AT_EDGE through a whole fit: the GMM estimate gamma = 250 lies beyond the scan range, and the fit says so', async () => {
    // The three-period cycle of the scan case above, repeated 40 times: growth e^-0.02, 1, e^0.02, so with
    // X = e^(0.02 gamma) the moment of an excess return cycling (a, -b, c) is (a X - b + c / X) / 3. Asset A (1, -e^5, 0)
    // and asset B (1, -(e^5 + e^-5), 1) both have a zero at X = e^5, gamma = 250 (B's other zero is at -250): the
    // first stage reaches 250 exactly, beyond the scan's end at 200, where the scan's best point lies.
    const T = 120;
    const cycle = (v: number[]) => Float64Array.from({ length: T }, (_, t) => v[t % 3]);
    const growth = cycle([Math.exp(-0.02), 1, Math.exp(0.02)]);
    const returns = [cycle([1, -Math.exp(5), 0]), cycle([1, -(Math.exp(5) + Math.exp(-5)), 1])];
    const periods = Array.from({ length: T }, (_, t) => `${2001 + Math.floor(t / 12)}-${String((t % 12) + 1).padStart(2, '0')}-28`);
    const p: ReturnsPanel = { frequency: 'monthly', periods, assets: ['A', 'B'], returnKind: 'excess', returns, factors: [], consumptionGrowth: growth, sampleNotes: [] };
    const r = fit(parseFitSpec({ returns: 'excess', riskfree: 'rf', model: { kind: 'consumption', consumption: 'c', delta: 1 }, estimator: { stage: 'first', lags: 0 } }), p);
    const gamma = r.params.find((x) => x.name === 'gamma')!.estimate;
    expect(gamma).toBeCloseTo(250, 6);
    expect(codes(r.warnings)).toContain('START_AT_EDGE');
    await expectOnEverySurface(r, 'START_AT_EDGE');
  });

  it('ITERATION_CAP: iterated GMM stopped by estimator.maxIterations = 1 reports the last update, not converged', async () => {
    const r = fit(parseFitSpec({ returns: 'excess', riskfree: 'rf', model: { kind: 'linear', factors: ['f1'] }, estimator: { stage: 'iterated', maxIterations: 1 } }), panel(120, 8, 1, 6));
    expect(codes(r.warnings)).toContain('ITERATION_CAP');
    expect(r.convergence?.converged).toBe(false);
    await expectOnEverySurface(r, 'ITERATION_CAP');
  });

  it('FAILED_WINDOWS: a factor constant over the first 45 periods makes the windows inside them singular', async () => {
    const p = panel(150, 6, 1, 7);
    p.factors[0].values.fill(0.004, 0, 45);
    const s = parseFitSpec({ returns: 'excess', riskfree: 'rf', model: { kind: 'linear', factors: ['f1'] }, backtest: { window: 30, step: 10, horizon: 1 } });
    const r = backtest(s, p, { fit });
    expect(r.windowsFailed).toBeGreaterThan(0);
    expect(codes(r.warnings)).toEqual(['FAILED_WINDOWS']);
    expect(r.warnings[0].message).toMatch(new RegExp(`^${r.windowsFailed} of ${r.windows} back-test windows`));
    await expectOnEverySurface(r, 'FAILED_WINDOWS');
  });

  it('FAILED_REPLICATIONS: bootstrap replications that could not be computed are counted and named', async () => {
    const { spec, fits } = parseCompareSpec({ returns: 'excess', riskfree: 'rf', bootstrap: { replications: 10, block: 3 }, compare: [{ model: { kind: 'linear', factors: ['f1'] } }, { model: { kind: 'linear-raw', factors: ['f1'] } }] });
    const p = panel(120, 6, 1, 8);
    const outcomes: ModelOutcome[] = fits.map((f) => ({ label: f.label!, spec: f, fit: fit(f, p) }));
    const values = Float64Array.from({ length: 20 }, (_, k) => (k < 6 ? Number.NaN : 0.01 + 0.001 * k));
    const r = assembleCompare(spec, [p, p], outcomes, { members: [0, 1], values, failures: ['NO_CONVERGENCE in 3 model fit(s), e.g.: the solver stopped'] });
    expect(codes(r.warnings)).toContain('FAILED_REPLICATIONS');
    expect(r.warnings.find((w) => w.code === 'FAILED_REPLICATIONS')!.message).toMatch(/up to 3 of 10 bootstrap replications/);
    expect(r.hjTests[0].used).toBe(7);
    await expectOnEverySurface(r, 'FAILED_REPLICATIONS');
  });
});

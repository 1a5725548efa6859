import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { ols, olsMany } from '../../../../shared/estimation/ols.js';
import { fromRowsDense } from './panelFixture.js';
import { expectClose } from '../../stats/close.js';

interface LongleyStatsmodels {
  versions: Record<string, string>;
  columns: string[];
  y: number[];
  x: number[][];
  statsmodels: { params: number[]; bse: number[]; residual_sd: number; rsquared: number; resid: number[] };
}
interface LongleyLm {
  y: number[];
  x: number[][];
  coefficients: number[];
  se: number[];
  sigma: number;
  r_squared: number;
  residuals: number[];
}
const fixtureDir = new URL('./fixtures/', import.meta.url);
const sm = JSON.parse(readFileSync(new URL('longley.json', fixtureDir), 'utf8')) as LongleyStatsmodels;
const lm = JSON.parse(readFileSync(new URL('longley_lm.json', fixtureDir), 'utf8')) as LongleyLm;

// NIST StRD, Linear Least Squares, "Longley" (higher difficulty), certified values to 15
// significant digits. Typed from memory of the NIST page (itl.nist.gov/div898/strd/lls/data/Longley.shtml);
// R's lm and statsmodels' OLS on the same data (fixtures) agree with them to about 12 digits.
const NIST = {
  coefficients: [-3482258.63459582, 15.0618722713733, -0.358191792925910e-1, -2.02022980381683, -1.03322686717359, -0.511041056535807e-1, 1829.15146461355],
  sd: [890420.383607373, 84.9149257747669, 0.334910077722432e-1, 0.488399681651699, 0.214274163161675, 0.226073200069370, 455.478499142212],
  residualSd: 304.854073561965,
  r2: 0.995479004577296,
};

function design(): ReturnType<typeof fromRowsDense> {
  return fromRowsDense(sm.x.map((r) => [1, ...r]));
}

describe('OLS on the NIST StRD Longley data', () => {
  const fit = ols(design(), sm.y, { name: 'Longley design', labels: sm.columns });

  it('uses the same 16 observations as R datasets::longley rescaled to NIST units', () => {
    expect(sm.y).toHaveLength(16);
    expect(lm.y).toEqual(sm.y);
    expect(lm.x).toEqual(sm.x);
  });

  it('coefficients match the NIST certified values to 1e-12 relative (observed about 1e-13)', () => {
    for (let j = 0; j < 7; j++) expectClose(fit.coefficients[j], NIST.coefficients[j], 1e-12, `b${j} vs NIST StRD Longley certified`);
  });
  it('standard deviations of the coefficients match NIST to 1e-12 relative', () => {
    for (let j = 0; j < 7; j++) expectClose(fit.se[j], NIST.sd[j], 1e-12, `sd(b${j}) vs NIST StRD Longley certified`);
  });
  it('residual SD and R^2 match NIST to 1e-12 relative', () => {
    expectClose(fit.sigma, NIST.residualSd, 1e-12, 'residual SD vs NIST StRD Longley certified');
    expectClose(fit.r2, NIST.r2, 1e-12, 'R^2 vs NIST StRD Longley certified');
    expect(fit.df).toBe(9);
    expect(fit.centered).toBe(true);
  });
  it('agrees with R lm (summary.lm) and statsmodels OLS to 1e-9 relative, residuals included', () => {
    for (let j = 0; j < 7; j++) {
      expectClose(fit.coefficients[j], lm.coefficients[j], 1e-9, `b${j} vs R lm`);
      expectClose(fit.se[j], lm.se[j], 1e-9, `se(b${j}) vs R summary.lm`);
      expectClose(fit.coefficients[j], sm.statsmodels.params[j], 1e-9, `b${j} vs statsmodels OLS ${sm.versions.statsmodels}`);
      expectClose(fit.se[j], sm.statsmodels.bse[j], 1e-9, `se(b${j}) vs statsmodels bse`);
    }
    expectClose(fit.sigma, lm.sigma, 1e-11, 'sigma vs R summary.lm');
    expectClose(fit.r2, sm.statsmodels.rsquared, 1e-12, 'R^2 vs statsmodels rsquared');
    for (let i = 0; i < 16; i++) {
      // Residuals are O(100); compare on an absolute scale of 1e-9 times the residual SD.
      expectClose(fit.residuals[i], lm.residuals[i], 0, `residual ${i + 1} vs R lm`, 1e-9 * lm.sigma);
      expectClose(fit.residuals[i], sm.statsmodels.resid[i], 0, `residual ${i + 1} vs statsmodels`, 1e-9 * lm.sigma);
      expectClose(fit.fitted[i] + fit.residuals[i], sm.y[i], 1e-15, `fitted + residual = y, row ${i + 1}`);
    }
  });
  it('olsMany with several responses on one design equals separate fits', () => {
    const y2 = sm.y.map((v, i) => v * 0.5 + sm.x[i][0]);
    const many = olsMany(design(), [sm.y, y2], { name: 'Longley design', labels: sm.columns });
    const single = ols(design(), y2, { name: 'Longley design', labels: sm.columns });
    for (let j = 0; j < 7; j++) {
      expect(many.fits[0].coefficients[j]).toBe(fit.coefficients[j]);
      expect(many.fits[1].coefficients[j]).toBe(single.coefficients[j]);
    }
  });
});

describe('OLS edge cases', () => {
  it('without a constant column R^2 is uncentered (R lm: y ~ 0 + x convention)', () => {
    // y = 2x exactly plus a known residual pattern: uncentered R^2 = 1 - RSS / sum y^2.
    const x = fromRowsDense([[1], [2], [3], [4]]);
    const y = [2.1, 3.9, 6.2, 7.8];
    const f = ols(x, y, { name: 'through-origin design', labels: ['x'] });
    const b = (2.1 * 1 + 3.9 * 2 + 6.2 * 3 + 7.8 * 4) / 30; // closed form x'y / x'x
    expectClose(f.coefficients[0], b, 1e-14, 'slope through origin (closed form)');
    const rss = y.reduce((s, v, i) => s + (v - b * (i + 1)) ** 2, 0);
    expectClose(f.r2, 1 - rss / y.reduce((s, v) => s + v * v, 0), 1e-13, 'uncentered R^2');
    expect(f.centered).toBe(false);
  });
  it('n <= p is UNDERIDENTIFIED naming the counts', () => {
    expect(() => ols(fromRowsDense([[1, 2], [1, 3]]), [1, 2], { name: 'tiny design' })).toThrow(/2 observations for 2 coefficients/);
  });
});

/**
 * Properties of the GMM engine that follow from the definitions (METHODS 2-3), on seeded
 * data. Closed forms are computed with ml-matrix (a general-purpose matrix library), not
 * with the project's own linear algebra.
 */
import { Matrix, solve } from 'ml-matrix';
import { describe, expect, it } from 'vitest';
import { gmmFitDetailed } from '../../../shared/estimation/gmmFit.js';
import { longRunCovariance } from '../../../shared/estimation/longRunCovariance.js';
import { seriesProductsUpper } from '../../../shared/linalg/matrix.js';
import type { ReturnsPanel } from '../../../shared/panel.js';
import { parseFitSpec, type FitSpecInput } from '../../../shared/spec.js';
import { expectClose, monthEnds } from './helpers.js';
import { mulberry32 } from '../../../shared/random.js';

const rng = mulberry32;
function normals(r: () => number, n: number): Float64Array {
  const out = new Float64Array(n);
  for (let i = 0; i < n; i++) out[i] = Math.sqrt(-2 * Math.log(1 - r())) * Math.cos(2 * Math.PI * r());
  return out;
}
const mean = (x: ArrayLike<number>) => Array.from(x).reduce((a, b) => a + b, 0) / x.length;

function panel(returns: Float64Array[], factors: Float64Array[], kind: 'excess' | 'gross', growth?: Float64Array): ReturnsPanel {
  const T = returns[0].length;
  return {
    frequency: 'monthly',
    periods: monthEnds(T),
    assets: returns.map((_, i) => `A${i + 1}`),
    returnKind: kind,
    returns,
    factors: factors.map((values, k) => ({ name: `f${k + 1}`, values })),
    riskfreeGross: new Float64Array(T).fill(1.002),
    ...(growth ? { consumptionGrowth: growth } : {}),
    sampleNotes: [],
  };
}

function randomFactors(r: () => number, T: number, K: number): Float64Array[] {
  return Array.from({ length: K }, (_, k) => Float64Array.from(normals(r, T), (z) => 0.004 + 0.001 * k + 0.04 * z));
}

function noisyReturns(r: () => number, f: Float64Array[], N: number): Float64Array[] {
  const T = f[0].length;
  return Array.from({ length: N }, (_, i) => {
    const e = normals(r, T);
    return Float64Array.from(e, (z, t) => 0.001 * (i - N / 2) * 0.2 + f.reduce((s, fk, k) => s + (0.5 + 0.1 * i * (k + 1)) * fk[t], 0) + 0.03 * z);
  });
}

const spec = (s: Partial<FitSpecInput> & { model: FitSpecInput['model'] }) => parseFitSpec({ returns: 'excess', riskfree: 'rf', ...s });

describe('a model that prices the assets exactly (returns built from a known SDF, no noise)', () => {
  const r = rng(11);
  const T = 240;
  const N = 8;
  const f = randomFactors(r, T, 2);
  const b = [2.5, -1.5];
  const fbar = f.map(mean);
  const m = Float64Array.from({ length: T }, (_, t) => 1 - b[0] * (f[0][t] - fbar[0]) - b[1] * (f[1][t] - fbar[1]));
  // R_i = z_i - mean(z_i m) (mean(m) = 1), so that mean(R_i m) = 0 exactly in the sample.
  const excess = noisyReturns(r, f, N).map((z) => {
    const c = mean(Float64Array.from(z, (x, t) => x * m[t]));
    return Float64Array.from(z, (x) => x - c);
  });
  for (const stage of ['first', 'second', 'iterated', 'cue'] as const)
    it(`linear demeaned, ${stage} stage: pricing errors below 1e-12, J near 0, b recovered`, () => {
      const { result } = gmmFitDetailed(spec({ model: { kind: 'linear', factors: ['f1', 'f2'] }, estimator: { stage } }), panel(excess, f, 'excess'));
      for (const e of result.pricingErrors) expect(Math.abs(e.alpha), `${e.asset} alpha ${e.alpha}`).toBeLessThan(1e-12);
      expectClose(result.params[0].estimate, b[0], 1e-9, 'b.f1');
      expectClose(result.params[1].estimate, b[1], 1e-9, 'b.f2');
      expect(result.test.stat).toBeLessThan(1e-12);
      if (stage !== 'first') expect(result.tests.find((t) => t.name === 'Hansen J')!.stat).toBeLessThan(1e-12);
      expect(result.hj!.distance).toBeLessThan(1e-9);
    });

  it('linear on gross returns, E[mR] = 1 exactly: pricing errors below 1e-12', () => {
    const a = 0.998;
    const mg = Float64Array.from({ length: T }, (_, t) => a - 3 * f[0][t] + 1 * f[1][t]);
    const Em = mean(mg);
    const gross = noisyReturns(r, f, N).map((z) => {
      const c = (1 - mean(Float64Array.from(z, (x, t) => (1 + x) * mg[t]))) / Em;
      return Float64Array.from(z, (x) => 1 + x + c);
    });
    const { result } = gmmFitDetailed(parseFitSpec({ returns: 'gross', model: { kind: 'linear-gross', factors: ['f1', 'f2'] } }), panel(gross, f, 'gross'));
    for (const e of result.pricingErrors) expect(Math.abs(e.alpha), `${e.asset} alpha ${e.alpha}`).toBeLessThan(1e-12);
    expectClose(result.params[0].estimate, a, 1e-10, 'a');
    expect(result.tests.find((t) => t.name === 'Hansen J')!.stat).toBeLessThan(1e-12);
  });

  it('consumption model on gross returns, E[mR] = 1 exactly: delta and gamma recovered', () => {
    const growth = Float64Array.from(normals(r, T), (z) => Math.exp(0.002 + 0.01 * z));
    const delta = 0.995;
    const gamma = 4;
    const mc = Float64Array.from(growth, (x) => delta * x ** -gamma);
    const Em = mean(mc);
    const gross = noisyReturns(r, f, N).map((z) => {
      const c = (1 - mean(Float64Array.from(z, (x, t) => (1 + x) * mc[t]))) / Em;
      return Float64Array.from(z, (x) => 1 + x + c);
    });
    const { result } = gmmFitDetailed(parseFitSpec({ returns: 'gross', model: { kind: 'consumption', consumption: 'c' } }), panel(gross, [], 'gross', growth));
    for (const e of result.pricingErrors) expect(Math.abs(e.alpha), `${e.asset} alpha ${e.alpha}`).toBeLessThan(1e-12);
    expectClose(result.params[0].estimate, delta, 1e-9, 'delta');
    expectClose(result.params[1].estimate, gamma, 1e-9, 'gamma');
  });
});

describe('the demeaned model', () => {
  const r = rng(23);
  const T = 300;
  const f = randomFactors(r, T, 3);
  const ex = noisyReturns(r, f, 10);
  const names = ['f1', 'f2', 'f3'];

  for (const stage of ['first', 'second', 'iterated', 'cue'] as const)
    it(`${stage} stage: b and the pricing errors do not move when a constant is added to a factor; mu moves by it`, () => {
      const s = spec({ model: { kind: 'linear', factors: names }, estimator: { stage, lags: 2 } });
      const base = gmmFitDetailed(s, panel(ex, f, 'excess')).result;
      const shifted = f.map((x, k) => (k === 1 ? Float64Array.from(x, (v) => v + 0.05) : x));
      const moved = gmmFitDetailed(s, panel(ex, shifted, 'excess')).result;
      for (let k = 0; k < 3; k++) {
        expectClose(moved.params[k].estimate, base.params[k].estimate, 1e-8, `b.${names[k]}`);
        expectClose(moved.params[k].se, base.params[k].se, 1e-8, `se b.${names[k]}`);
        expectClose(moved.params[3 + k].estimate, base.params[3 + k].estimate + (k === 1 ? 0.05 : 0), 1e-8, `mu.${names[k]}`);
      }
      base.pricingErrors.forEach((e, i) => expectClose(moved.pricingErrors[i].alpha, e.alpha, 1e-7, `alpha ${e.asset}`, 1e-4));
      expectClose(moved.test.stat, base.test.stat, 1e-8, 'pricing-error statistic');
    });

  it('first stage with W = I is the closed form b = (d\'d)^-1 d\' E[R], d = cov(R, f) (ml-matrix solve)', () => {
    const { result } = gmmFitDetailed(spec({ model: { kind: 'linear', factors: names }, estimator: { stage: 'first' } }), panel(ex, f, 'excess'));
    const fb = f.map(mean);
    const d = new Matrix(ex.map((R) => f.map((fk, k) => mean(Float64Array.from(R, (x, t) => x * (fk[t] - fb[k]))))));
    const ER = Matrix.columnVector(ex.map(mean));
    const bClosed = solve(d.transpose().mmul(d), d.transpose().mmul(ER)).to1DArray();
    bClosed.forEach((b, k) => expectClose(result.params[k].estimate, b, 1e-10, `b.${names[k]}`)); // ml-matrix solve of the normal equations
    fb.forEach((m, k) => expectClose(result.params[3 + k].estimate, m, 1e-14, `mu.${names[k]} = fbar`));
    // alpha_i = mean(R_i) - cov(R_i, f') b, and E[m] = 1 at the first stage (METHODS 2).
    const alpha = ER.sub(d.mmul(Matrix.columnVector(bClosed))).to1DArray();
    alpha.forEach((a, i) => expectClose(result.pricingErrors[i].alpha, a, 1e-9, `alpha ${i}`, 1e-4));
    expectClose(result.sdf!.mean, 1, 1e-14, 'E[m]');
  });

  it('lambda = Sigma_f b with s.e. from Sigma_f Var(b) Sigma_f (ml-matrix)', () => {
    const { result, estimate } = gmmFitDetailed(spec({ model: { kind: 'linear', factors: names } }), panel(ex, f, 'excess'));
    const fb = f.map(mean);
    const Sf = new Matrix(f.map((a, i) => f.map((c, j) => mean(Float64Array.from(a, (x, t) => (x - fb[i]) * (c[t] - fb[j]))))));
    const p = estimate.covTheta.cols;
    const Vb = new Matrix(names.map((_, i) => names.map((__, j) => estimate.covTheta.data[i * p + j])));
    const b = Matrix.columnVector(result.params.slice(0, 3).map((x) => x.estimate));
    const lam = Sf.mmul(b).to1DArray();
    const V = Sf.mmul(Vb).mmul(Sf);
    names.forEach((n, k) => {
      const row = result.params.find((x) => x.name === `lambda.${n}`)!;
      expectClose(row.estimate, lam[k], 1e-12, `lambda.${n}`);
      expectClose(row.se, Math.sqrt(V.get(k, k)), 1e-10, `se lambda.${n}`);
      expect(row.note).toMatch(/Sigma_f treated as known/);
    });
  });

  it('at the efficient second stage the pricing-error statistic equals Hansen J (METHODS 3)', () => {
    const { result } = gmmFitDetailed(spec({ model: { kind: 'linear', factors: names }, estimator: { stage: 'second', lags: 3 } }), panel(ex, f, 'excess'));
    const J = result.tests.find((t) => t.name === 'Hansen J')!;
    expectClose(result.test.stat, J.stat, 1e-9, 'g\'Var(g)^+g vs J');
    expect(result.test.df).toBe(10 - 3);
  });

  it('annualised numbers are the per-period ones times the periods per year', () => {
    const { result } = gmmFitDetailed(spec({ model: { kind: 'linear', factors: names } }), panel(ex, f, 'excess'));
    for (const e of result.pricingErrors) {
      expect(e.alphaAnnual).toBe(e.alpha * 12);
      expect(e.seAnnual).toBe(e.se * 12);
    }
    expect(result.fit.rmseAnnual).toBe(result.fit.rmse * 12);
  });
});

describe('gmmHjSquared', () => {
  it('equals the squared HJ distance of the full fit, for a linear and a consumption model', async () => {
    const { gmmHjSquared } = await import('../../../shared/estimation/gmmFit.js');
    const r = rng(31);
    const T = 200;
    const f = randomFactors(r, T, 2);
    const ex = noisyReturns(r, f, 7);
    const s1 = spec({ model: { kind: 'linear', factors: ['f1', 'f2'] } });
    const p1 = panel(ex, f, 'excess');
    expectClose(gmmHjSquared(s1, p1), gmmFitDetailed(s1, p1).result.hj!.distance ** 2, 1e-12, 'HJ^2 linear');
    const growth = Float64Array.from(normals(r, T), (z) => Math.exp(0.002 + 0.01 * z));
    const gross = ex.map((x) => Float64Array.from(x, (v) => 1.002 + v));
    const s2 = parseFitSpec({ returns: 'gross', model: { kind: 'consumption', consumption: 'c' } });
    const p2 = panel(gross, [], 'gross', growth);
    expectClose(gmmHjSquared(s2, p2), gmmFitDetailed(s2, p2).result.hj!.distance ** 2, 1e-12, 'HJ^2 consumption');
  });
});

describe('Newey-West filter: the sums in the order of the definition', () => {
  // S = (1/T) sum_t v_t u_t' with v = u + sum_j w_j (u lagged j + u led j), the sums added
  // pairwise for j = 1..L (lag then lead for each period): the one-pass filter of
  // longRunCovariance must give the same bits, at every T from L + 2 up.
  it('gives the same bits as the pairwise form, sample ends included', () => {
    const r = rng(20261202);
    for (const [T, L] of [[3, 1], [7, 5], [11, 5], [12, 5], [40, 0], [288, 5], [1001, 12]]) {
      const u = Array.from({ length: 4 }, () => normals(r, T));
      const S = longRunCovariance(u, L, true);
      const centered = u.map((x) => {
        const m = x.reduce((a, b) => a + b, 0) / T;
        return Float64Array.from(x, (v) => v - m);
      });
      const v = centered.map((x) => {
        const out = Float64Array.from(x);
        for (let j = 1; j <= L; j++) {
          const wj = 1 - j / (L + 1);
          for (let t = 0; t + j < T; t++) {
            out[t] += wj * x[t + j];
            out[t + j] += wj * x[t];
          }
        }
        return out;
      });
      const expected = seriesProductsUpper(v, centered);
      for (let k = 0; k < expected.length; k++) expect(Object.is(S.data[k], expected[k] * (1 / T)), `T ${T}, L ${L}, entry ${k}`).toBe(true);
    }
  });
});

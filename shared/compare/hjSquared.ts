/**
 * Squared Hansen-Jagannathan distance of a linear discount-factor model on a panel,
 * optionally on resampled periods (the bootstrap's inner loop):
 *
 *   HJ^2 = min_theta g_A(theta)' (E[R R'])^{-1} g_A(theta)   (Hansen and Jagannathan, 1997)
 *
 * with g_A the N asset pricing errors and E[RR'] the second moments of the test-asset
 * returns used. The asset errors are linear in the free parameters:
 *   linear (demeaned, mu held at the sample mean fbar)   g_A = Rbar - cov(R, f) b
 *   linear-raw                                           g_A = Rbar - E[R f'] b
 *   linear-gross                                         g_A = a Rbar - E[R f'] b - 1
 * so the minimum is a weighted least-squares problem, solved by QR of the whitened
 * system C^{-1} X (E[RR'] = C C'). This is the same number the estimator reports as
 * the HJ distance (squared); the test in test/shared/compare checks that.
 */
import { DeflatorError } from '../errors.js';
import type { ReturnsPanel } from '../panel.js';
import type { ModelSpec } from '../spec.js';
import { choleskyInto, forwardSolveInPlace } from '../linalg/cholesky.js';
import { seriesDot, seriesProductsUpper } from '../linalg/matrix.js';
import { applyQt, qrFactor, solveRInPlace } from '../linalg/qr.js';

export function linearHjApplies(model: ModelSpec): boolean {
  return model.kind === 'linear' || model.kind === 'linear-raw' || model.kind === 'linear-gross';
}

/**
 * HJ^2 of the model on the periods idx (all periods when idx is null). `assets` are the
 * test-asset return series, `factors` the model's factor series, both on the panel's periods.
 */
export function linearHjSquared(
  kind: 'linear' | 'linear-raw' | 'linear-gross',
  assets: readonly Float64Array[],
  factors: readonly Float64Array[],
  idx: Int32Array | null,
  prices?: readonly (Float64Array | null)[],
): number {
  const N = assets.length;
  const K = factors.length;
  const T = idx ? idx.length : assets[0].length;
  const at = (s: Float64Array, t: number): number => s[idx ? idx[t] : t];
  // The series on the replication's periods, then the kernel layer's products (the Gram
  // kernel: E[RR'] as the fit's HJ weight computes it).
  const pick = (s: Float64Array): Float64Array => {
    if (!idx) return s;
    const out = new Float64Array(T);
    for (let t = 0; t < T; t++) out[t] = s[idx[t]];
    return out;
  };
  const R = assets.map(pick);
  const F = factors.map(pick);
  const ERR = seriesProductsUpper(R, R);
  for (let k = 0; k < ERR.length; k++) ERR[k] /= T;
  const Rbar = new Float64Array(N);
  const fbar = new Float64Array(K);
  const ERf = new Float64Array(N * K);
  for (let i = 0; i < N; i++) {
    let s = 0;
    const ri = R[i];
    for (let t = 0; t < T; t++) s += ri[t];
    Rbar[i] = s / T;
    for (let k = 0; k < K; k++) ERf[i * K + k] = seriesDot(ri, F[k]) / T;
  }
  for (let k = 0; k < K; k++) {
    let s = 0;
    const fk = F[k];
    for (let t = 0; t < T; t++) s += fk[t];
    fbar[k] = s / T;
  }
  const p = kind === 'linear-gross' ? K + 1 : K;
  if (N <= p) throw new DeflatorError('UNDERIDENTIFIED', `HJ distance: ${N} test assets for ${p} free parameters`, 'use more test assets');
  const X = new Float64Array(N * p);
  const y = new Float64Array(N);
  for (let i = 0; i < N; i++) {
    if (kind === 'linear-gross') {
      X[i * p] = Rbar[i];
      for (let k = 0; k < K; k++) X[i * p + 1 + k] = -ERf[i * K + k];
      // The payoff's price: 1, or E[z] over the periods for a gross return scaled by z (METHODS 9).
      const z = prices?.[i];
      if (z) {
        let sz = 0;
        for (let t = 0; t < T; t++) sz += at(z, t);
        y[i] = sz / T;
      } else y[i] = 1;
    } else {
      for (let k = 0; k < K; k++) X[i * p + k] = -(ERf[i * K + k] - (kind === 'linear' ? Rbar[i] * fbar[k] : 0));
      y[i] = -Rbar[i];
    }
  }
  const C = new Float64Array(N * N);
  choleskyInto(ERR, N, C, { name: "E[R R'] (second moments of the test-asset returns, the HJ weight)", hint: 'two test assets may be (almost) the same portfolio; drop one of them' });
  forwardSolveInPlace(C, N, X, p);
  forwardSolveInPlace(C, N, y, 1);
  const qr = qrFactor({ rows: N, cols: p, data: X }, { name: 'the HJ-weighted moment Jacobian' });
  const theta = applyQt(qr, y).slice(0, p);
  solveRInPlace(qr, theta, 1);
  let q = 0;
  for (let i = 0; i < N; i++) {
    let e = -y[i];
    for (let c = 0; c < p; c++) e += X[i * p + c] * theta[c];
    q += e * e;
  }
  return q;
}

/**
 * Test-asset and factor series of a model on a panel (the risk-free asset appended when
 * the spec makes it a test asset). On a conditioned panel (instruments, METHODS 9) the
 * test assets are the scaled payoffs, the risk-free one among them, and the factors the
 * scaled ones.
 */
export function modelSeries(model: ModelSpec, panel: ReturnsPanel, includeRiskfree: boolean): { assets: Float64Array[]; factors: Float64Array[] } {
  const assets = panel.returns.slice();
  if (panel.conditioning) return { assets, factors: panel.factors.map((f) => f.values) };
  if (includeRiskfree) {
    if (!panel.riskfreeGross) throw new DeflatorError('DATA_MISSING', 'includeRiskfree is set but the panel has no risk-free series', 'name the risk-free series in "riskfree"');
    assets.push(panel.riskfreeGross);
  }
  const factors = model.factors.map((name) => {
    const f = panel.factors.find((x) => x.name === name);
    if (!f) throw new DeflatorError('DATA_MISSING', `factor "${name}" is not in the panel`, 'import the factor series or fix model.factors');
    return f.values;
  });
  return { assets, factors };
}

/**
 * GMM for the linear discount-factor models on one window, from the window's rolling
 * cross-moments (crossMoments.ts), following METHODS 2-3 exactly:
 *
 * - linear (demeaned), m = 1 - b'(f - mu), moments (R^e m, f - mu). First stage:
 *   mu = fbar (the factor-mean moments carry an infinite weight) and W = I or the HJ
 *   weight (E[R R'])^{-1} on the N asset moments, so b = (C'WC)^{-1} C'W Rbar with
 *   C = cov(R, f) (divide by n). Second stage: W = S^{-1} on all N + K moments with S
 *   from the first-stage u_t; b and mu jointly minimise g'S^{-1}g (a quadratic in
 *   g, which is bilinear in (b, mu), solved by Newton's method with the exact Hessian).
 * - linear-raw, m = 1 - b'f; linear-gross, m = a - b'f with E[m R] = 1: g is linear in
 *   the parameters, so each stage is a weighted least-squares solve.
 *
 * Inference: second stage (1/n)(d'S^{-1}d)^{-1}, S the weighting S. First stage: the
 * sandwich (1/n)(d'Wd)^{-1} d'WSW d (d'Wd)^{-1}; for the demeaned model its limit as the
 * weight on the factor-mean moments grows, i.e. (A d)^{-1} A S A' (A d)^{-T} / n with
 * A = [d_b'W 0; 0 I] (Hansen, 1982, Theorem 3.1). Implied risk premia
 * lambda = Sigma_f b with s.e. by the delta method, Sigma_f treated as known.
 */
import { DeflatorError } from '../errors.js';
import type { CrossMoments, MomentMap } from './crossMoments.js';
import { longRunCovarianceFromSums } from './crossMoments.js';
import { choleskyInto, cholSolveInPlace, forwardSolveInPlace } from '../linalg/cholesky.js';
import { crossProducts, identityFlat, matMulFlat, transposeFlat } from '../linalg/matrix.js';
import { choleskyPivotNegligible } from '../linalg/policy.js';
import { applyQt, formQ, qrFactor, solveRInPlace, solveSquare, trySolveSquare, type QrFactorization } from '../linalg/qr.js';

export type LinearKind = 'linear' | 'linear-raw' | 'linear-gross';

export interface LinearWindowConfig {
  kind: LinearKind;
  stage: 'first' | 'second';
  weight: 'identity' | 'hj';
  lags: number;
  centered: boolean;
  factorNames: string[];
  /** Parameter names, when the caller has built them once (b.<f>, mu.<f>, lambda.<f>). */
  names?: { b: string[]; mu: string[]; lambda: string[] };
}

export interface WindowParam {
  name: string;
  estimate: number;
  se: number;
}

export interface LinearWindowFit {
  params: WindowParam[];
  /** In-sample pricing errors g_T (asset moments) at the estimate. */
  alpha: Float64Array;
  /** Parameter vectors for the out-of-sample m_t. */
  b: Float64Array;
  mu: Float64Array | null;
  a: number | null;
  iterations: number;
}

/** A weighting matrix as the solve it stands for. */
type Weight = { kind: 'identity' } | { kind: 'chol'; L: Float64Array; n: number };

function applyW(w: Weight, B: Float64Array, m: number): Float64Array {
  const X = B.slice();
  if (w.kind === 'chol') cholSolveInPlace(w.L, w.n, X, m);
  return X;
}

/** Window means and second moments read off the sums. */
export interface WindowMoments {
  n: number;
  Rbar: Float64Array;
  fbar: Float64Array;
  /** E[R f'] (N x K). */
  ERf: Float64Array;
  /** E[f f'] (K x K). */
  Eff: Float64Array;
}

export function windowMoments(cm: CrossMoments): WindowMoments {
  const { N, K, Q } = cm;
  const n = cm.n;
  const sh = cm.shift;
  const Rbar = new Float64Array(N);
  const fbar = new Float64Array(K);
  const ERf = new Float64Array(N * K);
  const Eff = new Float64Array(K * K);
  for (let i = 0; i < N; i++) Rbar[i] = sh + cm.m1[i] / n;
  for (let k = 0; k < K; k++) fbar[k] = cm.m1[(k + 1) * Q + N] / n;
  for (let i = 0; i < N; i++) for (let k = 0; k < K; k++) ERf[i * K + k] = cm.m1[(k + 1) * Q + i] / n + sh * fbar[k];
  const P = cm.P;
  for (let k = 0; k < K; k++) for (let l = 0; l < K; l++) Eff[k * K + l] = cm.xx[(k + 1) * P + (l + 1)] / n;
  return { n, Rbar, fbar, ERf, Eff };
}

function hjWeight(cm: CrossMoments): Weight {
  const { N, Q } = cm;
  if (!cm.keepYY) throw new DeflatorError('INPUT_INVALID', 'the window sums were built without E[RR\'] but the HJ weight needs it', 'build the sums with assetSecondMoments');
  const n = cm.n;
  const sh = cm.shift;
  const ERR = new Float64Array(N * N);
  // E[R_i R_j] = E[(y_i + s)(y_j + s)]
  for (let i = 0; i < N; i++) for (let j = 0; j < N; j++) ERR[i * N + j] = (cm.yy[i * Q + j] + sh * (cm.m1[i] + cm.m1[j])) / n + sh * sh;
  return { kind: 'chol', L: choleskyFactor(ERR, N, "E[R R'] (second moments of the test-asset returns, the HJ weight)"), n: N };
}

function firstStageWeight(cm: CrossMoments, weight: 'identity' | 'hj'): Weight {
  return weight === 'hj' ? hjWeight(cm) : { kind: 'identity' };
}

/** L^{-1} B for a Cholesky-factored weight W = (L L')^{-1}; B itself for W = I. */
function whiten(w: Weight, B: Float64Array, m: number): Float64Array {
  const X = B.slice();
  if (w.kind === 'chol') forwardSolveInPlace(w.L, w.n, X, m);
  return X;
}

/** Cholesky factor of a flat n x n matrix under the kernel layer's policy (shared/linalg/policy.ts). */
function choleskyFactor(A: Float64Array, n: number, what: string, code: 'NOT_POSITIVE_DEFINITE' | 'SINGULAR' = 'NOT_POSITIVE_DEFINITE'): Float64Array {
  const L = new Float64Array(n * n);
  choleskyInto(A, n, L, { name: what, code, hint: 'check for collinear or constant series, fewer periods than moments, or too many Newey-West lags for the window' });
  return L;
}

/**
 * theta = (X'WX)^{-1} X'W y for g = X theta - y (r moments, p parameters), by QR of the
 * whitened L^{-1}X (never the normal equations, which square the condition number).
 */
function weightedLeastSquares(X: Float64Array, y: Float64Array, r: number, p: number, w: Weight, what: string): { theta: Float64Array; qr: QrFactorization } {
  if (r < p) throw new DeflatorError('UNDERIDENTIFIED', `${what}: ${r} moments for ${p} parameters`, 'use more test assets than factors');
  const Xw = whiten(w, X, p);
  const yw = whiten(w, y, 1);
  const qr = qrFactor({ rows: r, cols: p, data: Xw }, { name: what });
  const theta = applyQt(qr, yw).slice(0, p);
  solveRInPlace(qr, theta, 1);
  return { theta, qr };
}

/**
 * Sandwich (1/n)(X'WX)^{-1} X'W S W X (X'WX)^{-1} from the QR of the whitened X:
 * R^{-1} Q' (L^{-1} S L^{-T}) Q R^{-T} / n.
 */
function sandwich(fit: { qr: QrFactorization }, r: number, p: number, w: Weight, S: Float64Array, n: number): Float64Array {
  const Q = formQ(fit.qr);
  const Y = whiten(w, S, r); // L^{-1} S
  const Z = whiten(w, transposeFlat(Y, r, r), r); // L^{-1} S L^{-T}
  const ZQ = matMulFlat(Z, Q, r, r, p);
  const B = crossProducts(Q, ZQ, r, p, p);
  solveRInPlace(fit.qr, B, p); // R^{-1} B
  const V = transposeSq(B, p);
  solveRInPlace(fit.qr, V, p); // R^{-1} B R^{-T}
  for (let i = 0; i < V.length; i++) V[i] /= n;
  return V;
}

/** (R'R)^{-1} / n = R^{-1} R^{-T} / n. */
function informationInverse(qr: QrFactorization, p: number, n: number): Float64Array {
  const Rinv = identityFlat(p);
  solveRInPlace(qr, Rinv, p);
  const V = new Float64Array(p * p);
  for (let i = 0; i < p; i++) for (let j = 0; j < p; j++) {
    let s = 0;
    for (let k = 0; k < p; k++) s += Rinv[i * p + k] * Rinv[j * p + k];
    V[i * p + j] = s / n;
  }
  return V;
}

function transposeSq(X: Float64Array, p: number): Float64Array {
  const t = new Float64Array(p * p);
  for (let i = 0; i < p; i++) for (let j = 0; j < p; j++) t[j * p + i] = X[i * p + j];
  return t;
}

function se(V: Float64Array, p: number, i: number, what: string): number {
  const v = V[i * p + i];
  if (!(v >= 0) || !Number.isFinite(v)) throw new DeflatorError('NOT_POSITIVE_DEFINITE', `${what}: the parameter covariance has a negative or non-finite variance (${v}) on diagonal ${i + 1}`, 'the window is too short or the factors nearly collinear; use a longer window');
  return Math.sqrt(v);
}

function demeanedMap(b: Float64Array, mu: Float64Array): MomentMap {
  const K = b.length;
  const beta = new Float64Array(K + 1);
  let c = 1;
  for (let k = 0; k < K; k++) c += b[k] * mu[k];
  beta[0] = c;
  for (let k = 0; k < K; k++) beta[k + 1] = -b[k];
  const gamma: Float64Array[] = [];
  for (let k = 0; k < K; k++) {
    const g = new Float64Array(K + 1);
    g[0] = -mu[k];
    g[k + 1] = 1;
    gamma.push(g);
  }
  return { beta, delta: null, gamma };
}

function rawMap(b: Float64Array): MomentMap {
  const K = b.length;
  const beta = new Float64Array(K + 1);
  beta[0] = 1;
  for (let k = 0; k < K; k++) beta[k + 1] = -b[k];
  return { beta, delta: null, gamma: [] };
}

function grossMap(a: number, b: Float64Array): MomentMap {
  const K = b.length;
  const beta = new Float64Array(K + 1);
  beta[0] = a;
  for (let k = 0; k < K; k++) beta[k + 1] = -b[k];
  const delta = new Float64Array(K + 1);
  delta[0] = -1;
  return { beta, delta, gamma: [] };
}

const S_WHAT = 'S (Newey-West long-run covariance of the moments)';

export function parameterNames(factors: string[]): { b: string[]; mu: string[]; lambda: string[] } {
  return { b: factors.map((f) => `b.${f}`), mu: factors.map((f) => `mu.${f}`), lambda: factors.map((f) => `lambda.${f}`) };
}

/** Fits the configured linear model on the window the sums currently hold. */
export function fitLinearWindow(cm: CrossMoments, cfg: LinearWindowConfig): LinearWindowFit {
  if (cfg.lags >= cm.n) throw new DeflatorError('SAMPLE_TOO_SHORT', `window of ${cm.n} periods is too short for ${cfg.lags} Newey-West lags`, 'use fewer lags or a longer window');
  if (cfg.lags !== cm.lags) throw new DeflatorError('INPUT_INVALID', `the window sums hold ${cm.lags} lags, the fit asks for ${cfg.lags}`, 'move the sums with the same lag count');
  constantFactorCheck(cm, cfg.factorNames);
  switch (cfg.kind) {
    case 'linear':
      return fitDemeaned(cm, cfg);
    case 'linear-raw':
      return fitLinearInParams(cm, cfg, false);
    case 'linear-gross':
      return fitLinearInParams(cm, cfg, true);
  }
}

/**
 * A factor that does not vary over the window leaves its loading unidentified. From the
 * sums: its variance E[f^2] - fbar^2 is the Cholesky pivot of f after the constant in the
 * second moments of [1, f]; under the kernel layer's policy (shared/linalg/policy.ts) it
 * is negligible at or below PIVOT_TOL * E[f^2]. Checked here because the rolling sums of
 * a constant factor leave rounding noise where exact zeros belong, noise that a
 * scale-aware factorisation would otherwise take for a (tiny) variation.
 */
function constantFactorCheck(cm: CrossMoments, names: readonly string[]): void {
  const { N, K, Q, P } = cm;
  const n = cm.n;
  for (let k = 0; k < K; k++) {
    const mean = cm.m1[(k + 1) * Q + N] / n;
    const second = cm.xx[(k + 1) * P + (k + 1)] / n;
    if (choleskyPivotNegligible(second - mean * mean, second)) {
      throw new DeflatorError('SINGULAR', `factor "${names[k] ?? `f${k + 1}`}" is constant over the window, so its loading is not identified`, 'drop that factor or use windows over which it varies');
    }
  }
}

function fitLinearInParams(cm: CrossMoments, cfg: LinearWindowConfig, gross: boolean): LinearWindowFit {
  const { N, K } = cm;
  const wm = windowMoments(cm);
  const p = gross ? K + 1 : K;
  // g = X theta - y
  const X = new Float64Array(N * p);
  const y = new Float64Array(N);
  for (let i = 0; i < N; i++) {
    if (gross) {
      X[i * p] = wm.Rbar[i];
      for (let k = 0; k < K; k++) X[i * p + 1 + k] = -wm.ERf[i * K + k];
      y[i] = 1;
    } else {
      for (let k = 0; k < K; k++) X[i * p + k] = -wm.ERf[i * K + k];
      y[i] = -wm.Rbar[i];
    }
  }
  const mapOf = (th: Float64Array): MomentMap => (gross ? grossMap(th[0], th.subarray(1)) : rawMap(th));
  const W1 = firstStageWeight(cm, cfg.weight);
  const normalWhat = "the first-stage moment Jacobian d (collinear or constant factors?)";
  const first = weightedLeastSquares(X, y, N, p, W1, normalWhat);
  let theta = first.theta;
  const S1 = longRunCovarianceFromSums(cm, mapOf(theta), cfg.centered);
  let V: Float64Array;
  if (cfg.stage === 'first') {
    V = sandwich(first, N, p, W1, S1, cm.n);
  } else {
    const W2: Weight = { kind: 'chol', L: choleskyFactor(S1, N, S_WHAT), n: N };
    const second = weightedLeastSquares(X, y, N, p, W2, "S^{-1/2} d (the second-stage moment Jacobian)");
    theta = second.theta;
    V = informationInverse(second.qr, p, cm.n);
  }
  const alpha = new Float64Array(N);
  for (let i = 0; i < N; i++) {
    let s = -y[i];
    for (let c = 0; c < p; c++) s += X[i * p + c] * theta[c];
    alpha[i] = s;
  }
  const params: WindowParam[] = [];
  if (gross) params.push({ name: 'a', estimate: theta[0], se: se(V, p, 0, 'a') });
  const off = gross ? 1 : 0;
  const bNames = cfg.names?.b ?? cfg.factorNames.map((f) => `b.${f}`);
  for (let k = 0; k < K; k++) params.push({ name: bNames[k], estimate: theta[off + k], se: se(V, p, off + k, bNames[k]) });
  return { params, alpha, b: theta.slice(off), mu: null, a: gross ? theta[0] : null, iterations: 1 };
}

/** g(b, mu) and d = dg/d(b, mu)' for the demeaned model. */
function demeanedMoments(wm: WindowMoments, b: Float64Array, mu: Float64Array, N: number, K: number): { g: Float64Array; d: Float64Array } {
  const M = N + K;
  const p = 2 * K;
  const g = new Float64Array(M);
  const d = new Float64Array(M * p);
  let c = 1;
  for (let k = 0; k < K; k++) c += b[k] * mu[k];
  for (let i = 0; i < N; i++) {
    let s = wm.Rbar[i] * c;
    for (let k = 0; k < K; k++) {
      s -= wm.ERf[i * K + k] * b[k];
      d[i * p + k] = wm.Rbar[i] * mu[k] - wm.ERf[i * K + k];
      d[i * p + K + k] = wm.Rbar[i] * b[k];
    }
    g[i] = s;
  }
  for (let k = 0; k < K; k++) {
    g[N + k] = wm.fbar[k] - mu[k];
    d[(N + k) * p + K + k] = -1;
  }
  return { g, d };
}

function fitDemeaned(cm: CrossMoments, cfg: LinearWindowConfig): LinearWindowFit {
  const { N, K } = cm;
  const n = cm.n;
  const wm = windowMoments(cm);
  // First stage: mu = fbar, b from the N asset moments with W1.
  const C = new Float64Array(N * K);
  for (let i = 0; i < N; i++) for (let k = 0; k < K; k++) C[i * K + k] = wm.ERf[i * K + k] - wm.Rbar[i] * wm.fbar[k];
  const W1 = firstStageWeight(cm, cfg.weight);
  // g_R = Rbar - C b  ->  X = -C, y = -Rbar
  const Xneg = new Float64Array(N * K);
  const yneg = new Float64Array(N);
  for (let i = 0; i < N * K; i++) Xneg[i] = -C[i];
  for (let i = 0; i < N; i++) yneg[i] = -wm.Rbar[i];
  const normalWhat = "C = cov(R, f') (the first-stage moment Jacobian; collinear or constant factors?)";
  let b: Float64Array = weightedLeastSquares(Xneg, yneg, N, K, W1, normalWhat).theta;
  let mu: Float64Array = wm.fbar.slice();
  const M = N + K;
  const p = 2 * K;
  const S1 = longRunCovarianceFromSums(cm, demeanedMap(b, mu), cfg.centered);
  let V: Float64Array;
  let iterations = 1;
  if (cfg.stage === 'first') {
    const { d } = demeanedMoments(wm, b, mu, N, K);
    // A = [d_b' W1, 0; 0, I]  (p x M)
    const db = new Float64Array(N * K);
    for (let i = 0; i < N; i++) for (let k = 0; k < K; k++) db[i * K + k] = d[i * p + k];
    const W1db = applyW(W1, db, K); // N x K
    const A = new Float64Array(p * M);
    for (let k = 0; k < K; k++) for (let i = 0; i < N; i++) A[k * M + i] = W1db[i * K + k];
    for (let k = 0; k < K; k++) A[(K + k) * M + N + k] = 1;
    const Ad = matMulFlat(A, d, p, M, p);
    const ASAt = matMulFlat(matMulFlat(A, S1, p, M, M), transposeFlat(A, p, M), p, M, p);
    const X1 = solveSquare(Ad, p, ASAt, p, { name: normalWhat }); // (Ad)^{-1} A S A'
    const X1t = transposeSq(X1, p);
    V = solveSquare(Ad, p, X1t, p, { name: normalWhat }); // (Ad)^{-1} [(Ad)^{-1} A S A']' = (Ad)^{-1} A S A' (Ad)^{-T}
    for (let i = 0; i < V.length; i++) V[i] /= n;
  } else {
    const L = choleskyFactor(S1, M, S_WHAT);
    const res = newtonDemeaned(wm, L, b, mu, N, K);
    b = res.b;
    mu = res.mu;
    iterations = res.iterations;
    // (d'S^{-1}d)^{-1} / n from the Cholesky factor of tilde d' tilde d (p x p)
    const info = crossProducts(res.dw, res.dw, M, p, p);
    const Li = choleskyFactor(info, p, "d'S^{-1}d (the second-stage information matrix)", 'SINGULAR');
    V = identityFlat(p);
    cholSolveInPlace(Li, p, V, p);
    for (let i = 0; i < V.length; i++) V[i] /= n;
  }
  const { g } = demeanedMoments(wm, b, mu, N, K);
  const alpha = g.slice(0, N);
  // lambda = Sigma_f b, Sigma_f = E[ff'] - fbar fbar'
  const Sf = new Float64Array(K * K);
  for (let k = 0; k < K; k++) for (let l = 0; l < K; l++) Sf[k * K + l] = wm.Eff[k * K + l] - wm.fbar[k] * wm.fbar[l];
  const lambda = new Float64Array(K);
  for (let k = 0; k < K; k++) for (let l = 0; l < K; l++) lambda[k] += Sf[k * K + l] * b[l];
  const params: WindowParam[] = [];
  const names = cfg.names ?? parameterNames(cfg.factorNames);
  for (let k = 0; k < K; k++) params.push({ name: names.b[k], estimate: b[k], se: se(V, p, k, names.b[k]) });
  for (let k = 0; k < K; k++) params.push({ name: names.mu[k], estimate: mu[k], se: se(V, p, K + k, names.mu[k]) });
  for (let k = 0; k < K; k++) {
    let v = 0;
    for (let a = 0; a < K; a++) for (let c = 0; c < K; c++) v += Sf[k * K + a] * V[a * p + c] * Sf[k * K + c];
    params.push({ name: names.lambda[k], estimate: lambda[k], se: Math.sqrt(Math.max(v, 0)) });
  }
  return { params, alpha, b, mu, a: null, iterations };
}

/**
 * Minimises g(b, mu)' S^{-1} g(b, mu) from the first-stage estimate. With S = L L' and
 * tilde x = L^{-1} x, the whitened moments are affine in the parameter pieces:
 *   tilde g = (1 + b'mu) tilde r - tilde E b + tilde f - tilde F mu,
 * r = (Rbar, 0), E = (E[Rf'], 0), f = (0, fbar), F = (0, I), so each step costs O(M p^2)
 * after 2K + 2 triangular solves. Newton steps with the exact Hessian
 * 2(tilde d' tilde d + rho [0 I; I 0]), rho = tilde g' tilde r; a Gauss-Newton step with
 * step halving whenever the Newton step does not lower the objective. Stops when the
 * largest change is below 1e-12 x max(1, |theta|), or when the steps shrink
 * quadratically and the error they leave is below 1e-14 of it.
 */
function newtonDemeaned(wm: WindowMoments, L: Float64Array, b0: Float64Array, mu0: Float64Array, N: number, K: number): { b: Float64Array; mu: Float64Array; iterations: number; dw: Float64Array } {
  const M = N + K;
  const p = 2 * K;
  // whitened basis, columns: [r | E_1..E_K | f | F_1..F_K], M x (2K + 2)
  const nc = 2 * K + 2;
  const Bm = new Float64Array(M * nc);
  for (let i = 0; i < N; i++) {
    Bm[i * nc] = wm.Rbar[i];
    for (let k = 0; k < K; k++) Bm[i * nc + 1 + k] = wm.ERf[i * K + k];
  }
  for (let k = 0; k < K; k++) {
    Bm[(N + k) * nc + K + 1] = wm.fbar[k];
    Bm[(N + k) * nc + K + 2 + k] = 1;
  }
  forwardSolveInPlace(L, M, Bm, nc);
  const gw = new Float64Array(M);
  const trial = new Float64Array(M);
  const dw = new Float64Array(M * p);
  const theta = new Float64Array(p);
  const next = new Float64Array(p);
  for (let k = 0; k < K; k++) {
    theta[k] = b0[k];
    theta[K + k] = mu0[k];
  }
  const GN = new Float64Array(p * p);
  const H = new Float64Array(p * p);
  const grad = new Float64Array(p);
  let step: Float64Array | null;
  let q = whitenedMoments(Bm, nc, M, K, theta, gw);
  let prevChange = Number.POSITIVE_INFINITY;
  for (let it = 1; it <= 100; it++) {
    whitenedJacobian(Bm, nc, M, K, theta, dw);
    GN.fill(0);
    grad.fill(0);
    let rho = 0;
    for (let i = 0; i < M; i++) {
      const g = gw[i];
      rho += g * Bm[i * nc];
      const di = i * p;
      for (let a = 0; a < p; a++) {
        const da = dw[di + a];
        grad[a] += da * g;
        const ga = a * p;
        for (let c = 0; c < p; c++) GN[ga + c] += da * dw[di + c];
      }
    }
    H.set(GN);
    for (let k = 0; k < K; k++) {
      H[k * p + K + k] += rho;
      H[(K + k) * p + k] += rho;
    }
    let qNew = Number.POSITIVE_INFINITY;
    step = trySolveSquare(H, p, grad, 1, { name: 'the Hessian of the second-stage objective' });
    if (step) {
      for (let a = 0; a < p; a++) next[a] = theta[a] - step[a];
      qNew = whitenedMoments(Bm, nc, M, K, next, trial);
    }
    if (!(qNew <= q * (1 + 1e-12) + 1e-300)) {
      step = trySolveSquare(GN, p, grad, 1, { name: "d'S^{-1}d (the second-stage information matrix)" });
      if (!step) {
        throw new DeflatorError('SINGULAR', "d'S^{-1}d (the second-stage information matrix) is singular", 'check for collinear factors or a factor with no variation in the window');
      }
      let t = 1;
      for (;;) {
        for (let a = 0; a < p; a++) next[a] = theta[a] - t * step[a];
        qNew = whitenedMoments(Bm, nc, M, K, next, trial);
        if (qNew <= q * (1 + 1e-12) + 1e-300 || t <= 1e-10) break;
        t /= 2;
      }
    }
    let change = 0;
    let scale = 1;
    for (let a = 0; a < p; a++) {
      change = Math.max(change, Math.abs(next[a] - theta[a]));
      scale = Math.max(scale, Math.abs(theta[a]));
    }
    theta.set(next);
    gw.set(trial);
    q = qNew;
    // Done when the step is below 1e-12, or when the steps shrink quadratically and the error
    // left after this one, about change^3 / prevChange^2, is below 1e-14 (relative).
    const converged = change <= 1e-12 * scale || (change <= 1e-6 * scale && change <= 1e-2 * prevChange && (change * change * change) / (prevChange * prevChange) <= 1e-14 * scale);
    prevChange = change;
    if (converged) {
      whitenedJacobian(Bm, nc, M, K, theta, dw);
      return { b: theta.slice(0, K), mu: theta.slice(K), iterations: it, dw };
    }
  }
  throw new DeflatorError('NO_CONVERGENCE', 'second-stage GMM (b and mu jointly) did not converge in 100 Newton iterations', 'the window may be too short for the number of moments; use a longer window or the first stage');
}

/** tilde g at theta = (b, mu) into out; returns |tilde g|^2 = g'S^{-1}g. */
function whitenedMoments(Bm: Float64Array, nc: number, M: number, K: number, theta: Float64Array, out: Float64Array): number {
  let c = 1;
  for (let k = 0; k < K; k++) c += theta[k] * theta[K + k];
  let q = 0;
  for (let i = 0; i < M; i++) {
    const o = i * nc;
    let v = c * Bm[o] + Bm[o + K + 1];
    for (let k = 0; k < K; k++) v -= Bm[o + 1 + k] * theta[k] + Bm[o + K + 2 + k] * theta[K + k];
    out[i] = v;
    q += v * v;
  }
  return q;
}

/** tilde d = L^{-1} dg/d(b, mu)' at theta into dw (M x 2K). */
function whitenedJacobian(Bm: Float64Array, nc: number, M: number, K: number, theta: Float64Array, dw: Float64Array): void {
  const p = 2 * K;
  for (let i = 0; i < M; i++) {
    const o = i * nc;
    const r = Bm[o];
    for (let k = 0; k < K; k++) {
      dw[i * p + k] = theta[K + k] * r - Bm[o + 1 + k];
      dw[i * p + K + k] = theta[k] * r - Bm[o + K + 2 + k];
    }
  }
}


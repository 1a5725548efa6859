/**
 * Continuously updated GMM (Hansen, Heaton and Yaron 1996, "Finite-sample properties of
 * some alternative GMM estimators", J. Business & Economic Statistics 14, 262-280):
 *
 *   theta_CUE = argmin Q(theta),   Q(theta) = g_T(theta)' S(theta)^{-1} g_T(theta),
 *
 * S(theta) the Newey-West long-run covariance of u_t(theta) with the run's lags and
 * centering. The gradient is analytic: with v = S^{-1} g,
 *
 *   dQ/dtheta_k = 2 d_k'v - v' (dS/dtheta_k) v,
 *   v'(dS/dtheta_k) v = (2/T) sum_t h_k,t e~_t,
 *
 * where e_t = v'u_t, e~ is e passed through the Bartlett filter of longRunCovariance
 * and h_k,t = v' du_t/dtheta_k (both centered when S is). The minimiser is BFGS
 * (Nocedal and Wright, Numerical Optimization, 2nd ed., algorithm 6.1) started at the
 * second-stage estimate with the Gauss-Newton Hessian 2 d'S^{-1}d, and a backtracking
 * Armijo line search. A line search on Q stalls where Q is flat to machine precision (about
 * sqrt(eps) in theta), so the BFGS point is then polished by Newton steps on the analytic
 * gradient, dQ/dtheta = 0, with the Hessian from central differences of that gradient.
 */
import { DeflatorError } from '../errors.js';
import { cholesky, cholForwardMat, cholSolveVec } from '../linalg/cholesky.js';
import { bartlettWeights, longRunCovariance } from './longRunCovariance.js';
import type { MomentModel } from './momentModel.js';

export interface CueEvaluation {
  Q: number;
  grad: Float64Array;
  /** Gauss-Newton Hessian 2 d'S^{-1}d (row-major p x p). */
  gnHessian: Float64Array;
}

export function cueEvaluate(model: MomentModel, theta: Float64Array, lags: number, centered: boolean, withGradient = true): CueEvaluation {
  const { q, p, T } = model;
  const u = model.moments(theta);
  const g = new Float64Array(q);
  for (let a = 0; a < q; a++) {
    let s = 0;
    const x = u[a];
    for (let t = 0; t < T; t++) s += x[t];
    g[a] = s / T;
  }
  const S = longRunCovariance(u, lags, centered);
  const LS = cholesky(S, { name: 'the long-run covariance S(theta) in continuously updated GMM', labels: model.momentNames });
  const v = cholSolveVec(LS, g);
  let Q = 0;
  for (let a = 0; a < q; a++) Q += g[a] * v[a];
  const grad = new Float64Array(p);
  const gnHessian = new Float64Array(p * p);
  if (!withGradient) return { Q, grad, gnHessian };
  const d = model.jacobian(theta);
  for (let k = 0; k < p; k++) {
    let s = 0;
    for (let a = 0; a < q; a++) s += d.data[a * p + k] * v[a];
    grad[k] = 2 * s;
  }
  // e_t = v' u~_t
  const e = new Float64Array(T);
  for (let a = 0; a < q; a++) {
    const va = v[a];
    const x = u[a];
    const c = centered ? g[a] : 0;
    for (let t = 0; t < T; t++) e[t] += va * (x[t] - c);
  }
  const w = bartlettWeights(lags);
  const ef = e.slice();
  for (let j = 1; j <= lags; j++)
    for (let t = 0; t + j < T; t++) {
      ef[t] += w[j] * e[t + j];
      ef[t + j] += w[j] * e[t];
    }
  const h = model.directionalDerivative(theta, v);
  for (let k = 0; k < p; k++) {
    const hk = h[k];
    let m = 0;
    if (centered) {
      for (let t = 0; t < T; t++) m += hk[t];
      m /= T;
    }
    let s = 0;
    for (let t = 0; t < T; t++) s += (hk[t] - m) * ef[t];
    grad[k] -= (2 / T) * s;
  }
  const Z = cholForwardMat(LS, d);
  for (let a = 0; a < p; a++)
    for (let b = a; b < p; b++) {
      let s = 0;
      for (let i = 0; i < q; i++) s += Z.data[i * p + a] * Z.data[i * p + b];
      gnHessian[a * p + b] = 2 * s;
      gnHessian[b * p + a] = 2 * s;
    }
  return { Q, grad, gnHessian };
}

export interface CueSolution {
  theta: Float64Array;
  Q: number;
  iterations: number;
  lastStep: number;
}

const CUE_STEP_TOL = 1e-12;

/** BFGS on Q from `start`. */
export function solveCue(model: MomentModel, start: Float64Array, lags: number, centered: boolean, maxIterations = 500): CueSolution {
  const p = model.p;
  let theta = start.slice();
  let ev = cueEvaluate(model, theta, lags, centered);
  // Inverse Hessian approximation Hinv, started from the Gauss-Newton Hessian.
  const L0 = cholesky({ rows: p, cols: p, data: ev.gnHessian }, { name: "d'S^{-1}d in continuously updated GMM", labels: model.paramNames, code: 'SINGULAR' });
  let Hinv: Float64Array = new Float64Array(p * p);
  for (let k = 0; k < p; k++) {
    const e = new Float64Array(p);
    e[k] = 1;
    const col = cholSolveVec(L0, e);
    for (let i = 0; i < p; i++) Hinv[i * p + k] = col[i];
  }
  let lastStep = Infinity;
  for (let it = 1; it <= maxIterations; it++) {
    const dir = new Float64Array(p);
    for (let i = 0; i < p; i++) {
      let s = 0;
      for (let j = 0; j < p; j++) s -= Hinv[i * p + j] * ev.grad[j];
      dir[i] = s;
    }
    let slope = 0;
    for (let i = 0; i < p; i++) slope += dir[i] * ev.grad[i];
    if (!(slope < 0)) {
      // Not a descent direction: reset to steepest descent scaled by the GN Hessian.
      Hinv = resetInverse(ev.gnHessian, p, model);
      for (let i = 0; i < p; i++) {
        let s = 0;
        for (let j = 0; j < p; j++) s -= Hinv[i * p + j] * ev.grad[j];
        dir[i] = s;
      }
      slope = 0;
      for (let i = 0; i < p; i++) slope += dir[i] * ev.grad[i];
      if (!(slope < 0)) return newtonPolish(model, { theta, Q: ev.Q, iterations: it, lastStep: 0 }, ev.grad, lags, centered);
    }
    let alpha = 1;
    let next: CueEvaluation | undefined;
    let trial = theta;
    let rel = 0;
    for (let ls = 0; ls < 60; ls++) {
      trial = theta.slice();
      rel = 0;
      for (let i = 0; i < p; i++) {
        trial[i] += alpha * dir[i];
        rel = Math.max(rel, Math.abs(alpha * dir[i]) / (1 + Math.abs(theta[i])));
      }
      let cand: CueEvaluation | undefined;
      try {
        cand = cueEvaluate(model, trial, lags, centered);
      } catch {
        cand = undefined;
      }
      if (cand && Number.isFinite(cand.Q) && cand.Q <= ev.Q + 1e-4 * alpha * slope) {
        next = cand;
        break;
      }
      if (rel < CUE_STEP_TOL) break;
      alpha /= 2;
    }
    if (!next) {
      if (rel < CUE_STEP_TOL) return newtonPolish(model, { theta, Q: ev.Q, iterations: it, lastStep: rel }, ev.grad, lags, centered);
      throw new DeflatorError('NO_CONVERGENCE', 'continuously updated GMM: the line search found no lower objective', 'the CUE objective may have no interior minimum on this sample; use the second or iterated stage');
    }
    // BFGS update of the inverse Hessian.
    const s = new Float64Array(p);
    const y = new Float64Array(p);
    for (let i = 0; i < p; i++) {
      s[i] = trial[i] - theta[i];
      y[i] = next.grad[i] - ev.grad[i];
    }
    let sy = 0;
    for (let i = 0; i < p; i++) sy += s[i] * y[i];
    if (sy > 1e-300) {
      const Hy = new Float64Array(p);
      for (let i = 0; i < p; i++) {
        let acc = 0;
        for (let j = 0; j < p; j++) acc += Hinv[i * p + j] * y[j];
        Hy[i] = acc;
      }
      let yHy = 0;
      for (let i = 0; i < p; i++) yHy += y[i] * Hy[i];
      const rho = 1 / sy;
      for (let i = 0; i < p; i++)
        for (let j = 0; j < p; j++)
          Hinv[i * p + j] += (1 + yHy * rho) * rho * s[i] * s[j] - rho * (Hy[i] * s[j] + s[i] * Hy[j]);
    }
    theta = trial;
    ev = next;
    lastStep = rel;
    if (rel < CUE_STEP_TOL) return newtonPolish(model, { theta, Q: ev.Q, iterations: it, lastStep }, ev.grad, lags, centered);
  }
  throw new DeflatorError(
    'NO_CONVERGENCE',
    `continuously updated GMM: no convergence after ${maxIterations} BFGS iterations (last relative step ${lastStep.toExponential(2)})`,
    'use the second or iterated stage, or a longer sample',
  );
}

function resetInverse(H: Float64Array, p: number, model: MomentModel): Float64Array {
  const L = cholesky({ rows: p, cols: p, data: H }, { name: "d'S^{-1}d in continuously updated GMM", labels: model.paramNames, code: 'SINGULAR' });
  const out = new Float64Array(p * p);
  for (let k = 0; k < p; k++) {
    const e = new Float64Array(p);
    e[k] = 1;
    const col = cholSolveVec(L, e);
    for (let i = 0; i < p; i++) out[i * p + k] = col[i];
  }
  return out;
}

function maxScaledGrad(grad: Float64Array, theta: Float64Array): number {
  let m = 0;
  for (let i = 0; i < grad.length; i++) m = Math.max(m, Math.abs(grad[i]) * (1 + Math.abs(theta[i])));
  return m;
}

/** Newton steps on grad Q = 0 from a converged BFGS point; keeps a step only while it shrinks the gradient. */
function newtonPolish(model: MomentModel, sol: CueSolution, grad0: Float64Array, lags: number, centered: boolean): CueSolution {
  const p = model.p;
  let theta = sol.theta;
  let grad = grad0;
  let gnorm = maxScaledGrad(grad, theta);
  let iterations = sol.iterations;
  for (let it = 0; it < 8 && gnorm > 0; it++) {
    const H = new Float64Array(p * p);
    for (let k = 0; k < p; k++) {
      const h = 1e-5 * Math.max(Math.abs(theta[k]), 1e-2);
      const a = theta.slice();
      const b = theta.slice();
      a[k] += h;
      b[k] -= h;
      let ga: Float64Array;
      let gb: Float64Array;
      try {
        ga = cueEvaluate(model, a, lags, centered).grad;
        gb = cueEvaluate(model, b, lags, centered).grad;
      } catch {
        return { ...sol, theta, iterations };
      }
      for (let i = 0; i < p; i++) H[i * p + k] = (ga[i] - gb[i]) / (2 * h);
    }
    for (let i = 0; i < p; i++)
      for (let j = i + 1; j < p; j++) {
        const v = 0.5 * (H[i * p + j] + H[j * p + i]);
        H[i * p + j] = v;
        H[j * p + i] = v;
      }
    let L;
    try {
      L = cholesky({ rows: p, cols: p, data: H }, { name: 'CUE Hessian', code: 'SINGULAR' });
    } catch {
      break;
    }
    const step = cholSolveVec(L, grad);
    const trial = theta.slice();
    let rel = 0;
    for (let i = 0; i < p; i++) {
      trial[i] -= step[i];
      rel = Math.max(rel, Math.abs(step[i]) / (1 + Math.abs(theta[i])));
    }
    let ev: CueEvaluation;
    try {
      ev = cueEvaluate(model, trial, lags, centered);
    } catch {
      break;
    }
    const gn = maxScaledGrad(ev.grad, trial);
    if (!(gn < gnorm) || rel > 1e-4) break;
    theta = trial;
    grad = ev.grad;
    gnorm = gn;
    iterations++;
    sol = { theta, Q: ev.Q, iterations, lastStep: rel };
    if (rel < 1e-15) break;
  }
  return sol;
}

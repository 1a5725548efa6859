/**
 * Minimiser of the GMM objective Q(theta) = g_T(theta)' W g_T(theta) for a fixed W.
 *
 * With d = dg/dtheta', r = d'W g and A = d'Wd, the Newton step solves H delta = r with the
 * exact Hessian of Q / 2, H = A + sum_a (W g)_a d^2 g_a / dtheta dtheta' (the model's
 * `momentHessian`). Gauss-Newton drops the second term; where the residual g is large (a
 * large J, as with many noisy test assets) it then converges only linearly, at a rate near
 * one, while Newton converges quadratically (Nocedal and Wright, Numerical Optimization,
 * 2nd ed. 2006, 3.3 and 10.3). Each iteration takes the Newton step when H is positive
 * definite and the step lowers Q; otherwise a Gauss-Newton step with Levenberg-Marquardt
 * damping (Levenberg 1944; Marquardt 1963, "An algorithm for least-squares estimation of
 * nonlinear parameters", SIAM J. Appl. Math. 11, 431-441), which always descends. With
 * moments affine in theta (no `momentHessian`) H = A, the first step is the exact
 * minimiser and the second confirms it.
 *
 * Stops when the undamped step (Newton where H is positive definite, else Gauss-Newton)
 * moves every parameter by less than 1e-14 (1 + |theta_k|), or when the step has stopped
 * shrinking at the rounding floor: below 1e-10 in that measure, or with a predicted
 * decrease of Q (r' step, the Newton decrement; Boyd and Vandenberghe, Convex
 * Optimization, 2004, 9.5) below 1e-14 Q that no longer falls. The second measure does not
 * depend on the parameters' units, so a badly scaled but well-posed problem (loadings of
 * 1e3 beside factor means of 1e-4, as scaled factors give) stops at its floor instead of
 * running out of iterations. Fails with NO_CONVERGENCE, naming the reason, when the
 * iteration cap is reached or no damping lowers Q.
 */
import { DeflatorError } from '../errors.js';
import { cholesky, cholSolveVec } from '../linalg/cholesky.js';
import type { Mat } from '../linalg/matrix.js';
import type { MomentModel } from './momentModel.js';
import type { Weighting } from './weighting.js';

export interface FixedWeightProblem {
  model: MomentModel;
  /** W on the moments `moments` (all q moments when absent). */
  weight: Weighting;
  moments?: readonly number[];
  /** Parameters that move (all when absent); the others stay at their start values. */
  free?: readonly number[];
  /** What is being solved, for error messages ("second-stage GMM"). */
  label: string;
  maxIterations?: number;
}

export interface FixedWeightSolution {
  theta: Float64Array;
  objective: number;
  /** Steps computed, the last (below the tolerance) included. */
  iterations: number;
  /** Of those, the exact Newton steps (the rest are Gauss-Newton / Levenberg-Marquardt). */
  newtonSteps: number;
  /** The step the convergence test was met on, for the result's criterion text. */
  finalStep: 'Newton' | 'Gauss-Newton';
  /** True when it stopped at the rounding floor (step below 1e-10 and no longer shrinking) rather than below STEP_TOL. */
  atFloor: boolean;
  /** Largest relative parameter change of the last accepted step. */
  lastStep: number;
}

export const STEP_TOL = 1e-14;
/** Below this share of Q a predicted decrease that no longer shrinks is rounding (see the stopping rule). */
export const DECREMENT_FLOOR = 1e-14;

/** Q(theta) = g_s' W g_s on the selected moments. */
export function objectiveAt(p: FixedWeightProblem, theta: Float64Array): number {
  const g = select(p.model.meanMoments(theta), p.moments);
  return dotW(p.weight, g);
}

export function solveFixedWeight(p: FixedWeightProblem, start: Float64Array): FixedWeightSolution {
  const model = p.model;
  const free = p.free ?? Array.from({ length: model.p }, (_, k) => k);
  const nf = free.length;
  const maxIt = p.maxIterations ?? 200;
  const names = free.map((k) => model.paramNames[k]);
  let theta: Float64Array = start.slice();
  let g = select(model.meanMoments(theta), p.moments);
  let Q = dotW(p.weight, g);
  assertFinite(Q, p.label, 'the objective at the starting value');
  let lambda = 0;
  let lastStep = Infinity;
  let prevRel = Infinity;
  let prevDecrement = Infinity;
  let newtonSteps = 0;
  // Accept a step that lowers Q, allowing for rounding in Q itself (1e-13 relative).
  const lowers = (QTrial: number) => Number.isFinite(QTrial) && QTrial <= Q + 1e-13 * Math.abs(Q);
  for (let it = 1; it <= maxIt; it++) {
    const dFull = model.jacobian(theta);
    const d = selectJacobian(dFull, p.moments, free);
    const Wd = p.weight.apply(d);
    // A = d'Wd (nf x nf), r = d'W g.
    const A = new Float64Array(nf * nf);
    const r = new Float64Array(nf);
    const WgVec = p.weight.applyVec(g);
    for (let a = 0; a < nf; a++) {
      for (let b = a; b < nf; b++) {
        let s = 0;
        for (let i = 0; i < d.rows; i++) s += d.data[i * nf + a] * Wd.data[i * nf + b];
        A[a * nf + b] = s;
        A[b * nf + a] = s;
      }
      let s = 0;
      for (let i = 0; i < d.rows; i++) s += d.data[i * nf + a] * WgVec[i];
      r[a] = s;
    }
    const base: Mat = { rows: nf, cols: nf, data: A };
    // d'Wd must be positive definite whatever the step: it is the parameters' information matrix.
    const L0 = cholesky(base, {
      name: `d'Wd in ${p.label} (the parameters' information matrix)`,
      labels: names,
      code: 'SINGULAR',
      hint: 'the factors may be collinear or a factor may not move the pricing errors; drop one of them',
    });
    const newton = newtonStep(p, theta, WgVec, A, r, free);
    const step0 = newton ?? cholSolveVec(L0, r);
    const rel0 = relativeSize(step0, theta, free);
    // The decrease of Q the undamped step predicts (r'A^-1 r, or r'H^-1 r for Newton): unlike
    // the step's size in the parameters' own units it does not depend on their scale.
    let decrement = 0;
    for (let a = 0; a < nf; a++) decrement += r[a] * step0[a];
    // Converged: the undamped step is below the tolerance, or it has stopped shrinking at the
    // rounding floor, measured in the parameters' units or by the predicted decrease of Q
    // (badly scaled parameters, e.g. loadings on factors scaled by an instrument, reach the
    // floor of the second long before the first).
    const floor = (rel0 < 1e-10 && rel0 > 0.5 * prevRel) || (decrement <= DECREMENT_FLOOR * Math.abs(Q) && decrement > 0.25 * prevDecrement);
    prevRel = rel0;
    prevDecrement = decrement;
    if (rel0 < STEP_TOL || floor) {
      const trial = stepped(theta, step0, free);
      const gTrial = select(model.meanMoments(trial), p.moments);
      return { theta: trial, objective: dotW(p.weight, gTrial), iterations: it, newtonSteps: newton ? newtonSteps + 1 : newtonSteps, finalStep: newton ? 'Newton' : 'Gauss-Newton', atFloor: !(rel0 < STEP_TOL), lastStep: rel0 };
    }
    if (newton) {
      const trial = stepped(theta, newton, free);
      const gTrial = select(model.meanMoments(trial), p.moments);
      const QTrial = dotW(p.weight, gTrial);
      if (lowers(QTrial)) {
        theta = trial;
        g = gTrial;
        Q = QTrial;
        lastStep = rel0;
        newtonSteps++;
        lambda = lambda > 1e-12 ? lambda / 10 : 0;
        continue;
      }
    }
    const gnStep = newton ? cholSolveVec(L0, r) : step0;
    let accepted = false;
    for (let attempt = 0; attempt < 40; attempt++) {
      let step = gnStep;
      if (lambda > 0) {
        const Ad = A.slice();
        for (let a = 0; a < nf; a++) Ad[a * nf + a] *= 1 + lambda;
        step = cholSolveVec(cholesky({ rows: nf, cols: nf, data: Ad }, { name: `damped d'Wd in ${p.label}`, labels: names, code: 'SINGULAR' }), r);
      }
      const trial = stepped(theta, step, free);
      const gTrial = select(model.meanMoments(trial), p.moments);
      const QTrial = dotW(p.weight, gTrial);
      if (lowers(QTrial)) {
        lastStep = relativeSize(step, theta, free);
        theta = trial;
        g = gTrial;
        Q = QTrial;
        lambda = lambda > 1e-12 ? lambda / 10 : 0;
        accepted = true;
        break;
      }
      lambda = lambda === 0 ? 1e-6 : lambda * 10;
    }
    if (!accepted)
      throw new DeflatorError('NO_CONVERGENCE', `${p.label}: no Levenberg-Marquardt step lowers the objective (damping up to ${lambda.toExponential(1)})`, 'the objective may be flat or have no minimum near the start; try another model or sample');
  }
  throw new DeflatorError(
    'NO_CONVERGENCE',
    `${p.label}: no convergence after ${maxIt} iterations (${newtonSteps} exact Newton and ${maxIt - newtonSteps} Gauss-Newton steps; last relative step ${lastStep.toExponential(2)})`,
    'raise estimator.maxIterations or check that the model is identified on this sample',
  );
}

/**
 * The exact Newton step H^{-1} r on the free parameters, H = A + sum_a (W g)_a d^2 g_a, or
 * undefined when the model has no second-order term or H is not positive definite (away
 * from a minimum; the caller then takes a Gauss-Newton step).
 */
function newtonStep(p: FixedWeightProblem, theta: Float64Array, Wg: Float64Array, A: Float64Array, r: Float64Array, free: readonly number[]): Float64Array | undefined {
  const model = p.model;
  if (!model.momentHessian) return undefined;
  let v = Wg;
  if (p.moments) {
    v = new Float64Array(model.q);
    p.moments.forEach((i, j) => (v[i] = Wg[j]));
  }
  const C = model.momentHessian(theta, v);
  const nf = free.length;
  const H = A.slice();
  let curved = false;
  for (let a = 0; a < nf; a++)
    for (let b = 0; b < nf; b++) {
      const c = C.data[free[a] * C.cols + free[b]];
      if (c !== 0) curved = true;
      H[a * nf + b] += c;
    }
  if (!curved) return undefined;
  let L: Mat;
  try {
    L = cholesky({ rows: nf, cols: nf, data: H }, { name: 'the Hessian of the GMM objective', code: 'SINGULAR' });
  } catch (e) {
    if (e instanceof DeflatorError) return undefined;
    throw e;
  }
  const step = cholSolveVec(L, r);
  for (let a = 0; a < nf; a++) if (!Number.isFinite(step[a])) return undefined;
  return step;
}

function relativeSize(step: Float64Array, theta: Float64Array, free: readonly number[]): number {
  let rel = 0;
  for (let a = 0; a < free.length; a++) rel = Math.max(rel, Math.abs(step[a]) / (1 + Math.abs(theta[free[a]])));
  return rel;
}

/** theta - step on the free parameters. */
function stepped(theta: Float64Array, step: Float64Array, free: readonly number[]): Float64Array {
  const out = theta.slice();
  for (let a = 0; a < free.length; a++) out[free[a]] -= step[a];
  return out;
}

export function select(x: Float64Array, idx?: readonly number[]): Float64Array {
  if (!idx) return x;
  return Float64Array.from(idx, (i) => x[i]);
}

export function selectJacobian(d: Mat, rows?: readonly number[], cols?: readonly number[]): Mat {
  const r = rows ?? Array.from({ length: d.rows }, (_, i) => i);
  const c = cols ?? Array.from({ length: d.cols }, (_, k) => k);
  const out = new Float64Array(r.length * c.length);
  for (let i = 0; i < r.length; i++) for (let j = 0; j < c.length; j++) out[i * c.length + j] = d.data[r[i] * d.cols + c[j]];
  return { rows: r.length, cols: c.length, data: out };
}

function dotW(w: Weighting, g: Float64Array): number {
  const wg = w.applyVec(g);
  let s = 0;
  for (let i = 0; i < g.length; i++) s += g[i] * wg[i];
  return s;
}

function assertFinite(x: number, label: string, what: string): void {
  if (!Number.isFinite(x)) throw new DeflatorError('NO_CONVERGENCE', `${label}: ${what} is not a finite number`, 'check the input series for extreme values');
}

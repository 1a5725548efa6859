/**
 * Minimiser of the GMM objective Q(theta) = g_T(theta)' W g_T(theta) for a fixed W:
 * Gauss-Newton steps (d'Wd) delta = -d'W g with Levenberg-Marquardt damping
 * (Levenberg 1944; Marquardt 1963, "An algorithm for least-squares estimation of
 * nonlinear parameters", SIAM J. Appl. Math. 11, 431-441; Nocedal and Wright,
 * Numerical Optimization, 2nd ed. 2006, section 10.3). With moments affine in theta the
 * first undamped step is the exact minimiser and the second confirms it.
 *
 * Stops when the undamped step moves every parameter by less than 1e-14 (1 + |theta_k|),
 * or when, below 1e-10, the step has stopped shrinking (the rounding floor); fails with
 * NO_CONVERGENCE, naming the reason, when the iteration cap is reached or no damping
 * lowers Q.
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
  iterations: number;
  /** Largest relative parameter change of the last accepted step. */
  lastStep: number;
}

export const STEP_TOL = 1e-14;

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
  let theta = start.slice();
  let g = select(model.meanMoments(theta), p.moments);
  let Q = dotW(p.weight, g);
  assertFinite(Q, p.label, 'the objective at the starting value');
  let lambda = 0;
  let lastStep = Infinity;
  let prevGnRel = Infinity;
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
    const names = free.map((k) => model.paramNames[k]);
    const base: Mat = { rows: nf, cols: nf, data: A };
    // Convergence is judged on the undamped Gauss-Newton step.
    const L0 = cholesky(base, {
      name: `d'Wd in ${p.label} (the parameters' information matrix)`,
      labels: names,
      code: 'SINGULAR',
      hint: 'the factors may be collinear or a factor may not move the pricing errors; drop one of them',
    });
    const gnStep = cholSolveVec(L0, r);
    let gnRel = 0;
    for (let a = 0; a < nf; a++) gnRel = Math.max(gnRel, Math.abs(gnStep[a]) / (1 + Math.abs(theta[free[a]])));
    // Converged: the step is below the tolerance, or it has stopped shrinking at the rounding floor.
    const floor = gnRel < 1e-10 && gnRel > 0.5 * prevGnRel;
    prevGnRel = gnRel;
    if (gnRel < STEP_TOL || floor) {
      const trial = theta.slice();
      for (let a = 0; a < nf; a++) trial[free[a]] -= gnStep[a];
      const gTrial = select(model.meanMoments(trial), p.moments);
      return { theta: trial, objective: dotW(p.weight, gTrial), iterations: it, lastStep: gnRel };
    }
    let accepted = false;
    for (let attempt = 0; attempt < 40; attempt++) {
      let step = gnStep;
      if (lambda > 0) {
        const Ad = A.slice();
        for (let a = 0; a < nf; a++) Ad[a * nf + a] *= 1 + lambda;
        step = cholSolveVec(cholesky({ rows: nf, cols: nf, data: Ad }, { name: `damped d'Wd in ${p.label}`, labels: names, code: 'SINGULAR' }), r);
      }
      const trial = theta.slice();
      let rel = 0;
      for (let a = 0; a < nf; a++) {
        const k = free[a];
        trial[k] = theta[k] - step[a];
        rel = Math.max(rel, Math.abs(step[a]) / (1 + Math.abs(theta[k])));
      }
      const gTrial = select(model.meanMoments(trial), p.moments);
      const QTrial = dotW(p.weight, gTrial);
      // Accept a step that lowers Q, allowing for rounding in Q itself (1e-13 relative).
      if (Number.isFinite(QTrial) && QTrial <= Q + 1e-13 * Math.abs(Q)) {
        theta = trial;
        g = gTrial;
        Q = QTrial;
        lastStep = rel;
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
    `${p.label}: no convergence after ${maxIt} Gauss-Newton iterations (last relative step ${lastStep.toExponential(2)})`,
    'raise estimator.maxIterations or check that the model is identified on this sample',
  );
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

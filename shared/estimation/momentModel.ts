/**
 * The moment conditions of a discount-factor model, in the form every GMM stage works
 * on (METHODS 2-3). A model has N asset moments
 *
 *   u_i,t(theta) = R_i,t m_t(theta) - c      (c = 1 on gross returns, 0 on excess returns)
 *
 * followed by any auxiliary moments (the K factor-mean moments f_t - mu of the demeaned
 * linear model). g_T(theta) = (1/T) sum_t u_t(theta) and d = dg_T / dtheta'.
 *
 * Series are stored one Float64Array per moment (length T), so that the long-run
 * covariance and the Jacobian are dot products over contiguous memory.
 */
import type { Mat } from '../linalg/matrix.js';

export type SdfModelKind = 'linear' | 'linear-raw' | 'linear-gross' | 'consumption';

/**
 * Exactly identified auxiliary moments, held at zero at the first stage: parameters
 * `params` solve moments `moments` (the factor means of the demeaned model, mu = fbar).
 * Their Jacobian block d[moments][params] must be -I and d[moments][other params] 0.
 */
export interface PinnedBlock {
  params: number[];
  moments: number[];
  /** The parameter values that set those moments to zero exactly (fbar). */
  solve(): Float64Array;
}

export interface MomentModel {
  readonly kind: SdfModelKind;
  readonly T: number;
  /** Number of asset moments N (the first N moments). */
  readonly nAssets: number;
  /** Total number of moments q. */
  readonly q: number;
  /** Number of parameters p. */
  readonly p: number;
  readonly paramNames: readonly string[];
  /** Moment labels: asset names, then "mean <factor>" for auxiliary moments. */
  readonly momentNames: readonly string[];
  /** The test-asset returns as used (gross or excess), one series per asset. */
  readonly returns: readonly Float64Array[];
  /** Constant subtracted from each asset moment: 1 for E[mR] = 1, 0 for E[mR^e] = 0. */
  readonly target: number;
  /**
   * Where an asset's payoff does not cost `target`: its price series (a gross return
   * scaled by an instrument z costs z, E[m R z] = E[z]; METHODS 9), null elsewhere.
   */
  readonly prices?: readonly (Float64Array | null)[];
  /** True when every moment is affine in theta (one Gauss-Newton step solves a fixed-W stage). */
  readonly affine: boolean;
  readonly pinned?: PinnedBlock;
  /** m_t(theta). */
  sdf(theta: Float64Array): Float64Array;
  /** The q moment series u_t(theta). */
  moments(theta: Float64Array): Float64Array[];
  /** g_T(theta). */
  meanMoments(theta: Float64Array): Float64Array;
  /** d = dg_T/dtheta' (q x p). */
  jacobian(theta: Float64Array): Mat;
  /** For each parameter k, the series t -> v' du_t/dtheta_k (used by the CUE gradient). */
  directionalDerivative(theta: Float64Array, v: Float64Array): Float64Array[];
  /**
   * sum_a v_a d^2 g_T,a / dtheta dtheta' (p x p, v of length q): with v = W g it is the
   * part of the Hessian of g'Wg / 2 that Gauss-Newton leaves out, so the fixed-W solver
   * can take exact Newton steps. Absent for models affine in theta (it is zero).
   */
  momentHessian?(theta: Float64Array, v: Float64Array): Mat;
  /** A starting value for the first-stage solver under weight W on the asset moments. */
  start(): Float64Array;
  /**
   * Models with several local minima (nonlinear in theta): a few spread-out parameter
   * values whose objective a solution started elsewhere must not exceed (the local-minimum
   * guard of a warm start: gmmHjSquared).
   */
  guardPoints?(): Float64Array[];
  /** The same points with their asset moments g_A(theta) (a model that has them at hand saves their computation). */
  guardMoments?(): { theta: Float64Array; g: Float64Array }[];
}

/**
 * Shared implementation for models whose asset moments are R_i,t m_t(theta) - c:
 * subclasses give m_t, dm_t/dtheta and any auxiliary moments.
 */
export abstract class SdfMomentModel implements MomentModel {
  abstract readonly kind: SdfModelKind;
  readonly T: number;
  readonly nAssets: number;
  abstract readonly q: number;
  abstract readonly p: number;
  abstract readonly paramNames: readonly string[];
  abstract readonly momentNames: readonly string[];
  abstract readonly affine: boolean;
  readonly pinned?: PinnedBlock;
  readonly returns: readonly Float64Array[];
  readonly target: number;
  readonly prices?: readonly (Float64Array | null)[];
  /** Per asset, the mean price subtracted from its mean moment: `target`, or the mean of its price series. */
  protected readonly targetMeans: Float64Array;

  constructor(returns: readonly Float64Array[], target: number, prices?: readonly (Float64Array | null)[]) {
    this.returns = returns;
    this.nAssets = returns.length;
    this.T = returns.length > 0 ? returns[0].length : 0;
    this.target = target;
    this.targetMeans = new Float64Array(this.nAssets).fill(target);
    if (prices) {
      this.prices = prices;
      prices.forEach((z, i) => {
        if (z) this.targetMeans[i] = mean(z);
      });
    }
  }

  abstract sdf(theta: Float64Array): Float64Array;
  /** dm_t/dtheta_k for each k: a series, or a number when the derivative is the same in every period. */
  protected abstract sdfDerivatives(theta: Float64Array): (Float64Array | number)[];
  /** Auxiliary moment series (none by default). */
  protected auxMoments(_theta: Float64Array): Float64Array[] {
    return [];
  }
  /** Jacobian rows of the auxiliary moments (q - N rows of length p). */
  protected auxJacobian(_theta: Float64Array): Float64Array[] {
    return [];
  }
  /** For each k, the series t -> v_aux' du_aux,t / dtheta_k (a constant per k for the factor-mean moments). */
  protected auxDirectional(_theta: Float64Array, _vAux: Float64Array): number[] {
    return new Array<number>(this.p).fill(0);
  }
  abstract start(): Float64Array;

  /**
   * sum_i v_i d^2 g_T,i / dtheta dtheta' over the asset moments, given the second
   * derivatives of m_t: d2m[k][l] is d^2 m_t / dtheta_k dtheta_l (a series, or a number
   * when the same in every period; only l >= k is read). Auxiliary moments are taken to be affine
   * in theta (a model with curved auxiliary moments adds their term itself).
   */
  protected assetMomentHessian(v: Float64Array, d2m: readonly (readonly (Float64Array | number)[])[]): Mat {
    const { p, T, nAssets } = this;
    const z = new Float64Array(T);
    let zbar = NaN;
    for (let i = 0; i < nAssets; i++) {
      const vi = v[i];
      if (vi === 0) continue;
      const r = this.returns[i];
      for (let t = 0; t < T; t++) z[t] += vi * r[t];
    }
    const out = new Float64Array(p * p);
    for (let k = 0; k < p; k++)
      for (let l = k; l < p; l++) {
        const c = d2m[k][l];
        let s: number;
        if (typeof c === 'number') {
          if (c === 0) continue;
          if (Number.isNaN(zbar)) zbar = mean(z);
          s = zbar * c;
        } else {
          s = 0;
          for (let t = 0; t < T; t++) s += z[t] * c[t];
          s /= T;
        }
        out[k * p + l] = s;
        out[l * p + k] = s;
      }
    return { rows: p, cols: p, data: out };
  }

  moments(theta: Float64Array): Float64Array[] {
    const m = this.sdf(theta);
    const T = this.T;
    const c = this.target;
    const out: Float64Array[] = [];
    this.returns.forEach((r, i) => {
      const u = new Float64Array(T);
      const z = this.prices?.[i];
      if (z) for (let t = 0; t < T; t++) u[t] = r[t] * m[t] - z[t];
      else for (let t = 0; t < T; t++) u[t] = r[t] * m[t] - c;
      out.push(u);
    });
    for (const a of this.auxMoments(theta)) out.push(a);
    return out;
  }

  meanMoments(theta: Float64Array): Float64Array {
    const m = this.sdf(theta);
    const T = this.T;
    const g = new Float64Array(this.q);
    for (let i = 0; i < this.nAssets; i++) {
      const r = this.returns[i];
      let s = 0;
      for (let t = 0; t < T; t++) s += r[t] * m[t];
      g[i] = s / T - this.targetMeans[i];
    }
    const aux = this.auxMoments(theta);
    for (let j = 0; j < aux.length; j++) {
      let s = 0;
      const a = aux[j];
      for (let t = 0; t < T; t++) s += a[t];
      g[this.nAssets + j] = s / T;
    }
    return g;
  }

  jacobian(theta: Float64Array): Mat {
    const { q, p, T, nAssets } = this;
    const dm = this.sdfDerivatives(theta);
    const d = new Float64Array(q * p);
    for (let i = 0; i < nAssets; i++) {
      const r = this.returns[i];
      let meanR = NaN;
      for (let k = 0; k < p; k++) {
        const dk = dm[k];
        let s: number;
        if (typeof dk === 'number') {
          if (Number.isNaN(meanR)) {
            meanR = 0;
            for (let t = 0; t < T; t++) meanR += r[t];
            meanR /= T;
          }
          s = meanR * dk;
        } else {
          s = 0;
          for (let t = 0; t < T; t++) s += r[t] * dk[t];
          s /= T;
        }
        d[i * p + k] = s;
      }
    }
    const aux = this.auxJacobian(theta);
    for (let j = 0; j < aux.length; j++) d.set(aux[j], (nAssets + j) * p);
    return { rows: q, cols: p, data: d };
  }

  directionalDerivative(theta: Float64Array, v: Float64Array): Float64Array[] {
    const { p, T, nAssets } = this;
    // z_t = sum_i v_i R_i,t, then v_asset' du_t/dtheta_k = z_t dm_t/dtheta_k.
    const z = new Float64Array(T);
    for (let i = 0; i < nAssets; i++) {
      const vi = v[i];
      if (vi === 0) continue;
      const r = this.returns[i];
      for (let t = 0; t < T; t++) z[t] += vi * r[t];
    }
    const dm = this.sdfDerivatives(theta);
    const aux = this.auxDirectional(theta, v.subarray(nAssets));
    const out: Float64Array[] = [];
    for (let k = 0; k < p; k++) {
      const h = new Float64Array(T);
      const dk = dm[k];
      const ak = aux[k];
      if (typeof dk === 'number') for (let t = 0; t < T; t++) h[t] = z[t] * dk + ak;
      else for (let t = 0; t < T; t++) h[t] = z[t] * dk[t] + ak;
      out.push(h);
    }
    return out;
  }
}

/** Sample mean of a series. */
export function mean(x: ArrayLike<number>): number {
  let s = 0;
  for (let i = 0; i < x.length; i++) s += x[i];
  return x.length ? s / x.length : 0;
}

/**
 * Consumption-based discount factor with power utility (Hansen and Singleton 1982,
 * "Generalized instrumental variables estimation of nonlinear rational expectations
 * models", Econometrica 50, 1269-1286; METHODS 2):
 *
 *   m_t = delta (C_t / C_{t-1})^(-gamma).
 *
 * On gross returns the moments are R_i,t m_t - 1 and (delta, gamma) are free; on excess
 * returns they are R^e_i,t m_t, delta is fixed (scale is not identified) and gamma is free.
 * The moments are nonlinear in gamma, so the stages are solved numerically (Newton with
 * the exact Hessian, Levenberg-Marquardt as the safeguard: gaussNewton.ts), started from
 * a profile grid over gamma.
 */
import { DeflatorError } from '../errors.js';
import { seriesDot, type Mat } from '../linalg/matrix.js';
import type { ResultWarning } from '../results.js';
import { warning } from '../warnings.js';
import { SdfMomentModel, type SdfModelKind } from './momentModel.js';

/** Grid of risk-aversion values scanned for a starting value (common practice: a coarse scan before a local solver). */
export const GAMMA_GRID = { from: -20, to: 200, step: 0.5 };
/** Spacing of the local-minimum guard's points over the same range. */
const GUARD_STEP = 10;

/** What the start scan found (ConsumptionModel.startScan). */
export interface GammaScan {
  theta: Float64Array;
  /** The best grid gamma (NaN when no grid point had a finite objective). */
  gamma: number;
  /** The best grid gamma is an end of the grid (of its points with a finite objective). */
  atEdge: boolean;
  /** Grid gammas that are local minima of the scan objective. */
  minima: number[];
}

export class ConsumptionModel extends SdfMomentModel {
  readonly kind: SdfModelKind = 'consumption';
  readonly q: number;
  readonly p: number;
  readonly paramNames: readonly string[];
  readonly momentNames: readonly string[];
  readonly affine = false;
  /** Fixed delta (excess returns), or undefined when delta is estimated. */
  readonly fixedDelta?: number;
  private readonly logGrowth: Float64Array;

  /**
   * @param returns gross returns (delta free) or excess returns (delta fixed at `fixedDelta`).
   * @param growth consumption growth C_t / C_{t-1}, positive.
   * @param prices gross returns scaled by an instrument z: per asset the price series z (E[m R z] = E[z]), null for a plain return.
   */
  constructor(returns: readonly Float64Array[], assetNames: readonly string[], growth: Float64Array, returnKind: 'gross' | 'excess', fixedDelta = 1, prices?: readonly (Float64Array | null)[]) {
    super(returns, returnKind === 'gross' ? 1 : 0, returnKind === 'gross' ? prices : undefined);
    if (growth.length !== this.T) throw new RangeError(`ConsumptionModel: consumption growth has ${growth.length} periods, returns ${this.T}`);
    this.logGrowth = new Float64Array(this.T);
    for (let t = 0; t < this.T; t++) {
      const x = growth[t];
      if (!(x > 0) || !Number.isFinite(x))
        throw new DeflatorError('INPUT_INVALID', `consumption growth C_t/C_(t-1) is ${x} at period ${t + 1}; power utility needs positive growth`, 'check the consumption series: levels must be positive');
      this.logGrowth[t] = Math.log(x);
    }
    if (returnKind === 'excess') this.fixedDelta = fixedDelta;
    this.q = this.nAssets;
    this.p = returnKind === 'gross' ? 2 : 1;
    this.paramNames = returnKind === 'gross' ? ['delta', 'gamma'] : ['gamma'];
    this.momentNames = [...assetNames];
  }

  private split(theta: Float64Array): { delta: number; gamma: number } {
    return this.fixedDelta === undefined ? { delta: theta[0], gamma: theta[1] } : { delta: this.fixedDelta, gamma: theta[0] };
  }

  private powerCache: { gamma: number; x: Float64Array } | null = null;

  /** x_t = (C_t/C_t-1)^-gamma; the last gamma's series is kept (a solver step asks for it several times). Callers must not modify it. */
  private power(gamma: number): Float64Array {
    if (this.powerCache && Object.is(this.powerCache.gamma, gamma)) return this.powerCache.x;
    const T = this.T;
    const out = new Float64Array(T);
    for (let t = 0; t < T; t++) out[t] = Math.exp(-gamma * this.logGrowth[t]);
    this.powerCache = { gamma, x: out };
    return out;
  }

  sdf(theta: Float64Array): Float64Array {
    const { delta, gamma } = this.split(theta);
    const x = this.power(gamma);
    const m = new Float64Array(this.T);
    for (let t = 0; t < this.T; t++) m[t] = x[t] * delta;
    return m;
  }

  protected sdfDerivatives(theta: Float64Array): (Float64Array | number)[] {
    const { delta, gamma } = this.split(theta);
    const x = this.power(gamma);
    const dGamma = new Float64Array(this.T);
    for (let t = 0; t < this.T; t++) dGamma[t] = -delta * this.logGrowth[t] * x[t];
    return this.fixedDelta === undefined ? [x.slice(), dGamma] : [dGamma];
  }

  /**
   * sum_i v_i d^2 g_i / dtheta dtheta' from the second derivatives of m_t = delta x_t,
   * x_t = (C_t/C_t-1)^-gamma: d^2m/ddelta^2 = 0, d^2m/ddelta dgamma = -log(C_t/C_t-1) x_t,
   * d^2m/dgamma^2 = delta log(C_t/C_t-1)^2 x_t.
   */
  momentHessian(theta: Float64Array, v: Float64Array): Mat {
    const { delta, gamma } = this.split(theta);
    const x = this.power(gamma);
    const T = this.T;
    const dDeltaGamma = new Float64Array(T);
    const dGammaGamma = new Float64Array(T);
    for (let t = 0; t < T; t++) {
      const l = this.logGrowth[t];
      dDeltaGamma[t] = -l * x[t];
      dGammaGamma[t] = delta * l * l * x[t];
    }
    return this.assetMomentHessian(v, this.fixedDelta === undefined ? [[0, dDeltaGamma], [0, dGammaGamma]] : [[dGammaGamma]]);
  }

  /** Best gamma on a grid (identity weight); with delta free, delta is profiled out in closed form. */
  start(): Float64Array {
    return this.startScan().theta;
  }

  private scanned?: GammaScan;

  /** The start scan over GAMMA_GRID (computed once): the best grid point, whether it is an end, the grid's local minima. */
  startScan(): GammaScan {
    if (!this.scanned) {
      const sc = this.scan(GAMMA_GRID.step);
      const g = sc.grid;
      const minima: number[] = [];
      for (let k = 0; k < g.length; k++) {
        const o = g[k].obj;
        if (!Number.isFinite(o)) continue;
        const left = k > 0 && Number.isFinite(g[k - 1].obj) ? g[k - 1].obj : Infinity;
        const right = k < g.length - 1 && Number.isFinite(g[k + 1].obj) ? g[k + 1].obj : Infinity;
        if (o < left && o < right) minima.push(g[k].gamma);
      }
      const finite = g.filter((x) => Number.isFinite(x.obj));
      const atEdge = finite.length > 0 && (sc.bestGamma === finite[0].gamma || sc.bestGamma === finite[finite.length - 1].gamma);
      this.scanned = { theta: sc.best, gamma: sc.bestGamma, atEdge, minima };
    }
    return this.scanned;
  }

  /**
   * START_AT_EDGE when the scan's best gamma is an end of GAMMA_GRID or the estimate lies
   * outside it (the scan cannot vouch for a start it never looked beyond); SEVERAL_MINIMA
   * when the grid objective has more than one local minimum (the solver found the one
   * nearest the best grid point; another may be the global minimum of the stage's objective).
   */
  scanWarnings(estimateGamma: number): ResultWarning[] {
    const sc = this.startScan();
    const out: ResultWarning[] = [];
    const range = `[${GAMMA_GRID.from}, ${GAMMA_GRID.to}]`;
    const outside = estimateGamma < GAMMA_GRID.from || estimateGamma > GAMMA_GRID.to;
    if (sc.atEdge || outside)
      out.push(
        warning(
          'START_AT_EDGE',
          outside
            ? `the estimate gamma = ${estimateGamma.toPrecision(6)} lies outside the range ${range} scanned for the solver's start: the scan cannot vouch that it is the global minimum; check it with a fixed start or another sample`
            : `the start scan of gamma over ${range} found its best value at the edge (gamma = ${sc.gamma}): the minimum may lie beyond the range; the estimate gamma = ${estimateGamma.toPrecision(6)} is a local solution from there`,
        ),
      );
    if (sc.minima.length > 1)
      out.push(
        warning(
          'SEVERAL_MINIMA',
          `the start scan of gamma over ${range} (identity weight) found ${sc.minima.length} local minima (gamma = ${sc.minima.slice(0, 6).join(', ')}${sc.minima.length > 6 ? ', ...' : ''}); the solver started at the lowest, gamma = ${sc.gamma}, and another minimum may fit almost as well`,
        ),
      );
    return out;
  }

  /**
   * The local-minimum guard of a warm start: every GUARD_STEP-th point of the scan's gamma
   * range (delta profiled as in the scan), 23 points against the scan's 441, with their
   * asset moments g (computed by the scan anyway).
   */
  guardPoints(): Float64Array[] {
    return this.scan(GUARD_STEP).points;
  }

  guardMoments(): { theta: Float64Array; g: Float64Array }[] {
    const s = this.scan(GUARD_STEP);
    return s.points.map((theta, k) => ({ theta, g: s.moments[k] }));
  }

  private scan(step: number): { best: Float64Array; bestGamma: number; points: Float64Array[]; moments: Float64Array[]; grid: { gamma: number; obj: number }[] } {
    const { T, nAssets } = this;
    const points: Float64Array[] = [];
    const moments: Float64Array[] = [];
    const grid: { gamma: number; obj: number }[] = [];
    let bestGamma = Number.NaN;
    let best = Infinity;
    let bestTheta = this.fixedDelta === undefined ? Float64Array.of(1, 0) : Float64Array.of(0);
    const h = new Float64Array(nAssets);
    const x = new Float64Array(T);
    const lg = this.logGrowth;
    for (let gamma = GAMMA_GRID.from; gamma <= GAMMA_GRID.to + 1e-9; gamma += step) {
      for (let t = 0; t < T; t++) x[t] = Math.exp(-gamma * lg[t]);
      for (let i = 0; i < nAssets; i++) h[i] = seriesDot(this.returns[i], x) / T;
      let obj: number;
      let delta: number;
      if (this.fixedDelta === undefined) {
        // min_delta sum_i (delta h_i - c_i)^2  =>  delta = sum h c / sum h^2 (c_i = 1, or E[z] for a scaled payoff).
        const c = this.targetMeans;
        let sh = 0;
        let shh = 0;
        let scc = 0;
        for (let i = 0; i < nAssets; i++) {
          sh += h[i] * c[i];
          shh += h[i] * h[i];
          scc += c[i] * c[i];
        }
        if (!(shh > 0) || !Number.isFinite(shh)) {
          grid.push({ gamma, obj: Number.NaN });
          continue;
        }
        delta = sh / shh;
        obj = scc - (sh * sh) / shh;
      } else {
        delta = this.fixedDelta;
        obj = 0;
        for (let i = 0; i < nAssets; i++) obj += delta * delta * h[i] * h[i];
      }
      grid.push({ gamma, obj });
      const theta = this.fixedDelta === undefined ? Float64Array.of(delta, gamma) : Float64Array.of(gamma);
      if (Number.isFinite(obj)) {
        points.push(theta);
        const g = new Float64Array(nAssets);
        for (let i = 0; i < nAssets; i++) g[i] = delta * h[i] - this.targetMeans[i];
        moments.push(g);
      }
      if (Number.isFinite(obj) && obj < best) {
        best = obj;
        bestGamma = gamma;
        bestTheta = theta;
      }
    }
    return { best: bestTheta, bestGamma, points, moments, grid };
  }
}

/**
 * Linear discount factors (METHODS 2; Cochrane, Asset Pricing, rev. ed. 2005, ch. 13):
 *
 * - demeaned (default): m_t = 1 - b'(f_t - mu), moments R^e_t m_t (N) and f_t - mu (K);
 *   parameters (b, mu). At the first stage the K factor-mean moments are held at zero
 *   (mu = fbar); later stages estimate b and mu jointly.
 * - raw: m_t = 1 - b'f_t, moments R^e_t m_t; parameters b.
 * - gross: m_t = a - b'f_t, moments R_t m_t - 1; parameters (a, b).
 */
import { seriesDot, type Mat } from '../linalg/matrix.js';
import { SdfMomentModel, mean, type PinnedBlock, type SdfModelKind } from './momentModel.js';

/**
 * E[R_i] and E[R_i f_k] (divide by T), computed once: with them g_T and d of a linear
 * model cost O(N K) per evaluation instead of O(N K T).
 */
export class LinearCrossMoments {
  readonly meanR: Float64Array;
  /** Row-major N x K. */
  readonly meanRF: Float64Array;
  readonly K: number;
  constructor(returns: readonly Float64Array[], factors: readonly Float64Array[]) {
    const N = returns.length;
    const K = factors.length;
    const T = N ? returns[0].length : 0;
    this.K = K;
    this.meanR = Float64Array.from(returns, (r) => mean(r));
    this.meanRF = new Float64Array(N * K);
    for (let i = 0; i < N; i++)
      for (let k = 0; k < K; k++) this.meanRF[i * K + k] = seriesDot(returns[i], factors[k]) / T;
  }
}

export interface NamedFactor {
  name: string;
  values: Float64Array;
}

/** m_t = 1 - b'(f_t - mu) with the factor means estimated jointly. */
export class DemeanedLinearModel extends SdfMomentModel {
  readonly kind: SdfModelKind = 'linear';
  readonly q: number;
  readonly p: number;
  readonly paramNames: readonly string[];
  readonly momentNames: readonly string[];
  readonly affine = false;
  override readonly pinned: PinnedBlock;
  readonly factors: readonly Float64Array[];
  private readonly K: number;
  private readonly cross: LinearCrossMoments;

  constructor(excessReturns: readonly Float64Array[], assetNames: readonly string[], factors: readonly NamedFactor[]) {
    super(excessReturns, 0);
    const K = factors.length;
    this.K = K;
    this.factors = factors.map((f) => f.values);
    this.cross = new LinearCrossMoments(excessReturns, this.factors);
    this.q = this.nAssets + K;
    this.p = 2 * K;
    this.paramNames = [...factors.map((f) => `b.${f.name}`), ...factors.map((f) => `mu.${f.name}`)];
    this.momentNames = [...assetNames, ...factors.map((f) => `mean ${f.name}`)];
    const fbar = Float64Array.from(this.factors, (f) => mean(f));
    this.pinned = {
      params: Array.from({ length: K }, (_, j) => K + j),
      moments: Array.from({ length: K }, (_, j) => this.nAssets + j),
      solve: () => fbar.slice(),
    };
  }

  sdf(theta: Float64Array): Float64Array {
    const { T, K } = this;
    const m = new Float64Array(T);
    let c = 1;
    for (let k = 0; k < K; k++) c += theta[k] * theta[K + k];
    m.fill(c);
    for (let k = 0; k < K; k++) {
      const b = theta[k];
      if (b === 0) continue;
      const f = this.factors[k];
      for (let t = 0; t < T; t++) m[t] -= b * f[t];
    }
    return m;
  }

  /** g_a,i = E[R_i](1 + b'mu) - sum_k b_k E[R_i f_k];  g_f,k = fbar_k - mu_k. */
  override meanMoments(theta: Float64Array): Float64Array {
    const { K, nAssets: N } = this;
    const { meanR, meanRF } = this.cross;
    let c = 1;
    for (let k = 0; k < K; k++) c += theta[k] * theta[K + k];
    const g = new Float64Array(this.q);
    for (let i = 0; i < N; i++) {
      let s = meanR[i] * c;
      for (let k = 0; k < K; k++) s -= theta[k] * meanRF[i * K + k];
      g[i] = s;
    }
    const fbar = this.pinned.solve();
    for (let k = 0; k < K; k++) g[N + k] = fbar[k] - theta[K + k];
    return g;
  }

  /** d_a = [mu_k E[R_i] - E[R_i f_k] | E[R_i] b_k];  d_f = [0 | -I]. */
  override jacobian(theta: Float64Array): Mat {
    const { K, nAssets: N, p, q } = this;
    const { meanR, meanRF } = this.cross;
    const d = new Float64Array(q * p);
    for (let i = 0; i < N; i++)
      for (let k = 0; k < K; k++) {
        d[i * p + k] = theta[K + k] * meanR[i] - meanRF[i * K + k];
        d[i * p + K + k] = meanR[i] * theta[k];
      }
    for (let k = 0; k < K; k++) d[(N + k) * p + K + k] = -1;
    return { rows: q, cols: p, data: d };
  }

  /**
   * sum_i v_i d^2 g_a,i / dtheta dtheta': the only second derivatives are
   * d^2 g_a,i / db_k dmu_k = E[R_i], so the term is s [0 I; I 0] with s = sum_i v_i E[R_i]
   * (the factor-mean moments are linear).
   */
  momentHessian(_theta: Float64Array, v: Float64Array): Mat {
    const { K, nAssets: N, p } = this;
    const meanR = this.cross.meanR;
    let s = 0;
    for (let i = 0; i < N; i++) s += v[i] * meanR[i];
    const h = new Float64Array(p * p);
    for (let k = 0; k < K; k++) {
      h[k * p + K + k] = s;
      h[(K + k) * p + k] = s;
    }
    return { rows: p, cols: p, data: h };
  }

  protected sdfDerivatives(theta: Float64Array): (Float64Array | number)[] {
    const { T, K } = this;
    const out: (Float64Array | number)[] = [];
    for (let k = 0; k < K; k++) {
      const f = this.factors[k];
      const mu = theta[K + k];
      const s = new Float64Array(T);
      for (let t = 0; t < T; t++) s[t] = mu - f[t];
      out.push(s);
    }
    for (let k = 0; k < K; k++) out.push(theta[k]);
    return out;
  }

  protected override auxMoments(theta: Float64Array): Float64Array[] {
    const { T, K } = this;
    return this.factors.map((f, k) => {
      const mu = theta[K + k];
      const u = new Float64Array(T);
      for (let t = 0; t < T; t++) u[t] = f[t] - mu;
      return u;
    });
  }

  protected override auxJacobian(): Float64Array[] {
    const { K, p } = this;
    return Array.from({ length: K }, (_, k) => {
      const row = new Float64Array(p);
      row[K + k] = -1;
      return row;
    });
  }

  protected override auxDirectional(_theta: Float64Array, vAux: Float64Array): number[] {
    const out = new Array<number>(this.p).fill(0);
    for (let k = 0; k < this.K; k++) out[this.K + k] = -vAux[k];
    return out;
  }

  start(): Float64Array {
    const theta = new Float64Array(this.p);
    theta.set(this.pinned.solve(), this.K);
    return theta;
  }
}

/** m_t = 1 - b'f_t (the factor means are not estimated). */
export class RawLinearModel extends SdfMomentModel {
  readonly kind: SdfModelKind = 'linear-raw';
  readonly q: number;
  readonly p: number;
  readonly paramNames: readonly string[];
  readonly momentNames: readonly string[];
  readonly affine = true;
  readonly factors: readonly Float64Array[];
  private readonly cross: LinearCrossMoments;

  constructor(excessReturns: readonly Float64Array[], assetNames: readonly string[], factors: readonly NamedFactor[]) {
    super(excessReturns, 0);
    this.factors = factors.map((f) => f.values);
    this.cross = new LinearCrossMoments(excessReturns, this.factors);
    this.q = this.nAssets;
    this.p = factors.length;
    this.paramNames = factors.map((f) => `b.${f.name}`);
    this.momentNames = [...assetNames];
  }

  /** g_i = E[R_i] - sum_k b_k E[R_i f_k]. */
  override meanMoments(theta: Float64Array): Float64Array {
    const { meanR, meanRF, K } = this.cross;
    return Float64Array.from(meanR, (m, i) => {
      let s = m;
      for (let k = 0; k < K; k++) s -= theta[k] * meanRF[i * K + k];
      return s;
    });
  }

  /** d = -E[R f']. */
  override jacobian(): Mat {
    return { rows: this.q, cols: this.p, data: Float64Array.from(this.cross.meanRF, (x) => -x) };
  }

  sdf(theta: Float64Array): Float64Array {
    const m = new Float64Array(this.T).fill(1);
    this.factors.forEach((f, k) => {
      const b = theta[k];
      for (let t = 0; t < this.T; t++) m[t] -= b * f[t];
    });
    return m;
  }

  protected sdfDerivatives(): (Float64Array | number)[] {
    return this.factors.map((f) => Float64Array.from(f, (x) => -x));
  }

  start(): Float64Array {
    return new Float64Array(this.p);
  }
}

/** m_t = a - b'f_t pricing gross returns, E[m R] = 1. */
export class GrossLinearModel extends SdfMomentModel {
  readonly kind: SdfModelKind = 'linear-gross';
  readonly q: number;
  readonly p: number;
  readonly paramNames: readonly string[];
  readonly momentNames: readonly string[];
  readonly affine = true;
  readonly factors: readonly Float64Array[];
  private readonly cross: LinearCrossMoments;

  /** `prices`: per asset, the price series of a payoff that does not cost 1 (a gross return scaled by an instrument), else null. */
  constructor(grossReturns: readonly Float64Array[], assetNames: readonly string[], factors: readonly NamedFactor[], prices?: readonly (Float64Array | null)[]) {
    super(grossReturns, 1, prices);
    this.factors = factors.map((f) => f.values);
    this.cross = new LinearCrossMoments(grossReturns, this.factors);
    this.q = this.nAssets;
    this.p = factors.length + 1;
    this.paramNames = ['a', ...factors.map((f) => `b.${f.name}`)];
    this.momentNames = [...assetNames];
  }

  /** g_i = a E[R_i] - sum_k b_k E[R_i f_k] - 1 (- E[z] for a payoff R_i z). */
  override meanMoments(theta: Float64Array): Float64Array {
    const { meanR, meanRF, K } = this.cross;
    const price = this.targetMeans;
    return Float64Array.from(meanR, (m, i) => {
      let s = theta[0] * m - price[i];
      for (let k = 0; k < K; k++) s -= theta[k + 1] * meanRF[i * K + k];
      return s;
    });
  }

  /** d = [E[R] | -E[R f']]. */
  override jacobian(): Mat {
    const { meanR, meanRF, K } = this.cross;
    const p = this.p;
    const d = new Float64Array(this.q * p);
    for (let i = 0; i < this.q; i++) {
      d[i * p] = meanR[i];
      for (let k = 0; k < K; k++) d[i * p + 1 + k] = -meanRF[i * K + k];
    }
    return { rows: this.q, cols: p, data: d };
  }

  sdf(theta: Float64Array): Float64Array {
    const m = new Float64Array(this.T).fill(theta[0]);
    this.factors.forEach((f, k) => {
      const b = theta[k + 1];
      for (let t = 0; t < this.T; t++) m[t] -= b * f[t];
    });
    return m;
  }

  protected sdfDerivatives(): (Float64Array | number)[] {
    return [1, ...this.factors.map((f) => Float64Array.from(f, (x) => -x))];
  }

  start(): Float64Array {
    const theta = new Float64Array(this.p);
    theta[0] = 1;
    return theta;
  }
}

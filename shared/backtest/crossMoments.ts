/**
 * Rolling lagged cross-moments for the linear discount-factor models: what lets a
 * back-test update each window in time independent of the window length.
 *
 * Every moment of the linear models is a combination of products x_k,t * y_p,t with
 * x_t = (1, f_1t..f_Kt) and y_t = (R_1t..R_Nt, 1):
 *   demeaned  u_i = (1 + b'mu - b'f_t) R_it,   u_N+k = f_kt - mu_k
 *   raw       u_i = (1 - b'f_t) R_it
 *   gross     u_i = (a - b'f_t) R_it - 1
 * so with z_t = x_t (x) y_t (length D = (K+1)(N+1)) every u_t = C(theta) z_t, and the
 * Newey-West autocovariances are C (sum_t z_t z_{t-j}') C'. The sums
 * M_j = sum_{t, t-j in window} z_t z_{t-j}' (j = 0..maxLag) and m1 = sum_t z_t do not
 * depend on theta, so they are updated when the window moves (add the entering period,
 * remove the leaving one) and S is assembled for any theta in O(K^2 N^2) per lag,
 * without revisiting the window's periods. At the window's edges the centred
 * autocovariances need a few u_t directly (j of them per lag).
 *
 * Gross returns are stored shifted, y_i = R_i - 1 (net returns), so that the products
 * stay of the size of the moments themselves rather than of R_i R_j ~ 1; the moment map
 * absorbs the shift (shiftMap), which keeps about three more digits in S.
 */
import type { ReturnsPanel } from '../panel.js';

export class CrossMoments {
  readonly N: number;
  readonly K: number;
  readonly P: number;
  readonly Q: number;
  readonly D: number;
  readonly maxLag: number;
  readonly T: number;
  /** z_t for every period of the panel, T x D row-major. */
  readonly z: Float64Array;
  /** M_j, one D x D row-major matrix per lag j = 0..maxLag. */
  readonly M: Float64Array[];
  /** sum of z_t over the window. */
  readonly m1: Float64Array;
  /** Current window [start, end) in panel periods. */
  start = 0;
  end = 0;
  /** Rank-one updates since the sums were last rebuilt from scratch. */
  updatesSinceRebuild = 0;
  /** The constant subtracted from every return before the products are formed (1 for gross returns, else 0). */
  readonly shift: number;

  constructor(panel: ReturnsPanel, maxLag: number) {
    const N = panel.assets.length;
    const K = panel.factors.length;
    const T = panel.periods.length;
    this.N = N;
    this.K = K;
    this.P = K + 1;
    this.Q = N + 1;
    this.D = this.P * this.Q;
    this.T = T;
    this.maxLag = maxLag;
    this.shift = panel.returnKind === 'gross' ? 1 : 0;
    const shift = this.shift;
    const D = this.D;
    const Q = this.Q;
    const z = new Float64Array(T * D);
    for (let t = 0; t < T; t++) {
      const o = t * D;
      for (let k = 0; k < this.P; k++) {
        const xk = k === 0 ? 1 : panel.factors[k - 1].values[t];
        const ok = o + k * Q;
        for (let p = 0; p < N; p++) z[ok + p] = xk * (panel.returns[p][t] - shift);
        z[ok + N] = xk;
      }
    }
    this.z = z;
    this.M = [];
    for (let j = 0; j <= maxLag; j++) this.M.push(new Float64Array(D * D));
    this.m1 = new Float64Array(D);
  }

  /** Rebuilds the sums for the window [start, end) from scratch. */
  reset(start: number, end: number): void {
    for (const m of this.M) m.fill(0);
    this.m1.fill(0);
    this.start = start;
    this.end = start;
    for (let t = start; t < end; t++) this.pushEnd();
    this.updatesSinceRebuild = 0;
  }

  /** Moves the window to [start, end) (start and end not before the current ones). */
  moveTo(start: number, end: number): void {
    if (start < this.start || end < this.end || start >= end) {
      this.reset(start, end);
      return;
    }
    // Cheaper to rebuild when the new window shares few periods with the old one.
    const kept = Math.max(0, this.end - start);
    const incremental = (start - this.start) + (end - this.end);
    if (kept === 0 || incremental >= end - start) {
      this.reset(start, end);
      return;
    }
    while (this.start < start) this.popStart();
    while (this.end < end) this.pushEnd();
  }

  /** Adds period `end` to the window. */
  private pushEnd(): void {
    const t = this.end;
    const D = this.D;
    const z = this.z;
    const zt = t * D;
    const m1 = this.m1;
    for (let a = 0; a < D; a++) m1[a] += z[zt + a];
    for (let j = 0; j <= this.maxLag; j++) {
      const s = t - j;
      if (s < this.start) break;
      rankOne(this.M[j], z, zt, s * D, D, 1);
    }
    this.end = t + 1;
    this.updatesSinceRebuild++;
  }

  /** Removes period `start` from the window. */
  private popStart(): void {
    const s = this.start;
    const D = this.D;
    const z = this.z;
    const zs = s * D;
    const m1 = this.m1;
    for (let a = 0; a < D; a++) m1[a] -= z[zs + a];
    for (let j = 0; j <= this.maxLag; j++) {
      const t = s + j;
      if (t >= this.end) break;
      rankOne(this.M[j], z, t * D, zs, D, -1);
    }
    this.start = s + 1;
    this.updatesSinceRebuild++;
  }

  /** Window length. */
  get n(): number {
    return this.end - this.start;
  }

  /** Window mean of the (unshifted) return of asset i. */
  meanReturn(i: number): number {
    return this.shift + this.m1[i] / this.n;
  }
}

/**
 * The map for shifted data: u_i = (x'beta) R_i + x'delta = (x'beta)(y_i + s) + x'delta,
 * so on y the asset moments have delta' = delta + s beta.
 */
export function shiftMap(map: MomentMap, s: number): MomentMap {
  if (s === 0) return map;
  const delta = new Float64Array(map.beta.length);
  for (let k = 0; k < delta.length; k++) delta[k] = (map.delta ? map.delta[k] : 0) + s * map.beta[k];
  return { beta: map.beta, delta, gamma: map.gamma };
}

/** M += sign * z[a0..a0+D) z[b0..b0+D)'. */
function rankOne(M: Float64Array, z: Float64Array, a0: number, b0: number, D: number, sign: number): void {
  for (let a = 0; a < D; a++) {
    const za = sign * z[a0 + a];
    if (za === 0) continue;
    const row = a * D;
    for (let b = 0; b < D; b++) M[row + b] += za * z[b0 + b];
  }
}

/**
 * The coefficients that map z_t to the moments u_t = C z_t:
 * asset moment i:   sum_k beta_k x_k R_i + sum_k delta_k x_k
 * factor moment k': sum_k gamma[k'][k] x_k
 */
export interface MomentMap {
  beta: Float64Array;
  delta: Float64Array | null;
  gamma: Float64Array[];
}

/**
 * Newey-West S = G_0 + sum_{j=1..L} (1 - j/(L+1)) (G_j + G_j') of u_t = C z_t over the
 * current window, G_j = (1/n) sum_{t>j} (u_t - c)(u_{t-j} - c)', c the window mean of
 * u_t when centred, else 0 (METHODS 3). Returned as an M x M row-major matrix,
 * M = N + number of factor moments.
 */
export function longRunCovarianceFromSums(cm: CrossMoments, unshifted: MomentMap, lags: number, centered: boolean): Float64Array {
  const { N, P, Q, D } = cm;
  const map = shiftMap(unshifted, cm.shift);
  const G = map.gamma.length;
  const Mm = N + G;
  const n = cm.n;
  const S = new Float64Array(Mm * Mm);
  const H = new Float64Array(D * Mm);
  const beta = map.beta;
  const delta = map.delta;
  // window mean of u and, per lag, the edge corrections
  const ubar = applyShifted(cm, map, cm.m1);
  for (let i = 0; i < Mm; i++) ubar[i] /= n;
  const headSum = new Float64Array(D); // sum of z over the first j periods
  const tailSum = new Float64Array(D); // sum of z over the last j periods
  const Gj = new Float64Array(Mm * Mm);
  for (let j = 0; j <= lags; j++) {
    const Mj = cm.M[j];
    // H[a, m'] = sum_b M_j[a, b] C[m', b]
    for (let a = 0; a < D; a++) {
      const row = a * D;
      const h = a * Mm;
      for (let i = 0; i < N; i++) {
        let s = 0;
        for (let l = 0; l < P; l++) s += beta[l] * Mj[row + l * Q + i];
        if (delta) for (let l = 0; l < P; l++) s += delta[l] * Mj[row + l * Q + N];
        H[h + i] = s;
      }
      for (let g = 0; g < G; g++) {
        const gam = map.gamma[g];
        let s = 0;
        for (let l = 0; l < P; l++) s += gam[l] * Mj[row + l * Q + N];
        H[h + N + g] = s;
      }
    }
    // G_j = C H
    for (let i = 0; i < N; i++) {
      const gi = i * Mm;
      for (let c = 0; c < Mm; c++) {
        let s = 0;
        for (let k = 0; k < P; k++) {
          s += beta[k] * H[(k * Q + i) * Mm + c];
          if (delta) s += delta[k] * H[(k * Q + N) * Mm + c];
        }
        Gj[gi + c] = s;
      }
    }
    for (let g = 0; g < G; g++) {
      const gam = map.gamma[g];
      const gi = (N + g) * Mm;
      for (let c = 0; c < Mm; c++) {
        let s = 0;
        for (let k = 0; k < P; k++) s += gam[k] * H[(k * Q + N) * Mm + c];
        Gj[gi + c] = s;
      }
    }
    if (centered) {
      if (j > 0) {
        const zh = (cm.start + j - 1) * D;
        const zt = (cm.end - j) * D;
        for (let a = 0; a < D; a++) {
          headSum[a] += cm.z[zh + a];
          tailSum[a] += cm.z[zt + a];
        }
      }
      // a_j = sum_{t>=j} u_t = C (m1 - head), b_j = sum_{t>=j} u_{t-j} = C (m1 - tail)
      const ah = new Float64Array(D);
      const bt = new Float64Array(D);
      for (let a = 0; a < D; a++) {
        ah[a] = cm.m1[a] - headSum[a];
        bt[a] = cm.m1[a] - tailSum[a];
      }
      const aj = applyShifted(cm, map, ah);
      const bj = applyShifted(cm, map, bt);
      const w = n - j;
      for (let r = 0; r < Mm; r++) {
        const gr = r * Mm;
        for (let c = 0; c < Mm; c++) Gj[gr + c] += -ubar[r] * bj[c] - aj[r] * ubar[c] + w * ubar[r] * ubar[c];
      }
    }
    const wj = j === 0 ? 1 : 1 - j / (lags + 1);
    const f = wj / n;
    if (j === 0) {
      for (let r = 0; r < Mm; r++) for (let c = 0; c < Mm; c++) S[r * Mm + c] += f * 0.5 * (Gj[r * Mm + c] + Gj[c * Mm + r]);
    } else {
      for (let r = 0; r < Mm; r++) for (let c = 0; c < Mm; c++) S[r * Mm + c] += f * (Gj[r * Mm + c] + Gj[c * Mm + r]);
    }
  }
  return S;
}

/** C v for a vector v of length D (a sum of z_t), the map already shifted. */
function applyShifted(cm: CrossMoments, map: MomentMap, v: Float64Array): Float64Array {
  const { N, P, Q } = cm;
  const G = map.gamma.length;
  const out = new Float64Array(N + G);
  for (let i = 0; i < N; i++) {
    let s = 0;
    for (let k = 0; k < P; k++) {
      s += map.beta[k] * v[k * Q + i];
      if (map.delta) s += map.delta[k] * v[k * Q + N];
    }
    out[i] = s;
  }
  for (let g = 0; g < G; g++) {
    let s = 0;
    for (let k = 0; k < P; k++) s += map.gamma[g][k] * v[k * Q + N];
    out[N + g] = s;
  }
  return out;
}

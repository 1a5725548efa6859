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
 * Newey-West S of u_t is C [sum_j w_j (M_j + M_j')] C' / n plus centring terms, with
 * M_j = sum_{t, t-j in window} z_t z_{t-j}', w_0 = 1/2 and w_j = 1 - j/(L+1). The
 * weighted sum Mw = sum_j w_j M_j does not depend on theta, and moving the window
 * changes it by two rank-one terms: adding period t adds z_t (sum_j w_j z_{t-j})',
 * removing period s subtracts (sum_j w_j z_{s+j}) z_s'. So S is assembled for any theta
 * in O(K^2 N^2) without revisiting the window's periods. The centring terms need the
 * window sums of z_t and, per lag, the j periods at each edge.
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
  readonly T: number;
  /** z_t for every period of the panel, T x D row-major. */
  readonly z: Float64Array;
  /** Mw = sum_j w_j M_j over the window (D x D row-major) for the current lag count. */
  readonly Mw: Float64Array;
  /** Sum of z_t over the window. */
  readonly m1: Float64Array;
  /** Sum of y_t y_t' over the window (Q x Q). */
  readonly yy: Float64Array;
  /** Sum of x_t x_t' over the window (P x P). */
  readonly xx: Float64Array;
  /** Current window [start, end) in panel periods, and its Newey-West lag count. */
  start = 0;
  end = 0;
  lags = -1;
  /** Rank-one updates since the sums were last rebuilt from scratch. */
  updatesSinceRebuild = 0;
  /** The constant subtracted from every return before the products are formed (1 for gross returns, else 0). */
  readonly shift: number;
  private w: Float64Array = new Float64Array(1);
  private readonly v: Float64Array;
  private readonly u: Float64Array;
  /** The four v_t of a rank-4 block in buildMw (4 x D). */
  private readonly block: Float64Array;
  /** Workspace of the S assembly (D x (N + K)) and its product (N + K) x (N + K). */
  readonly workH: Float64Array;
  readonly workR: Float64Array;

  /** Whether yy (sum of y_t y_t', needed only for the HJ weight E[RR']) is kept. */
  readonly keepYY: boolean;

  constructor(panel: ReturnsPanel, opts: { assetSecondMoments?: boolean } = {}) {
    this.keepYY = opts.assetSecondMoments ?? true;
    const N = panel.assets.length;
    const K = panel.factors.length;
    const T = panel.periods.length;
    this.N = N;
    this.K = K;
    this.P = K + 1;
    this.Q = N + 1;
    this.D = this.P * this.Q;
    this.T = T;
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
    this.Mw = new Float64Array(D * D);
    this.m1 = new Float64Array(D);
    this.yy = new Float64Array(Q * Q);
    this.xx = new Float64Array(this.P * this.P);
    this.v = new Float64Array(D);
    this.u = new Float64Array(D);
    this.block = new Float64Array(4 * D);
    this.workH = new Float64Array(D * (N + K));
    this.workR = new Float64Array((N + K) * (N + K));
  }

  /** Rebuilds the sums for the window [start, end) with L lags from scratch. */
  reset(start: number, end: number, lags: number): void {
    this.Mw.fill(0);
    this.m1.fill(0);
    this.yy.fill(0);
    this.xx.fill(0);
    this.lags = lags;
    this.w = new Float64Array(lags + 1);
    this.w[0] = 0.5;
    for (let j = 1; j <= lags; j++) this.w[j] = 1 - j / (lags + 1);
    this.start = start;
    this.end = end;
    for (let t = start; t < end; t++) this.secondMoments(t, 1);
    this.buildMw(start, end);
    this.updatesSinceRebuild = 0;
  }

  /**
   * Mw = sum_{t in [start, end)} z_t v_t', v_t = sum_{j <= L, t-j >= start} w_j z_{t-j}:
   * four periods at a time, each pass updating four rows of Mw from the same four v_t
   * (a rank-4 update tiled 4 x 4, about three times as fast as adding the periods one by
   * one). The order of the additions depends on [start, end) and L alone, so rebuilding
   * the same window always gives the same bits.
   */
  private buildMw(start: number, end: number): void {
    const { D, z, w } = this;
    const M = this.Mw;
    const L = this.lags;
    const V = this.block;
    for (let t0 = start; t0 < end; t0 += 4) {
      const nb = Math.min(4, end - t0);
      V.fill(0);
      for (let r = 0; r < nb; r++) {
        const t = t0 + r;
        const vo = r * D;
        for (let j = 0; j <= L && t - j >= start; j++) {
          const wj = w[j];
          const o = (t - j) * D;
          for (let b = 0; b < D; b++) V[vo + b] += wj * z[o + b];
        }
      }
      const o = t0 * D;
      if (nb < 4) {
        for (let r = 0; r < nb; r++) {
          const zr = o + r * D;
          const vo = r * D;
          for (let a = 0; a < D; a++) {
            const za = z[zr + a];
            const row = a * D;
            for (let b = 0; b < D; b++) M[row + b] += za * V[vo + b];
          }
        }
        continue;
      }
      const o1 = o + D;
      const o2 = o + 2 * D;
      const o3 = o + 3 * D;
      const D2 = 2 * D;
      const D3 = 3 * D;
      let a = 0;
      for (; a + 3 < D; a += 4) {
        const p0 = z[o + a], p1 = z[o1 + a], p2 = z[o2 + a], p3 = z[o3 + a];
        const q0 = z[o + a + 1], q1 = z[o1 + a + 1], q2 = z[o2 + a + 1], q3 = z[o3 + a + 1];
        const r0 = z[o + a + 2], r1 = z[o1 + a + 2], r2 = z[o2 + a + 2], r3 = z[o3 + a + 2];
        const s0 = z[o + a + 3], s1 = z[o1 + a + 3], s2 = z[o2 + a + 3], s3 = z[o3 + a + 3];
        const row = a * D;
        for (let b = 0; b < D; b++) {
          const v0 = V[b], v1 = V[D + b], v2 = V[D2 + b], v3 = V[D3 + b];
          M[row + b] += p0 * v0 + p1 * v1 + p2 * v2 + p3 * v3;
          M[row + D + b] += q0 * v0 + q1 * v1 + q2 * v2 + q3 * v3;
          M[row + D2 + b] += r0 * v0 + r1 * v1 + r2 * v2 + r3 * v3;
          M[row + D3 + b] += s0 * v0 + s1 * v1 + s2 * v2 + s3 * v3;
        }
      }
      for (; a < D; a++) {
        const p0 = z[o + a], p1 = z[o1 + a], p2 = z[o2 + a], p3 = z[o3 + a];
        const row = a * D;
        for (let b = 0; b < D; b++) M[row + b] += p0 * V[b] + p1 * V[D + b] + p2 * V[D2 + b] + p3 * V[D3 + b];
      }
    }
  }

  /** Moves the window to [start, end) with L lags, updating the sums when that is cheaper than rebuilding them. */
  moveTo(start: number, end: number, lags: number): void {
    const kept = Math.max(0, Math.min(this.end, end) - Math.max(this.start, start));
    const steps = Math.abs(start - this.start) + Math.abs(end - this.end);
    if (lags !== this.lags || start < this.start || end < this.end || kept === 0 || steps >= end - start) {
      this.reset(start, end, lags);
      return;
    }
    // A roll by one period, the common case: one pass over Mw for both rank-one terms.
    while (this.start < start && this.end < end) this.slide();
    while (this.start < start) this.popStart();
    while (this.end < end) this.pushEnd();
  }

  /**
   * Removes period s = start and adds period t = end in one pass:
   * Mw += z_t v' - u z_s', v = sum_j w_j z_{t-j} over t-j >= s+1, u = sum_j w_j z_{s+j} over s+j < t.
   */
  private slide(): void {
    const s = this.start;
    const t = this.end;
    const { D, z, w } = this;
    const u = this.u;
    const v = this.v;
    u.fill(0);
    v.fill(0);
    for (let j = 0; j <= this.lags; j++) {
      const wj = w[j];
      if (s + j < t) {
        const o = (s + j) * D;
        for (let b = 0; b < D; b++) u[b] += wj * z[o + b];
      }
      if (t - j >= s + 1) {
        const o = (t - j) * D;
        for (let b = 0; b < D; b++) v[b] += wj * z[o + b];
      }
    }
    const zs = s * D;
    const zt = t * D;
    const M = this.Mw;
    // four rows per pass, so that v and z_s are read once for the four
    let a = 0;
    for (; a + 3 < D; a += 4) {
      const z0 = z[zt + a], z1 = z[zt + a + 1], z2 = z[zt + a + 2], z3 = z[zt + a + 3];
      const u0 = u[a], u1 = u[a + 1], u2 = u[a + 2], u3 = u[a + 3];
      const r0 = a * D;
      const r1 = r0 + D;
      const r2 = r1 + D;
      const r3 = r2 + D;
      for (let b = 0; b < D; b++) {
        const vb = v[b];
        const sb = z[zs + b];
        M[r0 + b] += z0 * vb - u0 * sb;
        M[r1 + b] += z1 * vb - u1 * sb;
        M[r2 + b] += z2 * vb - u2 * sb;
        M[r3 + b] += z3 * vb - u3 * sb;
      }
    }
    for (; a < D; a++) {
      const za = z[zt + a];
      const ua = u[a];
      const row = a * D;
      for (let b = 0; b < D; b++) M[row + b] += za * v[b] - ua * z[zs + b];
    }
    this.secondMoments(s, -1);
    this.secondMoments(t, 1);
    this.start = s + 1;
    this.end = t + 1;
    this.updatesSinceRebuild += 2;
  }

  /** Adds period `end` to the window. */
  private pushEnd(): void {
    const t = this.end;
    const { D, z, v, w } = this;
    const zt = t * D;
    v.fill(0);
    for (let j = 0; j <= this.lags; j++) {
      const s = t - j;
      if (s < this.start) break;
      const wj = w[j];
      const zs = s * D;
      for (let b = 0; b < D; b++) v[b] += wj * z[zs + b];
    }
    this.rankOne(zt, 1);
    this.secondMoments(t, 1);
    this.end = t + 1;
    this.updatesSinceRebuild++;
  }

  /** Removes period `start` from the window. */
  private popStart(): void {
    const s = this.start;
    const { D, z, v, w } = this;
    const zs = s * D;
    // u = sum_j w_j z_{s+j}, then Mw -= u z_s'
    v.fill(0);
    for (let j = 0; j <= this.lags; j++) {
      const t = s + j;
      if (t >= this.end) break;
      const wj = w[j];
      const zt = t * D;
      for (let b = 0; b < D; b++) v[b] += wj * z[zt + b];
    }
    const M = this.Mw;
    for (let a = 0; a < D; a++) {
      const va = v[a];
      if (va === 0) continue;
      const row = a * D;
      for (let b = 0; b < D; b++) M[row + b] -= va * z[zs + b];
    }
    this.secondMoments(s, -1);
    this.start = s + 1;
    this.updatesSinceRebuild++;
  }

  /** Mw += sign * z_t v' (four rows per pass, so that v is read once for the four). */
  private rankOne(zt: number, sign: number): void {
    const { D, z, v } = this;
    const M = this.Mw;
    let a = 0;
    for (; a + 3 < D; a += 4) {
      const z0 = sign * z[zt + a], z1 = sign * z[zt + a + 1], z2 = sign * z[zt + a + 2], z3 = sign * z[zt + a + 3];
      const r0 = a * D;
      const r1 = r0 + D;
      const r2 = r1 + D;
      const r3 = r2 + D;
      for (let b = 0; b < D; b++) {
        const vb = v[b];
        M[r0 + b] += z0 * vb;
        M[r1 + b] += z1 * vb;
        M[r2 + b] += z2 * vb;
        M[r3 + b] += z3 * vb;
      }
    }
    for (; a < D; a++) {
      const za = sign * z[zt + a];
      if (za === 0) continue;
      const row = a * D;
      for (let b = 0; b < D; b++) M[row + b] += za * v[b];
    }
  }

  private secondMoments(t: number, sign: number): void {
    const { D, Q, P, N, z } = this;
    const o = t * D;
    for (let a = 0; a < D; a++) this.m1[a] += sign * z[o + a];
    // y_t is the x_0 = 1 block of z_t; x_t is the p = N (y = 1) column of each block.
    if (this.keepYY) {
      const yy = this.yy;
      for (let p = 0; p < Q; p++) {
        const yp = sign * z[o + p];
        if (yp === 0) continue;
        for (let q = 0; q < Q; q++) yy[p * Q + q] += yp * z[o + q];
      }
    }
    const xx = this.xx;
    for (let k = 0; k < P; k++) {
      const xk = sign * z[o + k * Q + N];
      for (let l = 0; l < P; l++) xx[k * P + l] += xk * z[o + l * Q + N];
    }
  }

  /** Window length. */
  get n(): number {
    return this.end - this.start;
  }

  /** Window mean of the (unshifted) return of asset i. */
  meanReturn(i: number): number {
    return this.shift + this.m1[i] / this.n;
  }

  /** Newey-West weights w_0 = 1/2, w_j = 1 - j/(L+1) of the current lag count. */
  get weights(): Float64Array {
    return this.w;
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
 * The map for shifted data: u_i = (x'beta) R_i + x'delta = (x'beta)(y_i + s) + x'delta,
 * so on y the asset moments have delta' = delta + s beta.
 */
export function shiftMap(map: MomentMap, s: number): MomentMap {
  if (s === 0) return map;
  const delta = new Float64Array(map.beta.length);
  for (let k = 0; k < delta.length; k++) delta[k] = (map.delta ? map.delta[k] : 0) + s * map.beta[k];
  return { beta: map.beta, delta, gamma: map.gamma };
}

/**
 * Newey-West S = G_0 + sum_{j=1..L} (1 - j/(L+1)) (G_j + G_j') of u_t = C z_t over the
 * current window with the window's lag count, G_j = (1/n) sum_{t>j} (u_t - c)(u_{t-j} - c)',
 * c the window mean of u_t when centred, else 0 (METHODS 3). Returned as an M x M
 * row-major matrix, M = N + number of factor moments.
 */
export function longRunCovarianceFromSums(cm: CrossMoments, unshifted: MomentMap, centered: boolean): Float64Array {
  const { N, P, Q, D } = cm;
  const map = shiftMap(unshifted, cm.shift);
  const G = map.gamma.length;
  const Mm = N + G;
  const n = cm.n;
  const beta = map.beta;
  const delta = map.delta;
  const Mw = cm.Mw;
  const gam = new Float64Array(G * P);
  for (let g = 0; g < G; g++) for (let l = 0; l < P; l++) gam[g * P + l] = map.gamma[g][l];
  // H = Mw C' (D x Mm): H[a, i] = sum_l beta_l Mw[a, lQ + i] (+ delta_l Mw[a, lQ + N]),
  // H[a, N + g] = sum_l gamma_gl Mw[a, lQ + N]; the sum over l unrolled for up to 6 factors.
  const H = Mm <= N + cm.K ? cm.workH.subarray(0, D * Mm) : new Float64Array(D * Mm);
  const b0 = beta[0];
  const b1 = P > 1 ? beta[1] : 0;
  const b2 = P > 2 ? beta[2] : 0;
  const b3 = P > 3 ? beta[3] : 0;
  for (let a = 0; a < D; a++) {
    const row = a * D;
    const h = a * Mm;
    if (P <= 4) {
      const o0 = row;
      const o1 = row + Q;
      const o2 = row + 2 * Q;
      const o3 = row + 3 * Q;
      if (P === 1) for (let i = 0; i < N; i++) H[h + i] = b0 * Mw[o0 + i];
      else if (P === 2) for (let i = 0; i < N; i++) H[h + i] = b0 * Mw[o0 + i] + b1 * Mw[o1 + i];
      else if (P === 3) for (let i = 0; i < N; i++) H[h + i] = b0 * Mw[o0 + i] + b1 * Mw[o1 + i] + b2 * Mw[o2 + i];
      else for (let i = 0; i < N; i++) H[h + i] = b0 * Mw[o0 + i] + b1 * Mw[o1 + i] + b2 * Mw[o2 + i] + b3 * Mw[o3 + i];
    } else {
      for (let i = 0; i < N; i++) H[h + i] = 0;
      for (let l = 0; l < P; l++) {
        const bl = beta[l];
        const o = row + l * Q;
        for (let i = 0; i < N; i++) H[h + i] += bl * Mw[o + i];
      }
    }
    let dsum = 0;
    for (let g = 0; g < G; g++) H[h + N + g] = 0;
    for (let l = 0; l < P; l++) {
      const mN = Mw[row + l * Q + N];
      if (delta) dsum += delta[l] * mN;
      for (let g = 0; g < G; g++) H[h + N + g] += gam[g * P + l] * mN;
    }
    if (delta) for (let i = 0; i < N; i++) H[h + i] += dsum;
  }
  // R = C H (Mm x Mm)
  const R = Mm <= N + cm.K ? cm.workR.subarray(0, Mm * Mm) : new Float64Array(Mm * Mm);
  R.fill(0);
  for (let i = 0; i < N; i++) {
    const ri = i * Mm;
    for (let k = 0; k < P; k++) {
      const bk = beta[k];
      const hrow = (k * Q + i) * Mm;
      for (let c = 0; c < Mm; c++) R[ri + c] += bk * H[hrow + c];
      if (delta) {
        const dk = delta[k];
        const hN = (k * Q + N) * Mm;
        for (let c = 0; c < Mm; c++) R[ri + c] += dk * H[hN + c];
      }
    }
  }
  for (let g = 0; g < G; g++) {
    const ri = (N + g) * Mm;
    for (let k = 0; k < P; k++) {
      const gk = gam[g * P + k];
      if (gk === 0) continue;
      const hN = (k * Q + N) * Mm;
      for (let c = 0; c < Mm; c++) R[ri + c] += gk * H[hN + c];
    }
  }
  const S = new Float64Array(Mm * Mm);
  const inv = 1 / n;
  if (!centered) {
    for (let r = 0; r < Mm; r++) for (let c = 0; c < Mm; c++) S[r * Mm + c] = (R[r * Mm + c] + R[c * Mm + r]) * inv;
    return S;
  }
  // Centring: sum_j w_j [ -ubar b_j' - a_j ubar' + (n - j) ubar ubar' ] plus its transpose, with
  // a_j = sum_{t>=j} u_t = C(m1 - head_j), b_j = sum_{t>=j} u_{t-j} = C(m1 - tail_j); with
  // A = sum_j w_j a_j, B = sum_j w_j b_j, c = sum_j w_j (n - j) and Z = A + B - c ubar it is
  // -(ubar Z' + Z ubar').
  const w = cm.weights;
  const L = cm.lags;
  const head = new Float64Array(D);
  const tail = new Float64Array(D);
  const abSum = new Float64Array(D);
  let c = 0;
  for (let j = 0; j <= L; j++) {
    if (j > 0) {
      const zh = (cm.start + j - 1) * D;
      const zt = (cm.end - j) * D;
      for (let a = 0; a < D; a++) {
        head[a] += cm.z[zh + a];
        tail[a] += cm.z[zt + a];
      }
    }
    const wj = w[j];
    for (let a = 0; a < D; a++) abSum[a] += wj * (2 * cm.m1[a] - head[a] - tail[a]);
    c += wj * (n - j);
  }
  const ubar = applyShifted(cm, map, cm.m1);
  for (let i = 0; i < Mm; i++) ubar[i] *= inv;
  const Z = applyShifted(cm, map, abSum);
  for (let i = 0; i < Mm; i++) Z[i] -= c * ubar[i];
  for (let r = 0; r < Mm; r++) {
    const ur = ubar[r];
    const zr = Z[r];
    for (let q = 0; q < Mm; q++) S[r * Mm + q] = (R[r * Mm + q] + R[q * Mm + r] - ur * Z[q] - zr * ubar[q]) * inv;
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

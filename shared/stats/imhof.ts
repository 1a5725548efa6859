/**
 * Upper tail of a positively weighted sum of independent chi-square(1) variables,
 * P(sum_j w_j X_j > x), X_j ~ chi2(1), by Imhof's (1961) numerical inversion of the
 * characteristic function:
 *
 *   P(Q > x) = 1/2 + (1/pi) int_0^inf sin(theta(u)) / (u rho(u)) du,
 *   theta(u) = (1/2) sum_j atan(w_j u) - x u / 2,   rho(u) = prod_j (1 + w_j^2 u^2)^(1/4).
 *
 * Used for the p-value of the Hansen-Jagannathan distance, whose T HJ^2 is
 * asymptotically such a sum (Jagannathan and Wang, 1996).
 *
 * Integration rule (deterministic). The weights are rescaled so that the largest is 1.
 * theta is concave on u > 0 (each atan term is), so it rises to a single maximum u*
 * and then falls to -inf at slope -x/2. The half-line is cut at every u where
 * theta(u) is a multiple of pi (found by bisection on the rising branch and safeguarded
 * Newton on the falling one), so sin(theta) keeps one sign on each piece; pieces are
 * further cut at the powers of two so that no piece spans more than a factor 2 in u.
 * Each piece is integrated by adaptive 20-point Gauss-Legendre (bisect until two
 * successive estimates agree to 1e-15 absolute). Truncation: beyond u*, the piece
 * integrals alternate in sign; summation stops when Imhof's bound on the remaining tail,
 * 1 / (pi (m/2) U^(m/2) prod_j w_j^(1/2)) (Imhof 1961, eq. 3.4), falls below 1e-12, or
 * else the partial sums are extrapolated by Wynn's epsilon algorithm (as for Fourier
 * integrals in QUADPACK's cycle-by-cycle rule) until three successive extrapolations
 * agree to 1e-13. Observed accuracy against R's integrate() and pchisq: about 1e-12
 * absolute (test/shared/stats). Absolute, not relative: a p-value far below 1e-12 is
 * reported as that small but not to full relative precision. The result is clamped to
 * the exact chi-square bounds P(chi2_m > x / w_min) <= P <= P(chi2_m > x / w_max).
 *
 * References: Imhof, J. P. (1961), "Computing the distribution of quadratic forms in
 * normal variables", Biometrika 48, 419-426; Wynn, P. (1956), "On a device for computing
 * the e_m(S_n) transformation", MTAC 10, 91-96; Jagannathan, R. and Wang, Z. (1996),
 * "The conditional CAPM and the cross-section of expected returns", J. Finance 51, 3-53.
 */
import { DeflatorError } from '../errors.js';
import { incompleteGamma } from './special.js';

const GL_N = 20;
const { nodes: GL_X, weights: GL_W } = gaussLegendre(GL_N);

/** Gauss-Legendre nodes and weights on [-1, 1] by Newton's method on P_n. */
function gaussLegendre(n: number): { nodes: number[]; weights: number[] } {
  const nodes: number[] = new Array<number>(n);
  const weights: number[] = new Array<number>(n);
  for (let i = 0; i < Math.ceil(n / 2); i++) {
    let z = Math.cos((Math.PI * (i + 0.75)) / (n + 0.5));
    let dp = 0;
    for (let it = 0; it < 100; it++) {
      let p0 = 1;
      let p1 = z;
      for (let k = 2; k <= n; k++) {
        const p2 = ((2 * k - 1) * z * p1 - (k - 1) * p0) / k;
        p0 = p1;
        p1 = p2;
      }
      dp = (n * (z * p1 - p0)) / (z * z - 1);
      const dz = p1 / dp;
      z -= dz;
      if (Math.abs(dz) < 1e-16) break;
    }
    const w = 2 / ((1 - z * z) * dp * dp);
    nodes[i] = -z;
    nodes[n - 1 - i] = z;
    weights[i] = w;
    weights[n - 1 - i] = w;
  }
  return { nodes, weights };
}

function glRule(f: (u: number) => number, a: number, b: number): number {
  const h = (b - a) / 2;
  const c = (a + b) / 2;
  let s = 0;
  for (let i = 0; i < GL_N; i++) s += GL_W[i] * f(c + h * GL_X[i]);
  return s * h;
}

function adaptive(f: (u: number) => number, a: number, b: number, whole: number, depth: number): number {
  const m = (a + b) / 2;
  const left = glRule(f, a, m);
  const right = glRule(f, m, b);
  const both = left + right;
  if (Math.abs(both - whole) <= 1e-15 || depth >= 40) return both;
  return adaptive(f, a, m, left, depth + 1) + adaptive(f, m, b, right, depth + 1);
}

/** Integral over [a, b], cut at the powers of two inside it, each piece adaptive. */
function integratePiece(f: (u: number) => number, a: number, b: number): number {
  let total = 0;
  let lo = a;
  while (lo < b) {
    let hi = b;
    if (lo >= 1) {
      const next = 2 ** (Math.floor(Math.log2(lo)) + 1);
      if (next < b) hi = next;
    } else if (b > 1) {
      hi = 1;
    }
    total += adaptive(f, lo, hi, glRule(f, lo, hi), 0);
    lo = hi;
  }
  return total;
}

/** The last entry of the deepest even column of Wynn's epsilon table on the sums s. */
function wynnEpsilon(s: number[]): number {
  let prev: number[] = new Array<number>(s.length + 1).fill(0); // e_{-1}
  let cur: number[] = s.slice(); // e_0
  let best = cur[cur.length - 1];
  for (let k = 0; cur.length > 1; k++) {
    const next: number[] = new Array<number>(cur.length - 1);
    for (let j = 0; j < cur.length - 1; j++) {
      const diff = cur[j + 1] - cur[j];
      if (diff === 0) return cur[j + 1];
      next[j] = prev[j + 1] + 1 / diff;
    }
    prev = cur;
    cur = next;
    if (k % 2 === 1) {
      const v = cur[cur.length - 1];
      if (!Number.isFinite(v)) break;
      best = v;
    }
  }
  return best;
}

function chiSquareUpper(x: number, df: number): number {
  return incompleteGamma(df / 2, x / 2).upper;
}

/**
 * P(sum_j w_j X_j > x) for independent X_j ~ chi2(1), w_j >= 0.
 * Weights below 1e-12 times the largest are treated as zero (numerical noise from an
 * eigen-decomposition); a clearly negative or non-finite weight is an error.
 */
export function weightedChiSquareSf(x: number, weights: readonly number[]): number {
  if (!Number.isFinite(x)) {
    if (Number.isNaN(x)) throw new DeflatorError('INPUT_INVALID', 'weightedChiSquareSf: x is NaN', 'pass the statistic as a finite number');
    return x > 0 ? 0 : 1;
  }
  let wmax = 0;
  for (const w of weights) {
    if (!Number.isFinite(w)) throw new DeflatorError('INPUT_INVALID', `weightedChiSquareSf: weight ${w} is not finite`, 'the weights (eigenvalues) must be finite numbers');
    wmax = Math.max(wmax, Math.abs(w));
  }
  const cut = 1e-12 * wmax;
  const w: number[] = [];
  for (const v of weights) {
    if (v < -cut) throw new DeflatorError('INPUT_INVALID', `weightedChiSquareSf: weight ${v} is negative`, 'the weights of a sum of chi-square variables must be non-negative (eigenvalues of a positive semi-definite matrix)');
    if (v > cut) w.push(v / wmax);
  }
  const m = w.length;
  if (m === 0) return x < 0 ? 1 : 0;
  if (x <= 0) return 1;
  const xs = x / wmax;
  let wmin = 1;
  for (const v of w) wmin = Math.min(wmin, v);
  const upperBound = chiSquareUpper(xs, m);
  const lowerBound = chiSquareUpper(xs / wmin, m);
  if (wmin === 1) return upperBound; // equal weights: exactly w chi2(m)

  // Indexed loops (not for-of) in the integrand and its helpers: they run thousands of times,
  // mostly before the engine has optimised them, where for-of allocates at every step.
  const theta = (u: number): number => {
    let s = 0;
    for (let j = 0; j < m; j++) s += Math.atan(w[j] * u);
    return 0.5 * s - 0.5 * xs * u;
  };
  const dtheta = (u: number): number => {
    let s = 0;
    for (let j = 0; j < m; j++) {
      const v = w[j];
      s += v / (1 + v * v * u * u);
    }
    return 0.5 * s - 0.5 * xs;
  };
  // sin(theta(u)) / (u rho(u)): theta's sum and rho's in one pass, each in its own order
  const f = (u: number): number => {
    if (u === 0) return dtheta(0);
    let s = 0;
    let lr = 0;
    for (let j = 0; j < m; j++) {
      const v = w[j];
      s += Math.atan(v * u);
      lr += Math.log1p(v * v * u * u);
    }
    return Math.sin(0.5 * s - 0.5 * xs * u) / (u * Math.exp(0.25 * lr));
  };
  let sqrtProd = 1;
  for (const v of w) sqrtProd *= Math.sqrt(v);
  const tailBound = (u: number): number => 1 / (Math.PI * (m / 2) * u ** (m / 2) * sqrtProd);

  // The maximum of theta: dtheta(0) = (sum w - x)/2, and dtheta < 0 beyond sqrt(sum(1/w)/x).
  let uStar = 0;
  if (dtheta(0) > 0) {
    let inv = 0;
    for (const v of w) inv += 1 / v;
    let lo = 0;
    let hi = Math.sqrt(inv / xs);
    for (let it = 0; it < 200 && hi - lo > 1e-15 * hi; it++) {
      const mid = (lo + hi) / 2;
      if (dtheta(mid) > 0) lo = mid;
      else hi = mid;
    }
    uStar = (lo + hi) / 2;
  }
  const thetaMax = theta(uStar);

  // Rising branch: crossings of k pi, k = 1..floor(thetaMax / pi), by bisection.
  const cuts: number[] = [0];
  for (let k = 1; k * Math.PI < thetaMax; k++) {
    const target = k * Math.PI;
    let lo = cuts[cuts.length - 1];
    let hi = uStar;
    for (let it = 0; it < 200 && hi - lo > 1e-15 * hi; it++) {
      const mid = (lo + hi) / 2;
      if (theta(mid) < target) lo = mid;
      else hi = mid;
    }
    cuts.push((lo + hi) / 2);
  }
  let sum = 0;
  for (let i = 1; i < cuts.length; i++) sum += integratePiece(f, cuts[i - 1], cuts[i]);

  // Falling branch: crossings of k pi for k = ceil(thetaMax/pi) - 1 downwards.
  let k = Math.ceil(thetaMax / Math.PI) - 1;
  let left = cuts[cuts.length - 1];
  const sums: number[] = [];
  const maxPieces = 20000;
  let lastExtrapolations: number[] = [];
  for (let piece = 0; piece < maxPieces; piece++, k--) {
    const target = k * Math.PI;
    // Bracket the crossing: theta(lo) > target >= theta(hi).
    let lo = Math.max(left, uStar);
    let step = (2 * Math.PI) / xs;
    let hi = lo + step;
    while (theta(hi) > target) {
      lo = hi;
      step *= 2;
      hi = lo + step;
    }
    let u = hi;
    for (let it = 0; it < 200; it++) {
      const g = theta(u) - target;
      if (g > 0) lo = u;
      else hi = u;
      const d = dtheta(u);
      let next = u - g / d;
      if (!(next > lo && next < hi)) next = (lo + hi) / 2;
      if (Math.abs(next - u) <= 1e-15 * u || hi - lo <= 1e-15 * hi) {
        u = next;
        break;
      }
      u = next;
    }
    sum += integratePiece(f, left, u);
    left = u;
    if (tailBound(u) < 1e-12) return clamp(0.5 + sum / Math.PI, lowerBound, upperBound);
    sums.push(sum);
    if (sums.length >= 6) {
      const est = wynnEpsilon(sums.slice(-40));
      lastExtrapolations.push(est);
      if (lastExtrapolations.length > 3) lastExtrapolations = lastExtrapolations.slice(-3);
      if (
        lastExtrapolations.length === 3 &&
        Math.abs(lastExtrapolations[2] - lastExtrapolations[1]) < 1e-13 * Math.PI &&
        Math.abs(lastExtrapolations[1] - lastExtrapolations[0]) < 1e-13 * Math.PI
      ) {
        return clamp(0.5 + est / Math.PI, lowerBound, upperBound);
      }
    }
  }
  throw new DeflatorError(
    'NO_CONVERGENCE',
    `weightedChiSquareSf: Imhof integral did not settle within ${maxPieces} pieces (x = ${x}, ${m} weights)`,
    'report the statistic and weights; the weights may be extremely spread out',
  );
}

function clamp(v: number, lo: number, hi: number): number {
  return Math.min(hi, Math.max(lo, v));
}

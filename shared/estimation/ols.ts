/**
 * Ordinary least squares by Householder QR (shared/linalg/qr.ts): coefficients,
 * residuals, classical standard errors, R^2 and the residual standard deviation.
 *
 * Definitions (as in R's lm and statsmodels' OLS):
 *   b = argmin ||y - X b||,  e = y - X b,  RSS = e'e,  df = n - p,
 *   residual s.d. s = sqrt(RSS / df),  Var(b) = s^2 (X'X)^{-1},  se = sqrt(diag Var(b)),
 *   R^2 = 1 - RSS / sum (y - ybar)^2 when X has a constant column, else 1 - RSS / sum y^2.
 * Checked against the NIST StRD "Longley" certified values (test/shared/linalg/qr.test.ts).
 *
 * Several right-hand sides with the same design (N assets on the same factors) share
 * one factorisation: `olsMany`.
 */
import { DeflatorError } from '../errors.js';
import { qrFactor, qrLeastSquares, qrUnscaledCovariance, type DenseMatrix, type QrFactorization, type QrOptions } from '../linalg/qr.js';

export interface OlsFit {
  coefficients: Float64Array;
  /** Classical (homoskedastic) standard errors s * sqrt(diag (X'X)^{-1}). */
  se: Float64Array;
  residuals: Float64Array;
  fitted: Float64Array;
  rss: number;
  /** Residual degrees of freedom n - p. */
  df: number;
  /** Residual standard deviation sqrt(RSS / (n - p)). */
  sigma: number;
  r2: number;
  /** Whether R^2 was centered (the design has a constant column). */
  centered: boolean;
}

export interface OlsManyResult {
  fits: OlsFit[];
  /** (X'X)^{-1}, shared by every fit. */
  unscaledCovariance: DenseMatrix;
  qr: QrFactorization;
}

/** Does X have a column that is the same non-zero number in every row? */
export function hasConstantColumn(x: DenseMatrix): boolean {
  for (let j = 0; j < x.cols; j++) {
    const c0 = x.data[j];
    if (c0 === 0) continue;
    let constant = true;
    for (let i = 1; i < x.rows && constant; i++) if (x.data[i * x.cols + j] !== c0) constant = false;
    if (constant) return true;
  }
  return false;
}

function fitOne(qr: QrFactorization, x: DenseMatrix, y: ArrayLike<number>, xtxInvDiag: Float64Array, centered: boolean, label: string): OlsFit {
  const n = qr.rows;
  const p = qr.cols;
  if (y.length !== n) throw new RangeError(`ols: response of length ${y.length} for ${n} rows`);
  for (let i = 0; i < n; i++)
    if (!Number.isFinite(y[i])) throw new DeflatorError('INPUT_INVALID', `${qr.name}: response ${label} has a non-finite value in row ${i + 1}`, 'check the series for missing or infinite values');
  const sol = qrLeastSquares(qr, y);
  const df = n - p;
  const sigma = Math.sqrt(sol.rss / df);
  const se = new Float64Array(p);
  for (let j = 0; j < p; j++) se[j] = sigma * Math.sqrt(xtxInvDiag[j]);
  const fitted = new Float64Array(n);
  for (let i = 0; i < n; i++) fitted[i] = y[i] - sol.residuals[i];
  let tss = 0;
  if (centered) {
    let mean = 0;
    for (let i = 0; i < n; i++) mean += y[i];
    mean /= n;
    for (let i = 0; i < n; i++) tss += (y[i] - mean) * (y[i] - mean);
  } else {
    for (let i = 0; i < n; i++) tss += y[i] * y[i];
  }
  // A response with no variation has no R^2 to speak of; report 0 rather than 0/0.
  const r2 = tss > 0 ? 1 - sol.rss / tss : 0;
  return { coefficients: sol.coefficients, se, residuals: sol.residuals, fitted, rss: sol.rss, df, sigma, r2, centered };
}

/**
 * OLS of each response in `ys` on the same design X (n x p, n > p).
 * Throws SINGULAR (collinear columns, named), UNDERIDENTIFIED (n <= p), INPUT_INVALID.
 */
export function olsMany(x: DenseMatrix, ys: readonly ArrayLike<number>[], opts: QrOptions & { responseLabels?: readonly string[] }): OlsManyResult {
  if (x.rows <= x.cols)
    throw new DeflatorError(
      'UNDERIDENTIFIED',
      `${opts.name}: ${x.rows} observations for ${x.cols} coefficients; standard errors need more observations than coefficients`,
      'use a longer sample or fewer regressors',
    );
  const qr = qrFactor(x, opts);
  const unscaledCovariance = qrUnscaledCovariance(qr);
  const p = x.cols;
  const d = new Float64Array(p);
  for (let j = 0; j < p; j++) d[j] = unscaledCovariance.data[j * p + j];
  const centered = hasConstantColumn(x);
  const fits = ys.map((y, k) => fitOne(qr, x, y, d, centered, opts.responseLabels?.[k] ?? `${k + 1}`));
  return { fits, unscaledCovariance, qr };
}

/** OLS of y on X (n x p, n > p). */
export function ols(x: DenseMatrix, y: ArrayLike<number>, opts: QrOptions): OlsFit & { unscaledCovariance: DenseMatrix } {
  const r = olsMany(x, [y], opts);
  return { ...r.fits[0], unscaledCovariance: r.unscaledCovariance };
}

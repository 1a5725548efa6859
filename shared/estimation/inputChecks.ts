/**
 * Checks on a returns panel before any estimation (METHODS 7): a problem in the data is
 * an error that names its cause (which series, which period), never a NaN in a table.
 */
import { DeflatorError } from '../errors.js';
import { cholesky } from '../linalg/cholesky.js';

export function assertFiniteSeries(name: string, x: Float64Array, periods: readonly string[]): void {
  for (let t = 0; t < x.length; t++)
    if (!Number.isFinite(x[t]))
      throw new DeflatorError('INPUT_INVALID', `${name} has a missing or non-finite value (${x[t]}) at ${periods[t] ?? `period ${t + 1}`}`, 'fill or drop that period; the panel must be balanced');
}

/** A series whose sample variance is zero relative to its level. */
export function isConstant(x: Float64Array): boolean {
  if (x.length === 0) return true;
  let lo = Infinity;
  let hi = -Infinity;
  for (let t = 0; t < x.length; t++) {
    const v = x[t];
    if (v < lo) lo = v;
    if (v > hi) hi = v;
  }
  return hi - lo <= 1e-12 * Math.max(Math.abs(hi), Math.abs(lo), 1e-300);
}

/** Factors must vary and must not be (almost) linear combinations of each other. */
export function checkFactors(factors: readonly { name: string; values: Float64Array }[]): void {
  for (const f of factors)
    if (isConstant(f.values))
      throw new DeflatorError('SINGULAR', `factor "${f.name}" is constant over the sample, so its loading is not identified`, 'drop that factor or choose a sample where it varies');
  const K = factors.length;
  if (K < 2) return;
  const T = factors[0].values.length;
  const mu = factors.map((f) => f.values.reduce((a, b) => a + b, 0) / T);
  const cov = new Float64Array(K * K);
  for (let i = 0; i < K; i++)
    for (let j = i; j < K; j++) {
      let s = 0;
      const a = factors[i].values;
      const b = factors[j].values;
      for (let t = 0; t < T; t++) s += (a[t] - mu[i]) * (b[t] - mu[j]);
      cov[i * K + j] = s / T;
      cov[j * K + i] = s / T;
    }
  cholesky(
    { rows: K, cols: K, data: cov },
    {
      name: 'the factor covariance matrix',
      labels: factors.map((f) => `factor "${f.name}"`),
      code: 'SINGULAR',
      hint: 'the factors are collinear; drop the redundant factor',
    },
  );
}

/** Excess returns that never vary make the moment covariance singular. */
export function checkAssets(assets: readonly string[], returns: readonly Float64Array[], kind: 'excess' | 'gross'): void {
  if (kind !== 'excess') return;
  returns.forEach((r, i) => {
    if (isConstant(r))
      throw new DeflatorError('SINGULAR', `test asset "${assets[i]}" has a constant excess return over the sample, so its moment is collinear with the others`, 'drop that asset from the test set');
  });
}

export function checkIdentification(q: number, p: number, N: number, what: string): void {
  if (q - p < 1)
    throw new DeflatorError(
      'UNDERIDENTIFIED',
      `${what}: ${N} test assets give ${q} moments for ${p} parameters; the test of the pricing errors needs more moments than parameters`,
      'add test assets or use fewer factors',
    );
}

export function checkSampleLength(T: number, q: number, lags: number): void {
  if (T <= lags + 1)
    throw new DeflatorError('SAMPLE_TOO_SHORT', `${T} periods are too few for ${lags} Newey-West lags (need more than ${lags + 1})`, 'use fewer lags (estimator.lags) or a longer sample');
  if (T <= q)
    throw new DeflatorError('SAMPLE_TOO_SHORT', `${T} periods cannot estimate the ${q} x ${q} long-run covariance of the moments (need more periods than moments)`, 'use fewer test assets or a longer sample');
}

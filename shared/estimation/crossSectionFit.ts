/**
 * Cross-sectional fit of a model's pricing errors (METHODS 3): mean absolute pricing
 * error, root mean square pricing error, and
 *
 *   R^2_cs = 1 - sum_i alpha_i^2 / sum_i (mean R_i - average over i of mean R_i)^2,
 *
 * the share of the cross-sectional dispersion of mean returns the model accounts for
 * (the uncentered-alpha form of the cross-sectional R^2; see docs/methods.md). Annualised MAPE and RMSE multiply the per-period numbers by the periods per year.
 */
import type { CrossSectionFit } from '../results.js';

export function crossSectionFit(alpha: ArrayLike<number>, meanReturns: ArrayLike<number>, periodsPerYear: number): CrossSectionFit & { r2Defined: boolean } {
  const N = alpha.length;
  let abs = 0;
  let sq = 0;
  let avg = 0;
  for (let i = 0; i < N; i++) {
    abs += Math.abs(alpha[i]);
    sq += alpha[i] * alpha[i];
    avg += meanReturns[i];
  }
  avg /= N;
  let disp = 0;
  for (let i = 0; i < N; i++) disp += (meanReturns[i] - avg) ** 2;
  const mape = abs / N;
  const rmse = Math.sqrt(sq / N);
  const r2Defined = disp > 0;
  return { mape, rmse, r2: r2Defined ? 1 - sq / disp : 0, mapeAnnual: mape * periodsPerYear, rmseAnnual: rmse * periodsPerYear, r2Defined };
}

/**
 * The single entry for estimating one model on one panel: dispatches on
 * spec.estimator.method. GMM on the discount-factor moments is gmmFit (gmmFit.ts); the
 * beta-representation comparators (time-series regressions with GRS, two-pass
 * Fama-MacBeth) live in their own files and return the same FitResult.
 */
import { DeflatorError } from '../errors.js';
import type { ReturnsPanel } from '../panel.js';
import type { FitResult } from '../results.js';
import type { FitSpec } from '../spec.js';
import { gmmFit } from './gmmFit.js';

export function fit(spec: FitSpec, panel: ReturnsPanel): FitResult {
  const method = spec.estimator.method;
  switch (method) {
    case 'gmm':
      return gmmFit(spec, panel);
    default:
      throw new DeflatorError('SPEC_INVALID', `spec.estimator.method: "${method}" has no estimator in this build`, 'use "gmm"');
  }
}

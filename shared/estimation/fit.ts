/**
 * The single entry for estimating one model on one panel: dispatches on
 * spec.estimator.method. GMM on the discount-factor moments is gmmFit (gmmFit.ts); the
 * beta-representation comparators, time-series regressions with GRS (timeSeries.ts) and
 * two-pass Fama-MacBeth with Shanken's correction (twoPass.ts), return the same FitResult.
 */
import { DeflatorError } from '../errors.js';
import type { ReturnsPanel } from '../panel.js';
import type { FitResult } from '../results.js';
import type { FitSpec } from '../spec.js';
import { gmmFit } from './gmmFit.js';
import { timeSeriesFit } from './timeSeries.js';
import { twoPassFit } from './twoPass.js';

export function fit(spec: FitSpec, panel: ReturnsPanel): FitResult {
  if (spec.instruments && spec.estimator.method !== 'gmm')
    throw new DeflatorError('SPEC_INVALID', `spec.instruments: ${spec.estimator.method} regressions take no instruments; instruments scale the moments of a GMM fit`, 'remove "instruments" or set estimator.method to "gmm"');
  switch (spec.estimator.method) {
    case 'gmm':
      return gmmFit(spec, panel);
    case 'time-series':
      return timeSeriesFit(spec, panel);
    case 'two-pass':
      return twoPassFit(spec, panel);
  }
}

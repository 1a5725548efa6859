/**
 * Warnings: reasons not to trust a result as it stands. Each result carries
 * `warnings: [{code, message}]`; the presentation model (shared/present) places each
 * beside the tables it qualifies (WARNING_TABLES). The thresholds are stated in
 * docs/methods.md ("Warnings"); they are rules of thumb, marked there as such.
 */
import type { ResultWarning } from './results.js';

export const WARNING_CODES = [
  /** T below PERIODS_PER_MOMENT x the number of moments. */
  'FEW_PERIODS',
  /** The long-run covariance S is close to singular (a moment almost a combination of the others). */
  'S_NEAR_SINGULAR',
  /** The fitted discount factor's volatility is below the Hansen-Jagannathan bound at its mean. */
  'BELOW_VOLATILITY_BOUND',
  /** The solver's starting value lies at the edge of the range scanned for it. */
  'START_AT_EDGE',
  /** The start scan found more than one local minimum. */
  'SEVERAL_MINIMA',
  /** An iteration cap was reached before the convergence criterion held. */
  'ITERATION_CAP',
  /** Some back-test windows could not be estimated. */
  'FAILED_WINDOWS',
  /** Some bootstrap replications could not be computed. */
  'FAILED_REPLICATIONS',
  /** A factor scaled by an instrument whose mean is large against its s.d.: f z is nearly collinear with f. */
  'INSTRUMENT_LEVEL',
] as const;
export type WarningCode = (typeof WARNING_CODES)[number];

/**
 * Fewest periods per moment before FEW_PERIODS (rule of thumb, common practice: with T
 * close to the number of moments q the q x q long-run covariance S rests on few
 * observations per entry and chi-square tests over-reject; docs/methods.md).
 */
export const PERIODS_PER_MOMENT = 5;

/**
 * S_NEAR_SINGULAR when some moment's share of variance not explained by the moments
 * before it (the relative Cholesky pivot L_jj^2 / S_jj, scale-free) falls below this
 * (an R^2 on the other moments above 1 - 1e-8). The solver refuses S at 1e-12
 * (shared/linalg/cholesky.ts); between the two the numbers exist but rest on a
 * near-singular S.
 */
export const S_PIVOT_WARN = 1e-8;

/**
 * BELOW_VOLATILITY_BOUND when sigma(m) < (1 - BOUND_TOLERANCE) x the bound at E[m]: a
 * model that prices the assets exactly sits on the bound, up to rounding.
 */
export const BOUND_TOLERANCE = 1e-9;

export function warning(code: WarningCode, message: string, model?: string): ResultWarning {
  return model === undefined ? { code, message } : { code, message, model };
}

/** FEW_PERIODS when T < PERIODS_PER_MOMENT x q. */
export function fewPeriodsWarning(T: number, q: number, what = 'moments'): ResultWarning | undefined {
  if (T >= PERIODS_PER_MOMENT * q) return undefined;
  return warning(
    'FEW_PERIODS',
    `T = ${T} periods for ${q} ${what} (${(T / q).toFixed(1)} per moment, below ${PERIODS_PER_MOMENT}): the long-run covariance rests on few periods, so standard errors and tests (J can be far too large) are unreliable; use fewer test assets or a longer sample`,
  );
}

/** S_NEAR_SINGULAR from the smallest relative Cholesky pivot of S and the moment it belongs to. */
export function nearSingularWarning(minPivot: number, moment: string): ResultWarning | undefined {
  if (!(minPivot < S_PIVOT_WARN)) return undefined;
  return warning(
    'S_NEAR_SINGULAR',
    `the long-run covariance S is nearly singular: moment "${moment}" is a combination of the others up to ${minPivot.toExponential(1)} of its variance (warning below ${S_PIVOT_WARN.toExponential(0)}), so its inverse, the second-stage weights and J are unreliable; drop near-duplicate test assets or lengthen the sample`,
  );
}

/** The warnings with codes in `codes`, in their order. */
export function warningsWith(ws: readonly ResultWarning[] | undefined, codes: readonly string[]): ResultWarning[] {
  return (ws ?? []).filter((w) => codes.includes(w.code));
}

/**
 * INSTRUMENT_LEVEL when an instrument that scales the factors has |mean| > this x its s.d.
 * (rule of thumb, ours): f z = zbar f + f (z - zbar) is then mostly zbar f, so the loadings
 * on f and on f z are nearly collinear and their standard errors far above those of a
 * model without the scaled factor.
 */
export const INSTRUMENT_LEVEL_RATIO = 3;

/** INSTRUMENT_LEVEL for an instrument of the given mean and s.d. (only where it scales factors). */
export function instrumentLevelWarning(name: string, mean: number, sd: number): ResultWarning | undefined {
  if (!(Math.abs(mean) > INSTRUMENT_LEVEL_RATIO * sd)) return undefined;
  return warning(
    'INSTRUMENT_LEVEL',
    `instrument "${name}" has a mean ${sd > 0 ? `${(Math.abs(mean) / sd).toFixed(1)} times` : 'far above'} its standard deviation (warning above ${INSTRUMENT_LEVEL_RATIO}): the factors scaled by it are nearly the plain factors times ${mean.toPrecision(3)}, so the loadings b.<factor> and b.<factor>:${name} are weakly identified (large, offsetting, with large s.e.); storing "${name}" as its deviation from its mean gives the same fit (same J, pricing errors and HJ distance) with loadings that separate`,
  );
}

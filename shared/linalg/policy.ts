/**
 * The singularity policy of the numerical kernel layer (shared/linalg): ONE rule, used by
 * every factorisation the estimators, the incremental back-test and the bootstrap call.
 *
 * Rule (relative pivots). A pivot is judged against the size of its OWN row or column
 * before elimination, never against the largest entry of the matrix:
 *
 *   Cholesky of a symmetric A (Gram, covariance, information matrices): pivot j, the part
 *   d_j = A_jj - sum_k<j L_jk^2 of variable j not explained by the variables before it,
 *   is negligible when d_j <= PIVOT_TOL * A_jj (an R^2 above 1 - PIVOT_TOL on the earlier
 *   variables);
 *   Householder QR of a design X (least squares, whitened Jacobians, small square
 *   systems): |R_jj| is the norm of the part of column j orthogonal to the columns before
 *   it; it is negligible when R_jj^2 <= PIVOT_TOL * ||x_j||^2, the same unexplained share
 *   measured on the design instead of on its Gram matrix X'X (whose Cholesky pivots are
 *   exactly R_jj^2 and ||x_j||^2).
 *
 * Consequence: the decision does not change when rows and columns are rescaled (A -> D A D
 * for a positive diagonal D; X -> X D), so a well-posed problem whose variables are in
 * wildly different units (returns in decimals beside an instrument in thousands) is never
 * SINGULAR, while an exactly or nearly collinear one is, whatever its units. A matrix
 * whose own diagonal entry (or column) is zero or not finite is singular too.
 *
 * PIVOT_TOL = 1e-12: an unexplained share of 1e-12 of a variance (1e-6 of a norm) leaves
 * about 4 significant digits in what the factor solves for in double precision (the
 * relative error grows like 2^-52 / share); below it the numbers are rounding noise.
 * For the least-squares designs of the regression comparators this is stricter than R's
 * lm.fit (1e-7 of a norm) and looser than nothing: the NIST Longley design, the worst-
 * conditioned reference in the tests, has a smallest norm share of 8.6e-5.
 *
 * Pseudo-inverses are not singularity checks: `symmetricPinv` keeps eigenvalues by the
 * rank the theory gives (or n * 2^-52 of the largest) and is documented there.
 */
export const PIVOT_TOL = 1e-12;

/** True when a Cholesky pivot d (of a diagonal entry `own`) is negligible under the policy. */
export function choleskyPivotNegligible(d: number, own: number): boolean {
  return !(own > 0) || !Number.isFinite(own) || !(d > PIVOT_TOL * own);
}

/** True when a QR diagonal |r| (of a column with Euclidean norm `columnNorm`) is negligible under the policy. */
export function qrPivotNegligible(r: number, columnNorm: number): boolean {
  return !(columnNorm > 0) || !Number.isFinite(columnNorm) || !(r * r > PIVOT_TOL * columnNorm * columnNorm);
}

/** The unexplained share a pivot leaves, for error messages (variance units). */
export function unexplainedShare(d: number, own: number): string {
  return own > 0 && d / own > 0 ? (d / own).toExponential(2) : '0';
}

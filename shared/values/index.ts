/**
 * Present values and value processes (METHODS 10): the dividend-price decomposition, the
 * drift split, and the discounted-value paths of a fit. docs/methods.md has the rules.
 */
export { dividendPriceDecomposition, COEFFICIENT_NAMES, FEW_YEARS, NEAR_UNIT_ROOT, LARGE_GAP } from './dividendPrice.js';
export { driftSplit, type DriftInput } from './driftSplit.js';
export { discountedPaths, linearSdfForPremia, MAX_DISCOUNTED_VALUES, type DiscountedInput } from './discountedValue.js';
export { presentValue, presentValueOf, presentValueInputs, presentValueHistories } from './presentValue.js';
export { driftAnalysis, driftPanel, driftPanelSpec } from './drift.js';

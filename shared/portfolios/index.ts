export { parseSortSpec, sortSpecSchema, bucketName, CHARACTERISTICS } from './spec.js';
export type { SortSpec, SortSpecInput, Characteristic } from './spec.js';
export { sortPanel } from './periods.js';
export type { SortPanel } from './periods.js';
export { buildSortedPortfolios, breakpoints, bucketOf, characteristic, sortRules } from './sort.js';
export type { SortResult, Formation } from './sort.js';

import { assetSourceText, isReturnHistory, type StoredAsset } from '../data.js';
import { DeflatorError } from '../errors.js';
import { sortPanel } from './periods.js';
import { buildSortedPortfolios, type SortResult } from './sort.js';
import type { SortSpec } from './spec.js';

/** Histories -> sorted portfolios (the whole pipeline). */
export function sortPortfolios(histories: StoredAsset[], spec: SortSpec): SortResult {
  let hs = histories;
  if (spec.assets) {
    const byName = new Map(histories.map((h) => [h.asset, h]));
    const missing = spec.assets.filter((a) => !byName.has(a));
    if (missing.length) throw new DeflatorError('DATA_MISSING', `portfolio.assets: ${missing.join(', ')} not among the stored histories`, 'correct the asset list');
    hs = spec.assets.map((a) => byName.get(a) as StoredAsset);
  }
  refuseReturnHistories(hs, spec);
  return buildSortedPortfolios(sortPanel(hs, spec.frequency), spec);
}

/**
 * Assets stored as returns (METHODS 8) have no price, dividends or shares: only a
 * momentum sort with equal weights can use them. Their returns must be total returns
 * (a sort builds total-return portfolios).
 */
function refuseReturnHistories(hs: readonly StoredAsset[], spec: SortSpec): void {
  const returnsOnly = hs.filter(isReturnHistory);
  if (returnsOnly.length === 0) return;
  const named = (xs: readonly StoredAsset[]) => `${xs.slice(0, 10).map((h) => `"${h.asset}" (${assetSourceText(h)})`).join(', ')}${xs.length > 10 ? `, ... ${xs.length} in all` : ''}`;
  const needs = spec.characteristic === 'price' ? 'prices' : spec.characteristic === 'yield' ? 'prices and dividends' : spec.characteristic === 'size' ? 'prices and shares outstanding' : spec.weight === 'value' ? 'prices and shares outstanding' : null;
  if (needs) {
    throw new DeflatorError(
      'INPUT_INVALID',
      `a ${spec.characteristic} sort${spec.weight === 'value' ? ' with value weights' : ''} needs ${needs}, and ${named(returnsOnly)} ${returnsOnly.length === 1 ? 'was' : 'were'} imported as returns`,
      'sort only assets imported as prices (--assets), or sort on momentum with equal weights',
    );
  }
  const excess = returnsOnly.filter((h) => h.excess);
  if (excess.length) {
    throw new DeflatorError(
      'INPUT_INVALID',
      `${named(excess)} ${excess.length === 1 ? 'holds' : 'hold'} excess returns; a sort builds portfolios of total returns`,
      'import the total returns of those assets, or leave them out of the sort (--assets)',
    );
  }
}

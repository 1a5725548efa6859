export { parseSortSpec, sortSpecSchema, bucketName, CHARACTERISTICS } from './spec.js';
export type { SortSpec, SortSpecInput, Characteristic } from './spec.js';
export { sortPanel } from './periods.js';
export type { SortPanel } from './periods.js';
export { buildSortedPortfolios, breakpoints, bucketOf, characteristic, sortRules } from './sort.js';
export type { SortResult, Formation } from './sort.js';

import type { PriceHistory } from '../data.js';
import { DeflatorError } from '../errors.js';
import { sortPanel } from './periods.js';
import { buildSortedPortfolios, type SortResult } from './sort.js';
import type { SortSpec } from './spec.js';

/** Histories -> sorted portfolios (the whole pipeline). */
export function sortPortfolios(histories: PriceHistory[], spec: SortSpec): SortResult {
  let hs = histories;
  if (spec.assets) {
    const byName = new Map(histories.map((h) => [h.asset, h]));
    const missing = spec.assets.filter((a) => !byName.has(a));
    if (missing.length) throw new DeflatorError('DATA_MISSING', `portfolio.assets: ${missing.join(', ')} not among the stored histories`, 'correct the asset list');
    hs = spec.assets.map((a) => byName.get(a) as PriceHistory);
  }
  return buildSortedPortfolios(sortPanel(hs, spec.frequency), spec);
}

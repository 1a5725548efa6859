/**
 * The presentation model (types.ts): `present(result)` gives the tables, units, marks,
 * notes and warnings every surface shows. One producer per result kind; a new kind of
 * result adds its producer to PRODUCERS (the compiler asks for it once the kind is in
 * AnyResult).
 */
import type { AnyResult, ValueResult } from '../results.js';
import { presentBacktest } from './backtest.js';
import { presentBatch } from './batch.js';
import { presentCompare } from './compare.js';
import { presentFit } from './fit.js';
import type { Presentation } from './types.js';
import { presentDrift, presentPresentValue } from './value.js';

/** Every result kind a surface shows. */
export type PresentableResult = AnyResult | ValueResult;

type Producers = { [K in PresentableResult['kind']]: (r: Extract<PresentableResult, { kind: K }>) => Presentation };

export const PRODUCERS: Producers = {
  fit: presentFit,
  backtest: presentBacktest,
  compare: presentCompare,
  batch: (r) => presentBatch(r),
  'present-value': presentPresentValue,
  drift: presentDrift,
};

export function present(result: PresentableResult): Presentation {
  const producer = PRODUCERS[result.kind] as (r: PresentableResult) => Presentation;
  return producer(result);
}

export * from './types.js';
export { BEST_RULES, NOT_RANKED, bestPerColumn, bestRows, bestRule } from './best.js';
export { cellFormat, cellText, displayNumber, exactNumber, pValueText, tableCellText, ROUNDING_NOTE } from './format.js';
export { periodWord, unitsFor, ANNUALISING_NOTE } from './units.js';
export { allTests } from './fit.js';
export { warningNumbers } from './build.js';
export { filterRows, reorderRows, sortOrder } from './sort.js';

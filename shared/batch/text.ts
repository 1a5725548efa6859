/**
 * The readable ranking of a merged batch (`deflator batch merge` and `deflator show` of a
 * batch run): the presentation model's batch tables (shared/present/batch.ts) as text.
 */
import type { BatchResult } from '../results.js';
import { presentBatch, DEFAULT_TOP, type BatchOptions } from '../present/batch.js';
import { presentationText } from '../report/text.js';

export { DEFAULT_TOP };
export type BatchTextOptions = BatchOptions;

export function batchText(r: BatchResult, opts: BatchTextOptions = {}): string {
  return presentationText(presentBatch(r, opts));
}

/** The presentation of the present-value analyses (the dividend-price decomposition and the drift split). */
import type { DriftResult, PresentValueResult } from '../results.js';
import { CAUTION } from '../results.js';
import { driftTables, presentValueTables, valueHeaderLines } from '../report/value-tables.js';
import type { Presentation } from './types.js';

export function presentPresentValue(r: PresentValueResult): Presentation {
  return { kind: r.kind, title: r.label, caution: CAUTION, header: valueHeaderLines(r), tables: presentValueTables(r), notes: [...new Set(r.notes)], warnings: r.warnings };
}

export function presentDrift(r: DriftResult): Presentation {
  return { kind: r.kind, title: r.label, caution: CAUTION, header: valueHeaderLines(r), tables: driftTables(r), notes: [...new Set(r.notes)], warnings: r.warnings };
}

/** The import pipeline: streaming CSV in, one store transaction per import. */
export { importPrices, PRICE_COLUMNS, type PriceColumn, type PriceImportOptions } from './prices.js';
export { importSeries, UNITS, type SeriesImportOptions, type Units } from './series.js';
export type { ImportReport, ProgressCallback } from './common.js';
export { DEFAULT_THRESHOLDS, type CheckThresholds } from './checks.js';
export { DATE_FORMATS, THOUSANDS_SEPARATORS, type ThousandsName } from './fields.js';

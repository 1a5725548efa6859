/** The import pipeline: streaming CSV in, one store transaction per import. */
export { importPrices, PRICE_COLUMNS, type PriceColumn, type PriceImportOptions } from './prices.js';
export { importSeries, UNITS, type SeriesImportOptions, type Units } from './series.js';
export { importReturns, RETURN_COLUMNS, DEFAULT_MAX_RETURN, type ReturnColumn, type ReturnImportOptions } from './returns.js';
export { Reading, missingCodeList, type ReadingOptions } from './reading.js';
export { DELIMITERS, type DelimiterName } from './csv.js';
export type { ImportReport, ProgressCallback } from './common.js';
export { DEFAULT_THRESHOLDS, type CheckThresholds } from './checks.js';
export { DATE_FORMATS, DECIMAL_MARKS, THOUSANDS_SEPARATORS, type DecimalName, type ThousandsName } from './fields.js';
export { previewImport, type PreviewOptions } from './preview.js';

/**
 * Stored histories as the domain core sees them: plain arrays, no database handles.
 * The store (src-main/store) reads these out of SQLite; the returns engine
 * (shared/returns) turns them into a returns panel.
 */

/** Calendar frequencies the returns engine aggregates to (METHODS section 1). */
export const FREQUENCIES = ['daily', 'weekly', 'monthly', 'quarterly', 'annual'] as const;
export type Frequency = (typeof FREQUENCIES)[number];

/** Periods per year, used for dt in risk-free conversions and for annualising (METHODS 1, 3). */
export const PERIODS_PER_YEAR: Record<Frequency, number> = {
  daily: 252,
  weekly: 52,
  monthly: 12,
  quarterly: 4,
  annual: 1,
};

/** One asset's price and dividend history, dates ascending (ISO yyyy-mm-dd). */
export interface PriceHistory {
  asset: string;
  /** Absent or 'prices': what tells a price history from a return history (ReturnHistory). */
  source?: 'prices';
  dates: string[];
  /** Price per share at the close of each date. */
  price: Float64Array;
  /** Cash dividend per share paid on that date (ex-date); 0 where none. */
  dividend: Float64Array;
  /**
   * Split/adjustment factor on that date (1 where none): a 2-for-1 split dated t has
   * factor 2, and prices and dividends before t are divided by the product of later factors.
   */
  adjust?: Float64Array;
  /** Shares outstanding, where imported (for value weights and market value sorts). */
  shares?: Float64Array;
}

/** How a return file writes each return (METHODS section 8): simple net r, gross R = 1 + r, or log ln R. */
export const RETURN_FORMS = ['net', 'gross', 'log'] as const;
export type ReturnForm = (typeof RETURN_FORMS)[number];

/** Units of imported values: decimal (0.0125) or percent (1.25, divided by 100 when read). */
export const VALUE_UNITS = ['decimal', 'percent'] as const;
export type ValueUnits = (typeof VALUE_UNITS)[number];

/**
 * One asset whose history arrived as returns (METHODS section 8), stored as given: per
 * period end t the return over period t (from the end of t-1 to the end of t), in its
 * form and units. The returns engine converts it to gross returns (R = 1 + r, R, or
 * exp(l), after dividing percent by 100); the reinvested value is V = 1 at the period
 * before the first return and V_t = V_{t-1} R_t. `excess`: the file held excess returns
 * R^e = R - R^f already (a gross form of an excess return is 1 + R^e).
 */
export interface ReturnHistory {
  asset: string;
  source: 'returns';
  /** Period ends (ISO), ascending. */
  dates: string[];
  /** The returns as written in the file; NaN where a missing-value code stood (a gap, not a zero). */
  values: Float64Array;
  form: ReturnForm;
  units: ValueUnits;
  excess: boolean;
}

/** A stored asset: a price history or a return history. */
export type StoredAsset = PriceHistory | ReturnHistory;

export function isReturnHistory(h: StoredAsset): h is ReturnHistory {
  return h.source === 'returns';
}

/** How a stored asset's data arrived, in words for tables and messages: "prices", "net returns (percent, excess)". */
export function assetSourceText(h: { source?: 'prices' | 'returns'; form?: ReturnForm; units?: ValueUnits; excess?: boolean }): string {
  if (h.source !== 'returns') return 'prices';
  return `${h.form ?? 'net'} returns (${h.units ?? 'decimal'}${h.excess ? ', excess' : ''})`;
}

/** Date layouts an import reads: calendar dates, and period keys read as the period's last calendar day (METHODS 8). */
export const DAY_FORMATS = ['YYYY-MM-DD', 'YYYY/MM/DD', 'YYYY.MM.DD', 'YYYYMMDD', 'DD/MM/YYYY', 'DD.MM.YYYY', 'DD-MM-YYYY', 'MM/DD/YYYY', 'MM.DD.YYYY', 'MM-DD-YYYY'] as const;
export const PERIOD_FORMATS = ['YYYYMM', 'YYYY-MM', 'YYYYQn', 'YYYY-Qn', 'YYYY'] as const;
export const DATE_FORMATS = [...DAY_FORMATS, ...PERIOD_FORMATS] as const;
export type DateFormatName = (typeof DATE_FORMATS)[number];

/** Field delimiters and decimal marks an import reads (comma and point by default). */
export const DELIMITER_NAMES = ['comma', 'semicolon', 'tab', 'bar'] as const;
export const DECIMAL_NAMES = ['point', 'comma'] as const;
export type DecimalName = (typeof DECIMAL_NAMES)[number];
export type DelimiterName = (typeof DELIMITER_NAMES)[number];

export const SERIES_KINDS = ['factor', 'riskfree', 'consumption', 'other'] as const;
export type SeriesKind = (typeof SERIES_KINDS)[number];

/**
 * How a risk-free column was quoted (METHODS section 1):
 * rate = per-period rate; yield-* = annualized yield with that compounding;
 * account = money-market account level; flow = constant-value account paying rf_t each period.
 */
export const RF_FORMS = ['rate', 'yield-simple', 'yield-annual', 'yield-continuous', 'account', 'flow'] as const;
export type RiskfreeForm = (typeof RF_FORMS)[number];

/** A named series (factor, risk-free, consumption level, other), values in decimals. */
export interface NamedSeries {
  name: string;
  kind: SeriesKind;
  dates: string[];
  values: Float64Array;
  /** Only for kind 'riskfree'. */
  rfForm?: RiskfreeForm;
}

/**
 * A return series that is already a return (not a price), e.g. a test-asset portfolio
 * built by a characteristic sort. Usable as a test asset in any spec by its name.
 */
export interface ReturnSeries {
  name: string;
  frequency: Frequency;
  /** Period-end labels (ISO dates). */
  periods: string[];
  /** Net per-period returns (decimal), NaN where the portfolio had no return. */
  net: Float64Array;
  /** How it was built (the sort rules), for the record. */
  rules?: string;
}

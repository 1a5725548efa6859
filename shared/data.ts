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

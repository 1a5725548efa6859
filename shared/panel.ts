import type { Frequency } from './data.js';

/**
 * A balanced panel of test-asset returns with the factor and macro series aligned on
 * the same periods: the single input of every estimator, back-test and comparison.
 * Built from the store by shared/returns (buildPanel); plain data so it crosses
 * worker and process boundaries (Float64Arrays are structured-clonable).
 */
export interface ReturnsPanel {
  frequency: Frequency;
  /** Period-end labels (ISO dates), length T. */
  periods: string[];
  /** Test-asset identifiers, length N. */
  assets: string[];
  /** 'excess': R_i - R^f; 'gross': R_i. */
  returnKind: 'excess' | 'gross';
  /** Asset returns, one Float64Array of length T per asset (same order as `assets`). */
  returns: Float64Array[];
  /** Factor series aligned on `periods`, in the order the spec names them. */
  factors: { name: string; values: Float64Array }[];
  /** Per-period gross risk-free return R^f_t, where a risk-free series was chosen. */
  riskfreeGross?: Float64Array;
  /** Consumption growth C_t / C_{t-1}, where the model needs it. */
  consumptionGrowth?: Float64Array;
  /**
   * Only where asked for (the drift split): per asset, the price ratios P*_t / P*_{t-1} of
   * the split-adjusted closes (no dividends), null for an asset stored as returns.
   */
  priceRatios?: (Float64Array | null)[];
  /** What alignment did: assets dropped and why, periods lost. */
  sampleNotes: SampleNote[];
}

export interface SampleNote {
  /** An asset or series name, or '*' for the whole panel. */
  subject: string;
  reason: string;
}

/** The common sample a result reports in its header (METHODS section 7). */
export interface SampleInfo {
  start: string;
  end: string;
  T: number;
  N: number;
  K: number;
  lags: number;
}

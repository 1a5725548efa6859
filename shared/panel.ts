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
  /**
   * Instruments (METHODS 9), where the spec names them: each series at period t holds
   * z_{t-lag}, the value observed `lag` periods before, so that it multiplies period t's
   * returns and factors as they stand.
   */
  instruments?: PanelInstruments;
  /**
   * Set on a panel whose test assets and factors are already the scaled ones
   * (shared/estimation/instruments.ts, `conditionPanel`): what each of them is.
   */
  conditioning?: Conditioning;
}

export interface PanelInstruments {
  lag: number;
  /** Instrument series in the spec's order (the constant is implied, not stored). */
  series: { name: string; values: Float64Array }[];
  /** Period labels that returns and factors cover but the lagged instruments do not (lost to the lag). */
  lost: string[];
}

/** One payoff (test asset of a conditioned panel): the test asset and the instrument scaling it. */
export interface ScaledPart {
  /** The test asset (or factor) name. */
  base: string;
  /** The instrument's name, "const" for the constant. */
  instrument: string;
  /** Index into `instruments.series`, -1 for the constant. */
  z: number;
}

export interface Conditioning {
  scale: 'returns' | 'factors' | 'both';
  lag: number;
  /** "const" first, then the series. */
  instruments: string[];
  /** Per test asset of the conditioned panel (instrument-major). */
  payoffs: ScaledPart[];
  /** Per factor of the conditioned panel (instrument-major). */
  factorParts: ScaledPart[];
  /** The unscaled test assets and factors. */
  baseAssets: string[];
  baseFactors: string[];
  /** Periods lost to the lag (labels). */
  lost: string[];
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
  /** Periods in the sample (with instruments: periods whose lagged instruments exist, METHODS 9). */
  T: number;
  N: number;
  K: number;
  lags: number;
}

/**
 * The panel with every period-indexed series (returns, factors, risk-free, consumption
 * growth, price ratios, instruments) passed through `pick`: a window's slice, the periods models share,
 * a bootstrap resample. `periods` are the new labels. The one place that knows which
 * series a panel holds, so a new one is added here once.
 */
export function mapPanelPeriods(panel: ReturnsPanel, periods: string[], pick: (s: Float64Array) => Float64Array, sampleNotes: SampleNote[] = panel.sampleNotes): ReturnsPanel {
  const out: ReturnsPanel = {
    frequency: panel.frequency,
    periods,
    assets: panel.assets,
    returnKind: panel.returnKind,
    returns: panel.returns.map(pick),
    factors: panel.factors.map((f) => ({ name: f.name, values: pick(f.values) })),
    sampleNotes,
  };
  if (panel.riskfreeGross) out.riskfreeGross = pick(panel.riskfreeGross);
  if (panel.consumptionGrowth) out.consumptionGrowth = pick(panel.consumptionGrowth);
  if (panel.priceRatios) out.priceRatios = panel.priceRatios.map((r) => (r ? pick(r) : null));
  if (panel.instruments) out.instruments = { ...panel.instruments, series: panel.instruments.series.map((z) => ({ name: z.name, values: pick(z.values) })) };
  if (panel.conditioning) out.conditioning = panel.conditioning;
  return out;
}

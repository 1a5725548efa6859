/**
 * Units and the one annualising rule (docs/methods.md, "Units and annualising").
 * A mean per period (a pricing error, its standard error, a mean or predicted return,
 * MAPE and RMSE across assets of such means) is annualised by multiplying by the
 * periods per year. Nothing else is annualised: dispersions of single-period errors
 * (the pooled out-of-sample RMSE), standard deviations (sigma(m)), Sharpe ratios,
 * R^2, test statistics and gross returns are shown per period or as they are.
 */
import type { Frequency } from '../data.js';

const PERIOD_WORD: Record<string, string> = { daily: 'day', weekly: 'week', monthly: 'month', quarterly: 'quarter', annual: 'year' };

/** "month" for monthly data, ... */
export function periodWord(frequency: Frequency | string): string {
  return PERIOD_WORD[frequency] ?? 'period';
}

export interface Units {
  /** Percent per period: "% per month". */
  pctPeriod: string;
  /** Percent per year (annualised mean): "% per year". */
  pctYear: string;
  /** A gross return per period, as a number: "gross return per month". */
  grossPeriod: string;
  /** Plain per period: "per month". */
  perPeriod: string;
  periodsPerYear: number;
  word: string;
}

export function unitsFor(frequency: Frequency | string, periodsPerYear: number): Units {
  const word = periodWord(frequency);
  return { pctPeriod: `% per ${word}`, pctYear: '% per year', grossPeriod: `gross return per ${word}`, perPeriod: `per ${word}`, periodsPerYear, word };
}

/** The annualising rule for a mean per period (x periods per year), in percent. */
export function annualPercent(meanPerPeriod: number, periodsPerYear: number): number {
  return 100 * (meanPerPeriod * periodsPerYear);
}

/** A per-period decimal in percent. */
export function percent(x: number): number {
  return 100 * x;
}

export const ANNUALISING_NOTE = 'Annualised figures are means per period x periods per year; dispersions of single-period errors, standard deviations and ratios are not annualised.';

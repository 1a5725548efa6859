/**
 * The returns engine (METHODS section 1): prices and dividends -> gross, net, log,
 * excess returns and the total-return index; aggregation to weekly, monthly, quarterly
 * and annual periods; risk-free, factor and consumption series on the same periods;
 * the balanced panel every estimator takes. docs/methods.md ("Returns") has the rules.
 */
import type { Frequency, NamedSeries } from '../data.js';
import { periodCalendar, parseAscending } from './periods.js';
import { riskfreePeriods, sortedKeys, type DayCount } from './series.js';

export { returnsTable, RETURN_KINDS, type ReturnKind, type ReturnsTable, type ReturnsTableOptions } from './table.js';
export { buildPanel, type BuildPanelInput, type PanelSpec } from './panel.js';
export { yearlyValues, type YearlyValues, type YearlyOptions } from './yearly.js';
export { periodKey, storedFrequency, parseDate, type CalendarDate } from './periods.js';
export { yieldToGross, type DayCount, type YieldConvention } from './series.js';

/**
 * Per-period gross risk-free returns R^f_t of one series at a frequency, on the
 * series' own calendar: `periods` are the last observation date in each period (align
 * with other tables by periodKey(label, frequency)). The first period of an account
 * level or a yield, and of any series compounded from a higher frequency, has no value.
 */
export function riskfreeGross(series: NamedSeries, frequency: Frequency, opts?: { dayCount?: DayCount }): { periods: string[]; gross: Float64Array } {
  const cal =
    frequency === 'daily' ? periodCalendar('daily', parseAscending(series.dates, `series "${series.name}"`).map((d) => d.day)) : periodCalendar(frequency);
  const rf = riskfreePeriods(series, cal, opts?.dayCount ?? 'periods');
  const keys = sortedKeys(rf.values);
  return {
    periods: keys.map((k) => rf.lastDate.get(k) as string),
    gross: Float64Array.from(keys.map((k) => rf.values.get(k) as number)),
  };
}

/**
 * The present-value analysis of a spec: the yearly values of one asset or an aggregate
 * (shared/returns/yearly.ts), then the dividend-price decomposition (dividendPrice.ts).
 */
import type { PriceHistory } from '../data.js';
import { DeflatorError } from '../errors.js';
import type { PresentValueResult, ResultWarning } from '../results.js';
import { yearlyValues, type YearlyValues } from '../returns/yearly.js';
import type { PresentValueSpec } from '../spec.js';
import { dividendPriceDecomposition } from './dividendPrice.js';
import { assertAllFinite } from '../estimation/finiteGuard.js';

const year = (s: string | undefined): number | undefined => (s === undefined ? undefined : Number(s.slice(0, 4)));

/** The histories a present-value spec reads, in the order given (all histories for "assets": "all"). */
export function presentValueHistories(spec: PresentValueSpec, histories: readonly PriceHistory[]): PriceHistory[] {
  const pick = (name: string): PriceHistory => {
    const h = histories.find((x) => x.asset === name);
    if (!h) {
      const known = histories.map((x) => x.asset);
      throw new DeflatorError('NOT_FOUND', `asset "${name}" is not in the store (stored: ${known.slice(0, 12).join(', ')}${known.length > 12 ? ', ...' : ''})`, 'check the name with `deflator info --db DB`');
    }
    return h;
  };
  if (spec.asset !== undefined) return [pick(spec.asset)];
  return spec.assets === 'all' ? [...histories] : spec.assets.map(pick);
}

/** The yearly values of a spec (what the run's fingerprint covers). */
export function presentValueInputs(spec: PresentValueSpec, histories: readonly PriceHistory[]): YearlyValues {
  const chosen = presentValueHistories(spec, histories);
  if (chosen.length === 0) throw new DeflatorError('DATA_MISSING', 'no price histories are stored', 'import price histories first');
  return yearlyValues(chosen, { aggregate: spec.aggregate, fromYear: year(spec.start), toYear: year(spec.end) });
}

/** The decomposition of a spec on the given histories (METHODS 10). */
export function presentValue(spec: PresentValueSpec, histories: readonly PriceHistory[]): PresentValueResult {
  const names = presentValueHistories(spec, histories).map((h) => h.asset);
  return presentValueOf(spec, names, presentValueInputs(spec, histories));
}

/** The decomposition of a spec on yearly values already built from the assets `names` (what a worker receives). */
export function presentValueOf(spec: PresentValueSpec, names: readonly string[], v: YearlyValues): PresentValueResult {
  const subject = spec.aggregate ? `the aggregate of ${names.length} assets` : `asset "${names[0]}"`;
  const core = dividendPriceDecomposition(v, { lags: spec.lags, subject });
  const warnings: ResultWarning[] = [];
  const notes = [...core.notes];
  if (spec.aggregate) {
    if (v.weighting === 'equal') {
      warnings.push({
        code: 'EQUAL_SHARES',
        message: `no shares outstanding for ${v.withoutShares.slice(0, 6).join(', ')}${v.withoutShares.length > 6 ? ` and ${v.withoutShares.length - 6} more` : ''} on some year-end or dividend row: the aggregate holds one current share of each asset instead of market values`,
      });
    } else notes.unshift('Aggregate: P = sum of market values P_i S_i at the year-end closes, D = sum of dividends times the shares outstanding on their rows.');
    if (v.limitedBy.first.length) notes.push(`The first year ${v.years[0]} is the first whole year of ${v.limitedBy.first.slice(0, 6).join(', ')}${v.limitedBy.first.length > 6 ? ' and others' : ''}.`);
    if (v.limitedBy.last.length) notes.push(`The last year ${v.years[v.years.length - 1]} is the last whole year of ${v.limitedBy.last.slice(0, 6).join(', ')}${v.limitedBy.last.length > 6 ? ' and others' : ''}.`);
  } else notes.unshift('One asset: prices and dividends per current share (split-adjusted).');
  const result: PresentValueResult = {
    kind: 'present-value',
    label: spec.label ?? (spec.aggregate ? `dividend-price: aggregate of ${names.length}` : `dividend-price: ${names[0]}`),
    ...(spec.aggregate ? { assets: [...names] } : { asset: names[0] }),
    weighting: v.weighting,
    frequency: 'annual',
    ...core,
    warnings: [...warnings, ...core.warnings],
    notes,
  };
  assertAllFinite(result);
  return result;
}

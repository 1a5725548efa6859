/**
 * A returns table for display and export: every asset on the union of periods, null
 * where an asset has no value, with the common sample described beside it.
 */
import { isReturnHistory, type Frequency, type NamedSeries, type StoredAsset } from '../data.js';
import { DeflatorError } from '../errors.js';
import { dayNumbers, parseDate, periodCalendar, type PeriodCalendar } from './periods.js';
import { PeriodMap } from './periodMap.js';
import type { AssetPeriods } from './prices.js';
import { riskfreePeriods, type DayCount, type PeriodSeries } from './series.js';
import { assetPeriods, observedDates } from './stored-returns.js';
import { commonWindow } from './window.js';

export type ReturnKind = 'gross' | 'net' | 'log' | 'excess' | 'index';
export const RETURN_KINDS: readonly ReturnKind[] = ['gross', 'net', 'log', 'excess', 'index'];

export interface ReturnsTable {
  frequency: Frequency;
  kind: ReturnKind;
  /** Period-end labels (ISO dates): the last trading date seen in each period across the histories. */
  periods: string[];
  /** One value per period, null where missing. */
  series: Record<string, (number | null)[]>;
  sample: {
    first: string | null;
    last: string | null;
    T: number;
    dropped: { asset: string; reason: string }[];
    flags: { asset: string; period: string; note: string }[];
  };
}

export interface ReturnsTableOptions {
  frequency: Frequency;
  kind: ReturnKind;
  riskfree?: NamedSeries;
  dayCount?: DayCount;
}

/** The trading-day calendar of a set of histories (used for daily periods). */
export function tradingCalendar(frequency: Frequency, dateLists: readonly (readonly string[])[]): PeriodCalendar {
  if (frequency !== 'daily') return periodCalendar(frequency);
  const days: number[] = [];
  for (const list of dateLists) dayNumbers(list, () => 'date', days);
  return periodCalendar('daily', days);
}

/** Period index -> label: the latest date seen in that period across the given period maps. */
export function periodLabels(lastDates: readonly Map<number, string>[]): Map<number, string> {
  const labels = new PeriodMap<string>();
  const runs: PeriodMap<string>[] = [];
  for (const m of lastDates) {
    // the same run of the same dates as a map already read (a daily panel's assets on one
    // shared list of trading dates) adds nothing
    if (m instanceof PeriodMap && m.isRun()) {
      if (runs.some((r) => r.sameRun(m))) continue;
      runs.push(m);
    }
    m.forEach((d, k) => {
      const cur = labels.get(k);
      if (cur === undefined || d > cur) labels.set(k, d);
    });
  }
  return labels;
}

/** Label map of an asset's closes. */
export function assetLastDates(a: AssetPeriods): Map<number, string> {
  return a.lastDate;
}

function checkNames(histories: readonly StoredAsset[]): void {
  const seen = new Set<string>();
  for (const h of histories) {
    if (seen.has(h.asset)) throw new DeflatorError('INPUT_INVALID', `price history "${h.asset}" is given twice`, 'pass each asset once');
    seen.add(h.asset);
  }
}

function transform(kind: ReturnKind, gross: number, rf: number | undefined): number | undefined {
  switch (kind) {
    case 'gross':
      return gross;
    case 'net':
      return gross - 1;
    case 'log':
      return Math.log(gross);
    case 'excess':
      return rf === undefined ? undefined : gross - rf;
    case 'index':
      return gross;
  }
}

/**
 * Returns of every history at one frequency and kind (METHODS sections 1 and 8): gross
 * R_t, net R_t - 1, log ln R_t, excess R_t - R^f_t (needs `riskfree`, except for assets
 * stored as excess returns at their own frequency, taken as stored), or the total-return
 * index V (1 at the asset's first period close, or at the period before a return
 * history's first return; V_t = V_{t-1} R_t). Assets stored as excess returns need
 * `riskfree` for every other kind (R = R^e + R^f); without it they are listed as dropped.
 */
export function returnsTable(histories: StoredAsset[], opts: ReturnsTableOptions): ReturnsTable {
  const { frequency, kind } = opts;
  if (histories.length === 0) throw new DeflatorError('INPUT_INVALID', 'no asset histories were given', 'import prices or returns first, or name at least one asset');
  checkNames(histories);
  const cal = tradingCalendar(frequency, histories.map(observedDates));
  const dayCount = opts.dayCount ?? 'periods';
  const assets = histories.map((h) => assetPeriods(h, cal, { ...(opts.riskfree ? { riskfree: opts.riskfree } : {}), dayCount }));
  if (kind === 'excess' && !opts.riskfree) {
    const need = histories.filter((h, i) => !(isReturnHistory(h) && h.excess && assets[i].excess && assets[i].excess.size > 0)).map((h) => h.asset);
    if (need.length) {
      throw new DeflatorError(
        'DATA_MISSING',
        `excess returns need a risk-free series, and none was given (for ${need.slice(0, 10).join(', ')}${need.length > 10 ? `, ... ${need.length} in all` : ''})`,
        'name a risk-free series (kind "riskfree"), or ask for gross, net, log or index returns',
      );
    }
  }
  const labels = periodLabels(assets.map(assetLastDates));
  let rf: PeriodSeries | undefined;
  if (kind === 'excess' && opts.riskfree) rf = riskfreePeriods(opts.riskfree, cal, dayCount);

  const values = new Map<string, Map<number, number>>();
  const flags: ReturnsTable['sample']['flags'] = [];
  const unusable: { asset: string; reason: string }[] = [];
  for (const a of assets) {
    const m = new Map<number, number>();
    const excessOnly = a.excess !== undefined && !opts.riskfree && kind !== 'excess';
    if (excessOnly) {
      // stored as excess returns and no risk-free series: no total return to show
    } else if (kind === 'index') {
      // V relative to the asset's first period close, so the index starts at 1.
      let base: number | undefined;
      for (const k of [...a.close.keys()].sort((x, y) => x - y)) {
        const v = a.close.get(k) as number;
        base ??= v;
        m.set(k, v / base);
      }
    } else if (kind === 'excess' && a.excess) {
      // stored as excess returns: taken as they are
      for (const [k, x] of a.excess) m.set(k, x);
    } else {
      for (const [k, g] of a.gross) {
        const x = transform(kind, g, rf?.values.get(k));
        if (x !== undefined) m.set(k, x);
      }
    }
    if (excessOnly) unusable.push({ asset: a.asset, reason: `holds excess returns: ${kind === 'index' ? 'the index' : `${kind} returns`} need R = R^e + R^f, so name a risk-free series` });
    else if (a.unusable && (kind !== 'index' || a.close.size === 0) && !(kind === 'excess' && a.excess && a.excess.size > 0)) unusable.push({ asset: a.asset, reason: a.unusable });
    values.set(a.asset, m);
    if (kind === 'index' && a.missing && !excessOnly) {
      for (const k of new Set(a.missing)) flags.push({ asset: a.asset, period: labels.get(k) ?? cal.keyOf(k), note: 'no return (a missing value): the index leaves this period out and carries its level over the gap' });
    }
    if (a.cutShort) {
      flags.push({
        asset: a.asset,
        period: labels.get(a.cutShort.index) ?? cal.keyOf(a.cutShort.index),
        note: `last ${frequency} period cut short by the end of the data: ${a.cutShort.from ? `from ${a.cutShort.from} ` : ''}to ${a.cutShort.to}`,
      });
    }
  }
  if (rf?.cutShort) {
    flags.push({ asset: rf.name, period: labels.get(rf.cutShort.index) ?? cal.keyOf(rf.cutShort.index), note: `risk-free: last ${frequency} period cut short, compounded to ${rf.cutShort.to}` });
  }

  const idx = new Set<number>();
  for (const m of values.values()) for (const k of m.keys()) idx.add(k);
  const order = [...idx].sort((a, b) => a - b);
  const describe = (k: number): string => labels.get(k) ?? cal.keyOf(k);

  const series: Record<string, (number | null)[]> = {};
  for (const a of assets) {
    const m = values.get(a.asset) as Map<number, number>;
    series[a.asset] = order.map((k) => {
      const v = m.get(k);
      if (v === undefined) return null;
      if (!Number.isFinite(v)) throw new DeflatorError('INPUT_INVALID', `asset "${a.asset}", period ${describe(k)}: the ${kind} return is not finite`, 'check the prices and dividends of that period');
      return v;
    });
  }
  if (rf) {
    for (const k of order) {
      if (!rf.values.has(k) && assets.some((a) => a.gross.has(k))) flags.push({ asset: rf.name, period: describe(k), note: 'no risk-free return for this period, so no excess returns' });
    }
  }

  const windowAssets = assets.filter((a) => !unusable.some((u) => u.asset === a.asset)).map((a) => ({ name: a.asset, values: values.get(a.asset) as Map<number, number> }));
  const w = commonWindow(windowAssets, [], {}, describe);
  const T = w.kept.length > 0 ? w.hi - w.lo + 1 : 0;
  return {
    frequency,
    kind,
    periods: order.map(describe),
    series,
    sample: {
      first: T > 0 ? describe(w.lo) : null,
      last: T > 0 ? describe(w.hi) : null,
      T,
      dropped: [...unusable, ...w.dropped],
      flags,
    },
  };
}

/**
 * Plausibility checks that warn but do not stop an import: gaps longer than the data's
 * frequency, prices unchanged for many periods, one-period returns beyond a threshold,
 * dividends large relative to the price. Each asset's rows pass through a checker in
 * date order, keeping only a few numbers per asset (memory does not grow with the file).
 */
import type { Frequency } from '../../shared/data.js';
import { DeflatorError } from '../../shared/errors.js';
import type { ImportWarning } from '../store/store.js';
import { GAP_DAYS, frequencyFromSpacing, histogramMedian } from '../data/calendar.js';

export interface CheckThresholds {
  /** Warn when |R_t - 1| exceeds this (decimal; default 0.5 = 50%). */
  maxReturn: number;
  /** Warn when D_t / P_t exceeds this (decimal; default 0.25 = 25%). */
  maxDividendYield: number;
  /** Warn when the price stays the same for at least this many consecutive periods (default 6). */
  stalePeriods: number;
}

export const DEFAULT_THRESHOLDS: CheckThresholds = { maxReturn: 0.5, maxDividendYield: 0.25, stalePeriods: 6 };

/** Collects warnings up to a cap; counts the rest. */
export class WarningSink {
  readonly list: ImportWarning[] = [];
  omitted = 0;
  constructor(readonly cap = 500) {}
  add(w: ImportWarning): void {
    if (this.list.length < this.cap) this.list.push(w);
    else this.omitted++;
  }
  /** The stored list: the first `cap` warnings, then one line counting the rest. */
  final(): ImportWarning[] {
    return this.omitted ? [...this.list, { kind: 'more', subject: '', message: `${this.omitted} more warnings not listed` }] : this.list;
  }
  get total(): number {
    return this.list.length + this.omitted;
  }
}

const KEEP_GAPS = 10;
const pct = (x: number) => `${(x * 100).toFixed(1)}%`;

/** One asset's (or series') rows in date order. */
export class HistoryChecker {
  /** Set when a row arrived with an earlier date: checks must re-read the stored rows. */
  unordered = false;
  rows = 0;
  /** Counts of spacings in days: below 64 in an array, longer ones in a map. */
  private readonly spacingSmall = new Float64Array(64);
  private readonly spacingLarge = new Map<number, number>();
  private readonly largest: { days: number; from: string; to: string }[] = [];
  private lastDay = NaN;
  private lastDate = '';
  private lastPrice = NaN;
  private staleRun = 0;
  private staleFrom = '';

  constructor(
    readonly subject: string,
    private readonly thresholds: CheckThresholds | null,
    private readonly sink: WarningSink,
  ) {}

  /** (spacing in days, count) pairs. */
  *spacing(): Generator<[number, number]> {
    for (let d = 0; d < 64; d++) if (this.spacingSmall[d] > 0) yield [d, this.spacingSmall[d]];
    yield* this.spacingLarge;
  }

  /**
   * Price rows: the return and dividend checks run here; `adjust` is the split factor on
   * that date, `origin` the file line when the row comes from the file being imported.
   * A gross return that is not a finite positive number (prices so far apart that their
   * ratio leaves the range of a double, 1e-300 then 1e300) is an error naming the row:
   * stored, it would make every fit on that asset fail later.
   */
  push(date: string, day: number, price: number, dividend: number, adjust: number, origin?: { file: string; line: number }): void {
    if (this.unordered) return;
    if (this.rows > 0 && day <= this.lastDay) {
      this.unordered = true;
      return;
    }
    this.rows++;
    const t = this.thresholds;
    if (this.rows > 1) {
      this.space(day, date);
      const gross = (price + dividend) / (this.lastPrice / adjust);
      if (!(Number.isFinite(gross) && gross > 0)) {
        throw new DeflatorError(
          'INPUT_INVALID',
          `${origin ? `${origin.file}, line ${origin.line}: ` : ''}${this.subject}: the return from ${this.lastDate} to ${date} (price ${this.lastPrice}, then ${price}${dividend ? ` with dividend ${dividend}` : ''}${adjust !== 1 ? `, split factor ${adjust}` : ''}) is ${gross}, beyond the range of a double`,
          'check the prices: their units or scale changed, or a value is misplaced by many powers of ten',
        );
      }
      if (t) {
        const r = gross - 1;
        if (Math.abs(r) > t.maxReturn) {
          this.sink.add({ kind: 'large-return', subject: this.subject, from: this.lastDate, to: date, message: `${this.subject}: return ${pct(r)} from ${this.lastDate} to ${date} (beyond ${pct(t.maxReturn)}; a missing split factor?)` });
        }
        if (price === this.lastPrice && adjust === 1) {
          if (this.staleRun === 0) this.staleFrom = this.lastDate;
          this.staleRun++;
        } else this.endStale();
      }
    }
    if (t && dividend > t.maxDividendYield * price) {
      this.sink.add({ kind: 'large-dividend', subject: this.subject, from: date, to: date, message: `${this.subject}: dividend ${dividend} on ${date} is ${pct(dividend / price)} of the price ${price} (beyond ${pct(t.maxDividendYield)})` });
    }
    this.lastDay = day;
    this.lastDate = date;
    this.lastPrice = price;
  }

  /** Series rows: only the calendar (gap) check. */
  pushDate(date: string, day: number): void {
    if (this.unordered) return;
    if (this.rows > 0 && day <= this.lastDay) {
      this.unordered = true;
      return;
    }
    this.rows++;
    if (this.rows > 1) this.space(day, date);
    this.lastDay = day;
    this.lastDate = date;
  }

  private space(day: number, date: string): void {
    const s = day - this.lastDay;
    if (s < 64) this.spacingSmall[s]++;
    else this.spacingLarge.set(s, (this.spacingLarge.get(s) ?? 0) + 1);
    const big = this.largest;
    if (big.length < KEEP_GAPS || s > big[big.length - 1].days) {
      let k = big.length;
      while (k > 0 && big[k - 1].days < s) k--;
      big.splice(k, 0, { days: s, from: this.lastDate, to: date });
      if (big.length > KEEP_GAPS) big.pop();
    }
  }

  private endStale(): void {
    const t = this.thresholds;
    if (t && this.staleRun >= t.stalePeriods) {
      this.sink.add({ kind: 'stale-price', subject: this.subject, from: this.staleFrom, to: this.lastDate, message: `${this.subject}: price unchanged at ${this.lastPrice} for ${this.staleRun} periods, ${this.staleFrom} to ${this.lastDate}` });
    }
    this.staleRun = 0;
  }

  /** Ends the rows; reports gaps against the frequency of the whole file. */
  finish(frequency: Frequency | null): void {
    this.endStale();
    if (!frequency) return;
    const limit = GAP_DAYS[frequency];
    let count = 0;
    for (const [days, n] of this.spacing()) if (days > limit) count += n;
    if (count === 0) return;
    const listed = this.largest.filter((g) => g.days > limit).sort((a, b) => (a.from < b.from ? -1 : 1));
    for (const g of listed) {
      this.sink.add({ kind: 'gap', subject: this.subject, from: g.from, to: g.to, message: `${this.subject}: no observation between ${g.from} and ${g.to} (${g.days} days; the data are ${frequency})` });
    }
    if (count > listed.length) {
      this.sink.add({ kind: 'gap', subject: this.subject, message: `${this.subject}: ${count - listed.length} further gaps longer than ${limit} days (the ${listed.length} longest are listed)` });
    }
  }
}

/** The data's frequency from the median spacing over all checkers' rows. */
export function detectFrequency(checkers: Iterable<HistoryChecker>): Frequency | null {
  const all = new Map<number, number>();
  for (const c of checkers) for (const [days, n] of c.spacing()) all.set(days, (all.get(days) ?? 0) + n);
  return all.size ? frequencyFromSpacing(histogramMedian(all)) : null;
}

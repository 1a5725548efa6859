/**
 * The estimation input: a balanced panel of test-asset returns with the factor,
 * risk-free and consumption series on the same periods (shared/panel.ts).
 *
 * Test assets are price histories (returns from prices and dividends) or ready-made
 * return series (built portfolios) at the spec's frequency. The window is the spec's
 * start..end (inclusive, compared with the period labels) or, where a side is not
 * given, the common sample of the assets on that side; it never reaches outside the
 * span of the required series. Assets with a missing period inside the window are
 * dropped and noted. docs/methods.md ("Returns") states the rules.
 */
import { isReturnHistory, type Frequency, type NamedSeries, type ReturnSeries, type SeriesKind, type StoredAsset } from '../data.js';
import { DeflatorError } from '../errors.js';
import type { ReturnsPanel, SampleNote } from '../panel.js';
import type { FitSpec } from '../spec.js';
import { dayNumbers, frequencyRank, parseAscending, periodCalendar, parseDate, type PeriodCalendar } from './periods.js';
import { consumptionPeriods, factorPeriods, instrumentPeriods, riskfreePeriods, type PeriodSeries } from './series.js';
import { assetPeriods, observedDates } from './stored-returns.js';
import { assetLastDates, periodLabels } from './table.js';
import { PeriodMap } from './periodMap.js';
import { commonWindow } from './window.js';

/** The keys of a spec that fix a panel's data (a fit spec has them all). */
export type PanelSpec = Pick<FitSpec, 'frequency' | 'start' | 'end' | 'assets' | 'returns' | 'riskfree' | 'includeRiskfree' | 'dayCount' | 'instruments'> & {
  model: Pick<FitSpec['model'], 'factors' | 'consumption'>;
};

export interface BuildPanelInput {
  /** Price histories and assets stored as returns. */
  histories: StoredAsset[];
  series: NamedSeries[];
  portfolios?: ReturnSeries[];
  spec: PanelSpec;
  /** Also return each asset's price ratios P*_t / P*_{t-1} (null for assets stored as returns). */
  priceRatios?: boolean;
}

interface TestAsset {
  name: string;
  gross: Map<number, number>;
  /** Price ratios without dividends (price histories only). */
  priceGross?: Map<number, number>;
  /** Stored as excess returns at this frequency: R^e per period, taken as they are in an excess-return panel. */
  excess?: Map<number, number>;
  /** The asset's history holds excess returns (METHODS 8). */
  storedExcess?: boolean;
  /** What the asset contributes to this spec's panel (set once the spec's return kind is known). */
  values?: Map<number, number>;
  /** values are total returns from which R^f is subtracted. */
  subtractRf?: boolean;
  lastDates: Map<number, string>;
  cutShort?: { index: number; note: string };
  unusable?: string;
}

function listNames(names: string[]): string {
  if (names.length === 0) return '(none)';
  const shown = names.slice(0, 30).join(', ');
  return names.length > 30 ? `${shown}, ... (${names.length} in all)` : shown;
}

function findSeries(series: readonly NamedSeries[], name: string, kinds: readonly SeriesKind[], role: string, key: string): NamedSeries {
  const hit = series.find((s) => s.name === name && kinds.includes(s.kind));
  if (hit) return hit;
  const available = series.filter((s) => kinds.includes(s.kind)).map((s) => s.name);
  const other = series.find((s) => s.name === name);
  throw new DeflatorError(
    'DATA_MISSING',
    `${role} series "${name}" (${key}) not found${other ? ` (a series of that name exists, but of kind "${other.kind}")` : ''}; available ${kinds.join('/')} series: ${listNames(available)}`,
    `import the series, or correct ${key} to one of the names listed`,
  );
}

function portfolioAsset(p: ReturnSeries, cal: PeriodCalendar, frequency: Frequency): TestAsset {
  if (p.frequency !== frequency) {
    throw new DeflatorError('INPUT_INVALID', `portfolio "${p.name}" holds ${p.frequency} returns, but the spec asks for ${frequency}`, `rebuild the portfolio at ${frequency} frequency, or set "frequency":"${p.frequency}"`);
  }
  if (p.net.length !== p.periods.length) {
    throw new DeflatorError('INPUT_INVALID', `portfolio "${p.name}": ${p.periods.length} periods but ${p.net.length} returns`, 'rebuild the portfolio');
  }
  const dates = parseAscending(p.periods, `portfolio "${p.name}"`);
  const gross = new Map<number, number>();
  const lastDates = new Map<number, string>();
  for (let i = 0; i < dates.length; i++) {
    const k = cal.indexOf(dates[i]);
    if (k === null) continue;
    if (lastDates.has(k)) {
      throw new DeflatorError('INPUT_INVALID', `portfolio "${p.name}": ${lastDates.get(k)} and ${p.periods[i]} fall in the same ${frequency} period`, 'rebuild the portfolio at this frequency');
    }
    lastDates.set(k, p.periods[i]);
    const r = p.net[i];
    if (Number.isNaN(r)) continue;
    if (!Number.isFinite(r) || r <= -1) throw new DeflatorError('INPUT_INVALID', `portfolio "${p.name}", ${p.periods[i]}: net return ${r} is not above -1`, 'rebuild the portfolio');
    gross.set(k, 1 + r);
  }
  return { name: p.name, gross, lastDates, ...(gross.size === 0 ? { unusable: 'no returns' } : {}) };
}

// The loops over every value of a panel are functions of their own, so that the engine
// compiles them on their first long run; inside the long buildPanel, run once per panel,
// each value read would be boxed as a new heap number (a daily panel: a million of them).

/** Are all values finite? */
function allFinite(xs: Float64Array): boolean {
  for (let t = 0; t < xs.length; t++) if (!Number.isFinite(xs[t])) return false;
  return true;
}

/** g -= rf in place; are all the differences finite? */
function subtractFinite(g: Float64Array, rf: Float64Array): boolean {
  let ok = true;
  for (let t = 0; t < g.length; t++) {
    const x = g[t] - rf[t];
    g[t] = x;
    // x - x is 0 for a finite x, NaN for an infinite one or NaN
    ok = ok && x - x === 0;
  }
  return ok;
}

/** Builds the balanced panel a fit, back-test, comparison or drift split estimates on. */
export function buildPanel(input: BuildPanelInput): ReturnsPanel {
  const { spec } = input;
  const frequency = spec.frequency;
  const portfolios = input.portfolios ?? [];

  // Which test assets.
  let chosenH: StoredAsset[];
  let chosenP: ReturnSeries[];
  if (spec.assets === 'all') {
    chosenH = input.histories;
    chosenP = [];
    if (chosenH.length === 0) throw new DeflatorError('DATA_MISSING', 'spec.assets is "all", but there are no stored assets', 'import prices or returns, or list portfolio names in spec.assets');
  } else {
    chosenH = [];
    chosenP = [];
    const seen = new Set<string>();
    for (const name of spec.assets) {
      if (seen.has(name)) throw new DeflatorError('SPEC_INVALID', `spec.assets names "${name}" twice`, 'list each test asset once');
      seen.add(name);
      const h = input.histories.find((x) => x.asset === name);
      const p = portfolios.find((x) => x.name === name);
      if (h && p) throw new DeflatorError('CONFLICT', `spec.assets: "${name}" names both a stored asset and a portfolio`, 'rename the portfolio so that each test asset name is unique');
      if (h) chosenH.push(h);
      else if (p) chosenP.push(p);
      else {
        throw new DeflatorError(
          'DATA_MISSING',
          `test asset "${name}" (spec.assets) not found; available assets: ${listNames(input.histories.map((x) => x.asset))}; portfolios: ${listNames(portfolios.map((x) => x.name))}`,
          'import it, or correct spec.assets to names listed',
        );
      }
    }
  }
  const dupe = chosenH.find((h, i) => chosenH.findIndex((x) => x.asset === h.asset) !== i);
  if (dupe) throw new DeflatorError('INPUT_INVALID', `asset "${dupe.asset}" is given twice`, 'pass each asset once');

  // Periods.
  let cal: PeriodCalendar;
  if (frequency === 'daily') {
    const days: number[] = [];
    const seen = new Set<readonly string[]>(); // histories on the same (shared) list of dates add it once
    for (const h of chosenH) {
      const list = observedDates(h);
      if (seen.has(list)) continue;
      seen.add(list);
      dayNumbers(list, () => `${isReturnHistory(h) ? 'return' : 'price'} history "${h.asset}"`, days);
    }
    for (const p of chosenP) dayNumbers(p.periods, () => `portfolio "${p.name}"`, days);
    cal = periodCalendar('daily', days);
  } else cal = periodCalendar(frequency);

  const rfSeries = spec.riskfree ? findSeries(input.series, spec.riskfree, ['riskfree'], 'risk-free', 'spec.riskfree') : undefined;
  const built = new Map<string, TestAsset>();
  for (const h of chosenH) {
    const a = assetPeriods(h, cal, { ...(rfSeries ? { riskfree: rfSeries } : {}), dayCount: spec.dayCount ?? 'periods' });
    built.set(h.asset, {
      name: h.asset,
      gross: a.gross,
      ...(a.priceGross ? { priceGross: a.priceGross } : {}),
      ...(a.excess ? { excess: a.excess } : {}),
      ...(isReturnHistory(h) && h.excess ? { storedExcess: true } : {}),
      lastDates: assetLastDates(a),
      ...(a.unusable ? { unusable: a.unusable } : {}),
      ...(a.cutShort ? { cutShort: { index: a.cutShort.index, note: `last ${frequency} period cut short by the end of the data: ${a.cutShort.from ? `from ${a.cutShort.from} ` : ''}to ${a.cutShort.to}` } } : {}),
    });
  }
  for (const p of chosenP) built.set(p.name, portfolioAsset(p, cal, frequency));
  // In the order the spec lists them (histories in store order for "all").
  const listed = spec.assets === 'all' ? chosenH.map((h) => h.asset) : spec.assets;
  const assets = listed.map((name) => built.get(name) as TestAsset);
  const labels = periodLabels(assets.map((a) => a.lastDates));
  const describe = (k: number): string => labels.get(k) ?? cal.keyOf(k);

  // What each asset contributes (METHODS 8): an asset stored as excess returns gives them as
  // they are to an excess-return panel; every other asset gives R - R^f; a gross-return
  // panel takes R, which for stored excess returns is R^e + R^f.
  const excessPanel = spec.returns === 'excess';
  for (const a of assets) {
    a.values = excessPanel && a.excess ? a.excess : a.gross;
    a.subtractRf = excessPanel && !a.excess;
  }
  if (!rfSeries) {
    const names = (xs: TestAsset[]) => listNames(xs.map((a) => `"${a.name}"`));
    if (excessPanel) {
      const need = assets.filter((a) => !a.excess);
      if (need.length) {
        throw new DeflatorError(
          'SPEC_INVALID',
          `spec.riskfree: excess returns of ${names(need)} need a risk-free series, and the spec names none${need.some((a) => a.storedExcess) ? ` (${need.filter((a) => a.storedExcess).map((a) => `${a.name}: ${a.unusable ?? 'stored as excess returns'}`).join('; ')})` : ''}`,
          'set "riskfree" to the name of a risk-free series (only assets stored as excess returns at the spec\'s frequency need none)',
        );
      }
    } else {
      const need = assets.filter((a) => a.storedExcess);
      if (need.length) {
        throw new DeflatorError(
          'SPEC_INVALID',
          `spec.riskfree: test asset(s) ${names(need)} hold excess returns; a gross-return spec uses R = R^e + R^f, and the spec names no risk-free series`,
          'set "riskfree" to the name of a risk-free series, or fit on excess returns ("returns":"excess")',
        );
      }
    }
  }

  // Series the spec needs.
  const notes: SampleNote[] = [];
  const required: { role: string; series: PeriodSeries }[] = [];
  const noValues = (s: PeriodSeries, role: string): DeflatorError =>
    new DeflatorError('DATA_MISSING', `${role} series "${s.name}" has no value at ${frequency} frequency`, `check its dates, or choose a frequency the series supports`);
  let rf: PeriodSeries | undefined;
  if (rfSeries) {
    const s = rfSeries;
    rf = riskfreePeriods(s, cal, spec.dayCount ?? 'periods');
    if (rf.values.size === 0) throw noValues(rf, 'risk-free');
    if (s.rfForm === undefined) notes.push({ subject: s.name, reason: 'the series does not say how it is quoted; read as a per-period rate, R^f_t = 1 + rf_t' });
    required.push({ role: 'risk-free', series: rf });
  }
  const factors: PeriodSeries[] = [];
  for (const name of spec.model.factors) {
    const s = findSeries(input.series, name, ['factor', 'other'], 'factor', 'spec.model.factors');
    const f = factorPeriods(s, cal);
    if (f.values.size === 0) throw noValues(f, 'factor');
    if (frequencyRank(f.stored) < frequencyRank(frequency)) {
      notes.push({ subject: name, reason: `stored at ${f.stored} frequency: compounded to ${frequency} as prod(1 + f) - 1 (exact for a traded return, an approximation for an excess return)` });
    }
    factors.push(f);
    required.push({ role: 'factor', series: f });
  }
  let consumption: PeriodSeries | undefined;
  if (spec.model.consumption) {
    const s = findSeries(input.series, spec.model.consumption, ['consumption'], 'consumption', 'spec.model.consumption');
    consumption = consumptionPeriods(s, cal);
    if (consumption.values.size === 0) throw noValues(consumption, 'consumption');
    if (frequencyRank(consumption.stored) < frequencyRank(frequency)) notes.push({ subject: s.name, reason: `stored at ${consumption.stored} frequency: growth from the last level in each ${frequency} period` });
    required.push({ role: 'consumption', series: consumption });
  }

  // Instruments (METHODS 9): z dated k multiplies period k + lag, so the series the window
  // needs is the instrument shifted forward by the lag.
  const instruments: { series: PeriodSeries; shifted: Map<number, number> }[] = [];
  const lag = spec.instruments?.lag ?? 1;
  for (const name of spec.instruments?.series ?? []) {
    const s = findSeries(input.series, name, ['other', 'factor', 'consumption'], 'instrument', 'spec.instruments.series');
    const z = instrumentPeriods(s, cal);
    if (z.values.size === 0) throw noValues(z, 'instrument');
    if (frequencyRank(z.stored) < frequencyRank(frequency)) {
      notes.push({ subject: name, reason: s.kind === 'factor' ? `instrument stored at ${z.stored} frequency: compounded to ${frequency} as prod(1 + f) - 1` : `instrument stored at ${z.stored} frequency: the last value in each ${frequency} period` });
    }
    const shifted = new Map<number, number>();
    for (const [k, v] of z.values) shifted.set(k + lag, v);
    instruments.push({ series: z, shifted });
  }

  // Window bounds from spec.start / spec.end, on the labels of periods with any asset return.
  const usable = assets.filter((a) => !a.unusable);
  for (const a of assets) if (a.unusable) notes.push({ subject: a.name, reason: `dropped: ${a.unusable}` });
  // (only a spec with a start or an end needs them)
  const order: number[] = [];
  if (spec.start !== undefined || spec.end !== undefined) {
    const withReturns = new Set<number>();
    for (const a of usable) for (const k of (a.values as Map<number, number>).keys()) withReturns.add(k);
    order.push(...[...withReturns].sort((x, y) => x - y));
  }
  const windowText = `${spec.start ?? 'the first period'}..${spec.end ?? 'the last period'}`;
  const bounds: { lo?: number; hi?: number } = {};
  if (spec.start !== undefined) {
    const k = order.find((i) => describe(i) >= (spec.start as string));
    if (k === undefined) throw new DeflatorError('SAMPLE_TOO_SHORT', `no ${frequency} period with asset returns on or after spec.start ${spec.start}`, 'choose an earlier start');
    bounds.lo = k;
  }
  if (spec.end !== undefined) {
    const k = [...order].reverse().find((i) => describe(i) <= (spec.end as string));
    if (k === undefined) throw new DeflatorError('SAMPLE_TOO_SHORT', `no ${frequency} period with asset returns on or before spec.end ${spec.end}`, 'choose a later end');
    bounds.hi = k;
  }

  const w = commonWindow(
    usable.map((a) => ({ name: a.name, values: a.values as Map<number, number> })),
    [...required.map((r) => r.series.values), ...instruments.map((z) => z.shifted)],
    bounds,
    describe,
  );
  // The periods the lag cost: in the window the same spec gives without instruments, not in this one.
  const lost: number[] = [];
  if (instruments.length) {
    const w0 = commonWindow(usable.map((a) => ({ name: a.name, values: a.values as Map<number, number> })), required.map((r) => r.series.values), bounds, describe);
    for (let k = w0.lo; k <= w0.hi; k++) if (k < w.lo || k > w.hi) lost.push(k);
  }
  for (const d of w.dropped) notes.push({ subject: d.asset, reason: `dropped: ${d.reason}` });
  if (usable.length === 0) {
    throw new DeflatorError(
      'DATA_MISSING',
      `no test asset has ${frequency} returns: ${assets.map((a) => `${a.name}: ${a.unusable ?? ''}`).join('; ')}`,
      'choose a frequency the data support, or import the missing prices',
    );
  }
  if (w.kept.length === 0 && w.dropped.length > 0) {
    throw new DeflatorError(
      'DATA_MISSING',
      `no test asset has a return in every period of the window ${windowText}: ${w.dropped.map((d) => `${d.asset}: ${d.reason}`).join('; ')}`,
      'narrow spec.start/spec.end to periods the assets cover, or fill the missing prices',
    );
  }
  const T = w.hi - w.lo + 1;
  if (!(T >= 2) || w.kept.length === 0) {
    throw new DeflatorError(
      'SAMPLE_TOO_SHORT',
      `the window ${windowText}${T >= 1 ? ` (${describe(w.lo)}..${describe(w.hi)})` : ''} at ${frequency} frequency holds ${Math.max(0, T)} period(s) where the assets and the series ${required.map((r) => `"${r.series.name}"`).join(', ') || '(none)'} all have values; at least 2 are needed`,
      'widen spec.start/spec.end, choose another frequency, or check the dates of the series',
    );
  }
  for (const r of required) {
    for (let k = w.lo; k <= w.hi; k++) {
      if (!r.series.values.has(k)) {
        throw new DeflatorError(
          'DATA_MISSING',
          `${r.role} series "${r.series.name}" has no value for the ${frequency} period ${describe(k)}, inside the window ${describe(w.lo)}..${describe(w.hi)}`,
          'fill the series for that period, or set spec.start/spec.end to a window that avoids it',
        );
      }
    }
  }

  for (const z of instruments) {
    for (let k = w.lo; k <= w.hi; k++) {
      if (!z.shifted.has(k)) {
        throw new DeflatorError(
          'DATA_MISSING',
          `instrument series "${z.series.name}" has no value for the ${frequency} period ${describe(k - lag)}, which the lag of ${lag} needs for ${describe(k)}, inside the window ${describe(w.lo)}..${describe(w.hi)}`,
          'fill the series for that period, or set spec.start/spec.end to a window that avoids it',
        );
      }
    }
  }

  // Assemble.
  const periods: string[] = [];
  for (let k = w.lo; k <= w.hi; k++) periods.push(describe(k));
  const series = (m: Map<number, number>): Float64Array => {
    const out = new Float64Array(T);
    // a dense map holding the whole window: one copy (the same values; the window checks made sure they are there)
    if (m instanceof PeriodMap && m.rangeInto(w.lo, out)) return out;
    for (let k = w.lo; k <= w.hi; k++) out[k - w.lo] = m.get(k) as number;
    return out;
  };
  const rfGross = rf ? series(rf.values) : undefined;
  const kept = w.kept.map((name) => usable.find((a) => a.name === name) as TestAsset);
  const assetNames: string[] = [];
  const returns: Float64Array[] = [];
  // every value finite (checked as the values are made; the error stays where it was raised before)
  let finite = true;
  if (rfGross) finite = allFinite(rfGross);
  for (const a of kept) {
    const g = series(a.values as Map<number, number>);
    if (a.subtractRf) {
      if (!rfGross) throw new DeflatorError('SPEC_INVALID', 'spec.riskfree: excess returns need a risk-free series name', 'set "riskfree" to the name of a risk-free series');
      finite = subtractFinite(g, rfGross) && finite;
    } else if (finite) finite = allFinite(g);
    assetNames.push(a.name);
    returns.push(g);
    if (a.cutShort && a.cutShort.index >= w.lo && a.cutShort.index <= w.hi) notes.push({ subject: a.name, reason: `${describe(a.cutShort.index)}: ${a.cutShort.note}` });
  }
  if (spec.includeRiskfree && rf && rfGross) {
    if (assetNames.includes(rf.name)) throw new DeflatorError('CONFLICT', `spec.includeRiskfree: a test asset is already named "${rf.name}"`, 'rename that asset, or leave includeRiskfree off');
    assetNames.push(rf.name);
    returns.push(Float64Array.from(rfGross));
  }
  if (rf?.cutShort && rf.cutShort.index >= w.lo && rf.cutShort.index <= w.hi) {
    notes.push({ subject: rf.name, reason: `${describe(rf.cutShort.index)}: last ${frequency} period cut short, compounded to ${rf.cutShort.to}` });
  }
  if (!finite) throw new DeflatorError('INPUT_INVALID', 'a return in the panel is not finite', 'check the prices and series for zeros or extreme values');
  notes.push({ subject: '*', reason: `common sample ${periods[0]}..${periods[T - 1]}: T = ${T} ${frequency} periods, N = ${assetNames.length} test assets` });
  const lostLabels = lost.map(describe);
  if (spec.instruments) {
    const names = instruments.map((z) => z.series.name);
    notes.push({
      subject: '*',
      reason: `instruments const${names.length ? `, ${names.join(', ')}` : ''} dated ${lag} period(s) before the returns they scale${lostLabels.length ? `; ${lostLabels.length} period(s) lost to the lag: ${lostLabels.length > 6 ? `${lostLabels.slice(0, 3).join(', ')}, ..., ${lostLabels.slice(-2).join(', ')}` : lostLabels.join(', ')}` : '; no period lost to the lag'}`,
    });
  }

  const panel: ReturnsPanel = {
    frequency,
    periods,
    assets: assetNames,
    returnKind: spec.returns,
    returns,
    factors: factors.map((f) => ({ name: f.name, values: series(f.values) })),
    sampleNotes: notes,
  };
  if (rfGross) panel.riskfreeGross = rfGross;
  if (consumption) panel.consumptionGrowth = series(consumption.values);
  if (input.priceRatios) {
    panel.priceRatios = kept.map((a) => (a.priceGross ? series(a.priceGross) : null));
    if (spec.includeRiskfree && rf && rfGross) panel.priceRatios.push(null);
  }
  if (spec.instruments) {
    panel.instruments = { lag, series: instruments.map((z) => ({ name: z.series.name, values: series(z.shifted) })), lost: lostLabels };
    for (const z of panel.instruments.series) for (const v of z.values) if (!Number.isFinite(v)) throw new DeflatorError('INPUT_INVALID', `instrument series "${z.name}" has a value that is not finite`, 'check the series');
  }
  return panel;
}

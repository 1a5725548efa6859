/**
 * The drift analysis of a spec: the balanced panel of gross returns and price ratios of the
 * assets (shared/returns/panel.ts, the same window rules as a fit), then the split of each
 * asset's drift (driftSplit.ts).
 */
import type { NamedSeries, PriceHistory, ReturnSeries } from '../data.js';
import { PERIODS_PER_YEAR } from '../data.js';
import { DeflatorError } from '../errors.js';
import type { ReturnsPanel } from '../panel.js';
import type { DriftResult, ResultWarning } from '../results.js';
import { buildPanel, type PanelSpec } from '../returns/panel.js';
import type { DriftSpec } from '../spec.js';
import { lagsChoice } from '../estimation/longRunCovariance.js';
import { driftSplit } from './driftSplit.js';
import { assertAllFinite } from '../estimation/finiteGuard.js';

/** The panel keys of a drift spec: gross returns of its assets, no series. */
export function driftPanelSpec(spec: DriftSpec): PanelSpec {
  return { frequency: spec.frequency, start: spec.start, end: spec.end, assets: spec.assets, returns: 'gross', includeRiskfree: false, model: { factors: [] } };
}

/** The panel a drift spec reads: gross returns with each asset's price ratios. */
export function driftPanel(spec: DriftSpec, histories: PriceHistory[], portfolios: ReturnSeries[] = [], series: NamedSeries[] = []): ReturnsPanel {
  return buildPanel({ histories, series, portfolios, spec: driftPanelSpec(spec), priceRatios: true });
}

/** Drift, price growth, dividend yield, sigma and the log drift of every asset of the panel (METHODS 10). */
export function driftAnalysis(spec: DriftSpec, panel: ReturnsPanel): DriftResult {
  const T = panel.periods.length;
  const ppy = PERIODS_PER_YEAR[panel.frequency];
  const { lags, rule: lagsRule } = lagsChoice(spec.lags, T);
  if (T <= lags + 1) {
    throw new DeflatorError('SAMPLE_TOO_SHORT', `${T} ${panel.frequency} periods are too few for ${lags} Newey-West lags (need more than ${lags + 1})`, 'use fewer lags (--lags), a longer window or a higher frequency');
  }
  const ratios = panel.priceRatios ?? panel.assets.map(() => null);
  const rows = panel.assets.map((asset, i) => {
    const ratio = ratios[i];
    return driftSplit({ asset, gross: panel.returns[i], ...(ratio ? { priceRatio: ratio } : {}) }, ppy, lags);
  });
  const warnings: ResultWarning[] = [];
  const asReturns = rows.filter((r) => r.source === 'returns').map((r) => r.asset);
  if (asReturns.length) {
    const names = asReturns.length > 8 ? `${asReturns.slice(0, 8).join(', ')} and ${asReturns.length - 8} more` : asReturns.join(', ');
    warnings.push({
      code: 'NO_PRICE_SPLIT',
      message: `${names} ${asReturns.length === 1 ? 'is' : 'are'} stored as returns, without prices and dividends: the drift cannot be split into price growth and dividend yield (drift and sigma are shown)`,
    });
  }
  const dropped = panel.sampleNotes.filter((n) => n.subject !== '*' && n.reason.startsWith('dropped: ')).map((n) => ({ asset: n.subject, reason: n.reason.slice('dropped: '.length) }));
  for (const d of dropped) warnings.push({ code: 'ASSET_DROPPED', message: `${d.asset} left out: ${d.reason}` });
  const result: DriftResult = {
    kind: 'drift',
    label: spec.label ?? `drift split: ${rows.length} asset${rows.length === 1 ? '' : 's'}, ${panel.frequency}`,
    frequency: panel.frequency,
    periodsPerYear: ppy,
    sample: { first: panel.periods[0], last: panel.periods[T - 1], T },
    lags,
    lagsRule,
    assets: rows,
    dropped,
    warnings,
    notes: [
      `Annualised: means x ${ppy}, sigma x sqrt(${ppy}). Drift = price growth + dividend yield (per period r_t = g_t + y_t).`,
      'sigma is the standard deviation of log returns (divide by T - 1); the log drift approaches drift - sigma^2/2 for a diffusion.',
      `Standard errors of the means: Newey-West (Bartlett, ${lagsRule}; centered, divide by T).`,
      ...panel.sampleNotes.filter((n) => n.subject !== '*' && !n.reason.startsWith('dropped: ')).map((n) => `${n.subject}: ${n.reason}`),
    ],
  };
  assertAllFinite(result);
  return result;
}

/**
 * Store -> returns panel: reads exactly the histories, portfolios and series a spec names
 * and hands them to the returns engine (shared/returns buildPanel). The fit, back-test and
 * compare commands and the app all build their panel here.
 */
import { isReturnHistory, type NamedSeries, type PriceHistory, type ReturnSeries, type SeriesKind, type StoredAsset } from '../../shared/data.js';
import { DeflatorError } from '../../shared/errors.js';
import type { ReturnsPanel } from '../../shared/panel.js';
import { buildPanel, type BuildPanelInput, type PanelSpec } from '../../shared/returns/index.js';
import type { DriftSpec, FitSpec, PresentValueSpec } from '../../shared/spec.js';
import { driftPanelSpec } from '../../shared/values/drift.js';
import { DateTexts } from '../store/packs.js';
import type { Store } from '../store/store.js';

const list = (names: string[]) => (names.length ? names.join(', ') : '(none)');

/** The series names a spec needs, with the kinds each may have. */
export function seriesNeeded(spec: PanelSpec): { name: string; role: string; key: string; kinds: SeriesKind[] }[] {
  const out: { name: string; role: string; key: string; kinds: SeriesKind[] }[] = [];
  if (spec.riskfree) out.push({ name: spec.riskfree, role: 'risk-free', key: 'spec.riskfree', kinds: ['riskfree'] });
  for (const f of spec.model.factors) out.push({ name: f, role: 'factor', key: 'spec.model.factors', kinds: ['factor', 'other'] });
  if (spec.model.consumption) out.push({ name: spec.model.consumption, role: 'consumption', key: 'spec.model.consumption', kinds: ['consumption'] });
  for (const z of spec.instruments?.series ?? []) out.push({ name: z, role: 'instrument', key: 'spec.instruments.series', kinds: ['other', 'factor', 'consumption'] });
  return out;
}

/** What buildPanel needs for this spec, read from the store (no more than that). */
export function loadPanelInput(store: Store, spec: PanelSpec): BuildPanelInput {
  let histories: StoredAsset[];
  let portfolios: ReturnSeries[] = [];
  // one set of date strings for the histories and the series: a series on the assets' trading days shares their list
  const texts = new DateTexts();
  if (spec.assets === 'all') {
    histories = store.loadAssets(undefined, texts);
  } else {
    const assets = new Set(store.assets());
    const ports = new Set(store.portfolioNames());
    const missing = spec.assets.filter((a) => !assets.has(a) && !ports.has(a));
    if (missing.length) {
      throw new DeflatorError(
        'DATA_MISSING',
        `test asset(s) ${missing.map((m) => `"${m}"`).join(', ')} (spec.assets) not in ${store.path}; stored assets: ${list([...assets].slice(0, 30))}${assets.size > 30 ? ', ...' : ''}; portfolios: ${list([...ports])}`,
        'import them, or correct spec.assets; `deflator info --db DB` lists what is stored',
      );
    }
    histories = store.loadAssets(spec.assets.filter((a) => assets.has(a)), texts);
    const wantedPorts = spec.assets.filter((a) => ports.has(a));
    if (wantedPorts.length) portfolios = store.loadPortfolios(wantedPorts);
  }
  const stored = store.seriesList();
  const names = new Set<string>();
  for (const need of seriesNeeded(spec)) {
    const hit = stored.find((s) => s.name === need.name);
    if (!hit || !need.kinds.includes(hit.kind)) {
      const available = stored.filter((s) => need.kinds.includes(s.kind)).map((s) => s.name);
      throw new DeflatorError(
        'DATA_MISSING',
        `${need.role} series "${need.name}" (${need.key}) ${hit ? `is stored as kind "${hit.kind}"` : `is not in ${store.path}`}; stored ${need.kinds.join('/')} series: ${list(available)}`,
        hit ? `re-import it with --kind ${need.kinds[0]}, or name another series` : 'import it with `deflator import series`, or correct the name',
      );
    }
    names.add(need.name);
  }
  const series: NamedSeries[] = names.size ? store.loadSeries([...names], texts) : [];
  return { histories, series, portfolios, spec };
}

/** The balanced panel a fit, back-test or comparison runs on. */
export function loadPanel(store: Store, spec: FitSpec): ReturnsPanel {
  return buildPanel(loadPanelInput(store, spec));
}

/** The panel of a drift split: gross returns and price ratios of the spec's assets. */
export function loadDriftPanel(store: Store, spec: DriftSpec): ReturnsPanel {
  return buildPanel({ ...loadPanelInput(store, driftPanelSpec(spec)), priceRatios: true });
}

/** The price histories a present-value spec reads (one asset, the listed assets, or all). */
export function loadPresentValueHistories(store: Store, spec: PresentValueSpec): PriceHistory[] {
  const wanted = spec.asset !== undefined ? [spec.asset] : spec.assets === 'all' ? undefined : spec.assets;
  if (wanted) {
    const stored = new Set(store.assets());
    const missing = wanted.filter((a) => !stored.has(a));
    if (missing.length) {
      throw new DeflatorError(
        'NOT_FOUND',
        `asset(s) ${missing.map((m) => `"${m}"`).join(', ')} not in ${store.path}; stored assets: ${list([...stored].slice(0, 30))}${stored.size > 30 ? ', ...' : ''}`,
        'check the names with `deflator info --db DB`',
      );
    }
  }
  const assets = store.loadAssets(wanted);
  const asReturns = wanted ? assets.filter(isReturnHistory).map((a) => a.asset) : [];
  if (asReturns.length) {
    throw new DeflatorError(
      'INPUT_INVALID',
      `${asReturns.map((a) => `"${a}"`).join(', ')} ${asReturns.length === 1 ? 'is' : 'are'} stored as returns, without prices and dividends: the dividend-price ratio is not defined`,
      'name assets imported with prices and dividends (`deflator info --db DB` shows how each arrived); `deflator drift` shows the drift of return-form assets',
    );
  }
  // "every asset": the price histories (assets stored as returns have no dividends to sum)
  const histories = assets.filter((a): a is PriceHistory => !isReturnHistory(a));
  if (histories.length === 0) throw new DeflatorError('DATA_MISSING', `no price histories in ${store.path}`, 'import prices and dividends first (`deflator import prices`), or run `deflator demo`');
  return histories;
}

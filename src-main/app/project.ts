/**
 * The app's services on the real program: the open project database (the store), the
 * import pipeline, the returns engine for one asset's history, and the worker pool for
 * every estimation. Built with plain constructor arguments by src-main/app/open.ts.
 */
import { mkdirSync } from 'node:fs';
import path from 'node:path';
import { assetSourceText, isReturnHistory, type Frequency, type PriceHistory, type ReturnHistory } from '../../shared/data.js';
import { DeflatorError, isDeflatorError } from '../../shared/errors.js';
import { returnsTable, storedFrequency } from '../../shared/returns/index.js';
import { parseAscending, spacingFrequency } from '../../shared/returns/periods.js';
import type { CompareSpec, DriftSpec, FitSpec, PresentValueSpec } from '../../shared/spec.js';
import type { BacktestResult, CompareResult, DriftResult, FitResult, PresentValueResult } from '../../shared/results.js';
import type { AssetHistory, Coverage, CoverageRow, ImportKind, ImportPreview, ImportReport, ImportWarning, SamplePreview, StoredImport } from '../../shared/bridge/types.js';
import { importPrices, importReturns, importSeries, missingCodeList, previewImport, type PreviewOptions } from '../import/index.js';
import { autoLags } from '../../shared/estimation/longRunCovariance.js';
import { loadPanel } from '../data/panel.js';
import type { ImportReport as PipelineReport } from '../import/index.js';
import type { Store } from '../store/store.js';
import { compareAnalysis, runAnalysis, type Analysis, type ResultOf } from '../services/analysis.js';
import { saveUnrecorded } from '../runs/unrecorded.js';
import type { Compute } from '../services/compute.js';
import type { Engine, ImportOptions, Importer, ProjectData, TaskContext } from './ports.js';
import { panelWording } from './wording.js';

/** What the app computes on: its worker pool (src-main/workers/pool.ts), which keeps the main thread free. */
export type TaskRunner = Compute;

/**
 * A logged file name as the app shows it: the name without folders, and for a copy the app
 * stored from an upload (incoming/<time>-<n>-<name>) the name it was chosen under.
 */
export function displayFileName(fileName: string): string {
  const base = fileName.split(/[\\/]/).pop() ?? fileName;
  return base.replace(/^\d{8}T\d{6}-\d+-/, '');
}

const longest = (gaps: { days: number }[]): number | undefined => (gaps.length ? Math.max(...gaps.map((g) => g.days)) : undefined);

export class StoreProject implements ProjectData, Importer {
  constructor(private readonly store: Store) {}

  get databaseName(): string {
    return path.basename(this.store.path);
  }

  imports(): StoredImport[] {
    return this.store
      .importLog()
      .slice()
      .reverse()
      .map((e) => ({
        id: e.id,
        file: displayFileName(e.fileName),
        kind: e.kind,
        importedAt: e.importedAt,
        rowsRead: e.rowsRead,
        rowsStored: e.rowsStored,
        rowsRejected: e.rowsRejected,
        warnings: e.warnings.slice(0, 50).map((w) => ({ kind: w.kind, ...(w.subject ? { subject: w.subject } : {}), message: w.message })),
        warningCount: e.warnings.length,
      }));
  }

  samplePreview(spec: FitSpec): SamplePreview {
    const panel = loadPanel(this.store, spec);
    const T = panel.periods.length;
    const auto = spec.estimator.lags === 'auto';
    const lags = auto ? autoLags(T) : (spec.estimator.lags as number);
    return {
      start: panel.periods[0] ?? '',
      end: panel.periods[T - 1] ?? '',
      T,
      N: panel.assets.length,
      lags,
      lagsRule: auto ? `automatic, floor(4 (T/100)^(2/9)) = ${lags}` : 'as set',
    };
  }

  coverage(): Coverage {
    const info = this.store.info();
    const assets: CoverageRow[] = info.assets.map((a) => {
      const row: CoverageRow = { name: a.name, kind: 'asset', first: a.first, last: a.last, count: a.count, gaps: a.gaps.length, source: a.source };
      const l = longest(a.gaps);
      if (l !== undefined) row.longestGapDays = l;
      if (a.source === 'returns') {
        row.data = assetSourceText(a);
        row.missing = a.missing ?? 0;
      }
      return row;
    });
    const series: CoverageRow[] = info.series.map((s) => {
      const row: CoverageRow = { name: s.name, kind: s.kind, first: s.first, last: s.last, count: s.count, gaps: s.gaps.length };
      const l = longest(s.gaps);
      if (l !== undefined) row.longestGapDays = l;
      if (s.rfForm) row.rfForm = s.rfForm;
      return row;
    });
    const portfolios: CoverageRow[] = info.portfolios.map((p) => ({ name: p.name, kind: 'portfolio', first: p.first, last: p.last, count: p.count, gaps: 0 }));
    return { assets, series, portfolios };
  }

  history(asset: string, frequency?: Frequency): AssetHistory {
    if (!this.store.hasAsset(asset)) {
      throw new DeflatorError('NOT_FOUND', `no asset named "${asset}" in ${this.databaseName}`, 'pick an asset from the coverage table');
    }
    const h = this.store.loadAssets([asset])[0];
    return isReturnHistory(h) ? returnIndex(h, frequency) : priceAndTotalReturn(h, frequency);
  }

  async importFile(file: string, kind: ImportKind, options: ImportOptions, ctx: TaskContext): Promise<ImportReport> {
    const onProgress = (read: number, total: number) => ctx.onProgress(read, total, 'reading');
    const p = pipelineOptions(kind, options);
    const replace = options.replace ? { replace: true } : {};
    let r: PipelineReport;
    try {
      r =
        p.kind === 'prices'
          ? await importPrices(this.store, file, { ...p.options, ...replace, onProgress })
          : p.kind === 'series'
            ? await importSeries(this.store, file, { ...p.options, ...replace, onProgress })
            : await importReturns(this.store, file, { ...p.options, ...replace, onProgress });
    } catch (e) {
      // the pipeline's hints name command-line options; the panel's fields say the same
      if (isDeflatorError(e)) throw new DeflatorError(e.code, panelWording(e.message), e.hint === undefined ? undefined : panelWording(e.hint));
      throw e;
    }
    ctx.onProgress(1, 1, 'done');
    const warnings: ImportWarning[] = r.warnings.map((w) => {
      const out: ImportWarning = { message: panelWording(w.message), kind: w.kind };
      if (w.subject) out.subject = w.subject;
      return out;
    });
    if (r.status === 'already-imported') warnings.unshift({ kind: 'already-imported', message: `the same file was imported before (import #${r.importId}); nothing changed` });
    return {
      file: path.basename(r.file),
      kind,
      rows: r.rowsStored,
      rowsRead: r.rowsRead,
      rowsRejected: r.rowsRejected,
      names: r.subjects,
      first: r.first,
      last: r.last,
      warnings,
      durationMs: Math.round(r.seconds * 1000),
    };
  }

  /** The first rows of a file as the import would read them (nothing stored; a scratch store checks them). */
  async previewFile(file: string, kind: ImportKind, options: ImportOptions, rows?: number): Promise<ImportPreview> {
    const out = await previewImport(file, pipelineOptions(kind, options), rows);
    if (out.problem) out.problem = { ...out.problem, message: panelWording(out.problem.message), ...(out.problem.hint !== undefined ? { hint: panelWording(out.problem.hint) } : {}) };
    if (out.reads) out.reads = { ...out.reads, warnings: out.reads.warnings.map(panelWording) };
    return out;
  }
}

/** The app's import options (one set for every kind, as the import panel offers them) -> the pipeline's options of that kind. */
export function pipelineOptions(kind: ImportKind, o: ImportOptions): PreviewOptions {
  const reading = {
    ...(o.dateFormat ? { dateFormat: o.dateFormat } : {}),
    ...(o.delimiter ? { delimiter: o.delimiter } : {}),
    ...(o.decimal ? { decimal: o.decimal } : {}),
    ...(o.missing !== undefined ? { missing: missingCodeList(o.missing) } : {}),
  };
  if (kind === 'prices') return { kind, options: { ...(o.layout ? { layout: o.layout } : {}), ...reading } };
  if (kind === 'series') {
    return {
      kind,
      options: { kind: o.seriesKind ?? 'factor', units: o.percent ? 'percent' : 'decimal', ...(o.seriesKind === 'riskfree' && o.rfForm ? { rfForm: o.rfForm } : {}), ...reading },
    };
  }
  return { kind, options: { layout: o.layout ?? 'wide', form: o.form ?? 'net', units: o.percent ? 'percent' : 'decimal', ...(o.excess ? { excess: true } : {}), ...reading } };
}

/**
 * Split-adjusted price (prices before a split divided by the product of later factors,
 * METHODS section 1) and the total-return index V scaled to start at the first adjusted
 * price, on the history's own period ends.
 */
export function priceAndTotalReturn(h: PriceHistory, frequency?: Frequency): AssetHistory {
  const priced: number[] = [];
  for (let i = 0; i < h.dates.length; i++) if (!Number.isNaN(h.price[i])) priced.push(i);
  if (priced.length === 0) throw new DeflatorError('DATA_MISSING', `price history "${h.asset}" has no priced rows`, 'import its prices');
  // adjusted price: walk backwards, dividing by the product of factors after each row
  const adjusted = new Float64Array(h.dates.length);
  let later = 1;
  for (let i = h.dates.length - 1; i >= 0; i--) {
    adjusted[i] = h.price[i] / later;
    later *= h.adjust ? (Number.isNaN(h.adjust[i]) ? 1 : h.adjust[i]) : 1;
  }
  const pricedDates = priced.map((i) => h.dates[i]);
  const f = frequency ?? storedFrequency(parseAscending(pricedDates, `price history "${h.asset}"`)) ?? 'daily';
  const dividends = priced.reduce((n, i) => n + (h.dividend[i] > 0 ? 1 : 0), 0);
  if (priced.length < 2) {
    const p = adjusted[priced[0]];
    return { asset: h.asset, frequency: frequency ?? 'stored', dates: pricedDates, price: [p], totalReturn: [p], dividends };
  }
  const table = returnsTable([h], { frequency: f, kind: 'index' });
  const values = table.series[h.asset] ?? [];
  const priceOn = new Map(priced.map((i) => [h.dates[i], adjusted[i]]));
  const first = adjusted[priced[0]];
  const dates: string[] = [];
  const price: number[] = [];
  const totalReturn: number[] = [];
  table.periods.forEach((label, k) => {
    const v = values[k];
    const p = priceOn.get(label);
    if (v === null || v === undefined || p === undefined || !Number.isFinite(v) || !Number.isFinite(p)) return;
    dates.push(label);
    price.push(p);
    totalReturn.push(v * first);
  });
  return { asset: h.asset, frequency: frequency ?? 'stored', dates, price, totalReturn, dividends };
}

/**
 * An asset stored as returns (METHODS 8): its value index V (1 at the period before the
 * first return, V_t = V_{t-1} R_t; a gap carries the level over), no price line. Excess
 * returns have no total return without a risk-free series: their line is the excess
 * returns compounded, prod(1 + R^e), and says so.
 */
export function returnIndex(h: ReturnHistory, frequency?: Frequency): AssetHistory {
  const dates = parseAscending(h.dates, `return history "${h.asset}"`);
  const f = frequency ?? spacingFrequency(dates) ?? 'monthly';
  const asTotal: ReturnHistory = h.excess ? { ...h, excess: false } : h;
  const table = returnsTable([asTotal], { frequency: f, kind: 'index' });
  const values = table.series[h.asset] ?? [];
  const out: AssetHistory = {
    asset: h.asset,
    frequency: frequency ?? 'stored',
    dates: [],
    price: [],
    totalReturn: [],
    dividends: 0,
    source: 'returns',
    indexLabel: h.excess ? 'excess-return index (excess returns compounded)' : 'total-return index',
    data: assetSourceText(h),
  };
  table.periods.forEach((label, k) => {
    const v = values[k];
    if (v === null || v === undefined || !Number.isFinite(v)) return;
    out.dates.push(label);
    out.totalReturn.push(v);
  });
  return out;
}

/**
 * Every estimation goes to the worker pool through the analysis service
 * (src-main/services/analysis.ts: load the panel, compute, record); replies carry the run id.
 */
export class PoolEngine implements Engine {
  /**
   * `unrecordedDir`: where a result whose run record cannot be written (the database
   * busy, read-only, full, damaged) is saved; the reply then carries `unrecorded` with
   * why, and the file to record later (`deflator runs --record FILE --db DB`).
   */
  constructor(
    private readonly pool: TaskRunner,
    private readonly store: () => Store,
    private readonly unrecordedDir?: string,
  ) {}

  private async run<A extends Analysis>(a: A, ctx: TaskContext): Promise<ResultOf<A>> {
    const store = this.store();
    const outcome = await runAnalysis(store, a, this.pool, { onProgress: ctx.onProgress, signal: ctx.signal, keepUnrecorded: true });
    const e = outcome.recordError;
    if (!e) return outcome.result;
    let savedTo: string | undefined;
    if (this.unrecordedDir) {
      try {
        mkdirSync(this.unrecordedDir, { recursive: true });
        savedTo = saveUnrecorded(store.path, a, outcome.result, outcome.data, this.pool.threads, [this.unrecordedDir]);
      } catch {
        savedTo = undefined;
      }
    }
    const hint = savedTo ? `the result is saved in ${savedTo}; record it later with: deflator runs --record ${savedTo} --db ${store.path}` : 'export or copy what you need from this screen: the result is not stored anywhere';
    return Object.assign(outcome.result, { unrecorded: { code: e.code, message: e.message, hint, ...(savedTo ? { savedTo } : {}) } });
  }

  fit(spec: FitSpec, ctx: TaskContext): Promise<FitResult> {
    return this.run({ kind: 'fit', spec }, ctx);
  }

  backtest(spec: FitSpec, ctx: TaskContext): Promise<BacktestResult> {
    return this.run({ kind: 'backtest', spec }, ctx);
  }

  compare(spec: CompareSpec, ctx: TaskContext): Promise<CompareResult> {
    return this.run(compareAnalysis(spec), ctx);
  }

  presentValue(spec: PresentValueSpec, ctx: TaskContext): Promise<PresentValueResult> {
    return this.run({ kind: 'present-value', spec }, ctx);
  }

  drift(spec: DriftSpec, ctx: TaskContext): Promise<DriftResult> {
    return this.run({ kind: 'drift', spec }, ctx);
  }
}

/** The open project: what it holds (coverage), imports into it, and one asset's history. */
import { defineStore } from 'pinia';
import type { AppInfo, AssetHistory, Coverage, CoverageRow, ImportReport, RequestOf } from '../../../shared/bridge/index.js';
import { bridge } from '../bridge/index.js';
import { toUiError } from '../lib/errors.js';
import type { UiError } from '../lib/errors.js';

export type ImportSource = RequestOf<'importFile'>['source'];
export type ImportKind = 'prices' | 'series';
export type ImportOptions = NonNullable<RequestOf<'importFile'>['options']>;

export interface ImportLogEntry {
  at: string;
  file: string;
  kind: ImportKind;
  report?: ImportReport;
  error?: UiError;
}

export const useProjectStore = defineStore('project', {
  state: () => ({
    info: null as AppInfo | null,
    coverage: null as Coverage | null,
    loading: false,
    error: null as UiError | null,
    importing: false,
    importProgress: 0,
    importFileName: '',
    importError: null as UiError | null,
    importLog: [] as ImportLogEntry[],
    historyAsset: '',
    history: null as AssetHistory | null,
    historyLoading: false,
    historyError: null as UiError | null,
  }),
  getters: {
    assetNames: (s): string[] => s.coverage?.assets.map((a) => a.name) ?? [],
    portfolioNames: (s): string[] => s.coverage?.portfolios.map((a) => a.name) ?? [],
    factorNames: (s): string[] => s.coverage?.series.filter((x) => x.kind === 'factor').map((x) => x.name) ?? [],
    riskfreeNames: (s): string[] => s.coverage?.series.filter((x) => x.kind === 'riskfree').map((x) => x.name) ?? [],
    consumptionNames: (s): string[] => s.coverage?.series.filter((x) => x.kind === 'consumption').map((x) => x.name) ?? [],
    /** Everything usable as a test asset: built portfolios first, then single assets. */
    testAssetNames(): string[] {
      return [...this.portfolioNames, ...this.assetNames];
    },
    allRows: (s): CoverageRow[] => (s.coverage ? [...s.coverage.assets, ...s.coverage.portfolios, ...s.coverage.series] : []),
    isEmpty: (s): boolean => !!s.coverage && s.coverage.assets.length + s.coverage.series.length + s.coverage.portfolios.length === 0,
  },
  actions: {
    async load(): Promise<void> {
      this.loading = true;
      this.error = null;
      try {
        const [info, coverage] = await Promise.all([bridge().info({}), bridge().coverage({})]);
        this.info = info;
        this.coverage = coverage;
        if (!this.historyAsset && coverage.assets.length > 0) this.historyAsset = coverage.assets[0].name;
      } catch (e) {
        this.error = toUiError(e);
      } finally {
        this.loading = false;
      }
    },

    async importFile(source: ImportSource, kind: ImportKind, options?: ImportOptions): Promise<ImportReport | undefined> {
      const file = 'path' in source ? (source.path.split(/[\\/]/).pop() ?? source.path) : source.name;
      this.importing = true;
      this.importProgress = 0;
      this.importFileName = file;
      this.importError = null;
      const at = new Date().toISOString().slice(11, 19);
      try {
        const request: RequestOf<'importFile'> = options ? { source, kind, options } : { source, kind };
        const report = await bridge().importFile(request, {
          onProgress: (p) => {
            this.importProgress = p.total > 0 ? p.done / p.total : 0;
          },
        });
        this.importProgress = 1;
        this.importLog.unshift({ at, file, kind, report });
        await this.load();
        return report;
      } catch (e) {
        const err = toUiError(e);
        this.importError = err;
        this.importLog.unshift({ at, file, kind, error: err });
        return undefined;
      } finally {
        this.importing = false;
      }
    },

    async loadHistory(name?: string): Promise<void> {
      const asset = name ?? this.historyAsset;
      if (!asset) return;
      this.historyAsset = asset;
      this.historyLoading = true;
      this.historyError = null;
      try {
        const h = await bridge().history({ asset });
        if (this.historyAsset === asset) this.history = h;
      } catch (e) {
        this.historyError = toUiError(e);
        this.history = null;
      } finally {
        this.historyLoading = false;
      }
    },
  },
});

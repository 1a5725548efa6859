/**
 * The open project: what it holds (coverage), imports into it, and one asset's history.
 * An import goes in two steps: files are staged with the panel's options and previewed
 * (the first rows as the import will read them, nothing stored), then imported.
 */
import { defineStore } from 'pinia';
import type { AppInfo, AssetHistory, Coverage, CoverageRow, ImportPreview, ImportReport, RequestOf, StoredImport } from '../../../shared/bridge/index.js';
import { bridge } from '../bridge/index.js';
import { toUiError } from '../lib/errors.js';
import type { UiError } from '../lib/errors.js';

export type ImportSource = RequestOf<'importFile'>['source'];
export type ImportKind = RequestOf<'importFile'>['kind'];

/** Bytes of an uploaded file sent for a preview: the rows shown are at the start, so the rest stays in the page. */
const PREVIEW_BYTES = 256 * 1024;

/** The start of an uploaded file's text, cut at a line break, for the preview. */
export function previewSource(source: ImportSource): ImportSource {
  if ('path' in source || source.text.length <= PREVIEW_BYTES) return source;
  const cut = source.text.lastIndexOf('\n', PREVIEW_BYTES);
  return { name: source.name, text: source.text.slice(0, cut > 0 ? cut + 1 : PREVIEW_BYTES) };
}
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
    /** The imports stored in the project (newest first), with their warnings. */
    storedImports: [] as StoredImport[],
    historyAsset: '',
    history: null as AssetHistory | null,
    historyLoading: false,
    historyError: null as UiError | null,
    /** Files chosen for import, waiting for the preview to be looked at. */
    staged: [] as ImportSource[],
    stagedKind: 'prices' as ImportKind,
    importOptions: {} as ImportOptions,
    preview: null as ImportPreview | null,
    previewError: null as UiError | null,
    previewing: false,
    /** Supersedes older preview replies when options change quickly. */
    previewSeq: 0,
  }),
  getters: {
    assetNames: (s): string[] => s.coverage?.assets.map((a) => a.name) ?? [],
    portfolioNames: (s): string[] => s.coverage?.portfolios.map((a) => a.name) ?? [],
    factorNames: (s): string[] => s.coverage?.series.filter((x) => x.kind === 'factor').map((x) => x.name) ?? [],
    riskfreeNames: (s): string[] => s.coverage?.series.filter((x) => x.kind === 'riskfree').map((x) => x.name) ?? [],
    consumptionNames: (s): string[] => s.coverage?.series.filter((x) => x.kind === 'consumption').map((x) => x.name) ?? [],
    /** Series usable as instruments (any kind but risk-free): other kinds first (ratios, spreads), then factors and consumption. */
    instrumentNames: (s): string[] => {
      const rank = (k: string) => (k === 'other' ? 0 : k === 'factor' ? 1 : 2);
      return (s.coverage?.series ?? []).filter((x) => x.kind !== 'riskfree').sort((a, b) => rank(a.kind) - rank(b.kind)).map((x) => x.name);
    },
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
        const [info, coverage, imports] = await Promise.all([bridge().info({}), bridge().coverage({}), bridge().imports({}).catch(() => [] as StoredImport[])]);
        this.info = info;
        this.coverage = coverage;
        this.storedImports = imports;
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

    /** Files to import with the panel's kind and options: previewed first, stored on importStaged(). */
    async stage(sources: ImportSource[], kind?: ImportKind): Promise<void> {
      this.staged = sources;
      if (kind) this.stagedKind = kind;
      this.importError = null;
      await this.refreshPreview();
    },

    /** The first rows of the first staged file as the import will read them with the current kind and options. */
    async refreshPreview(): Promise<void> {
      const first = this.staged[0];
      const seq = ++this.previewSeq;
      if (!first) {
        this.preview = null;
        this.previewError = null;
        return;
      }
      this.previewing = true;
      try {
        const options = this.importOptions;
        const p = await bridge().previewImport({ source: previewSource(first), kind: this.stagedKind, options, rows: 12 });
        if (seq !== this.previewSeq) return;
        this.preview = p;
        this.previewError = null;
      } catch (e) {
        if (seq !== this.previewSeq) return;
        this.preview = null;
        this.previewError = toUiError(e);
      } finally {
        if (seq === this.previewSeq) this.previewing = false;
      }
    },

    /** Imports every staged file with the kind and options of the preview; clears the stage when all went in. */
    async importStaged(): Promise<boolean> {
      const files = this.staged;
      let ok = true;
      for (const f of files) {
        const r = await this.importFile(f, this.stagedKind, Object.keys(this.importOptions).length ? this.importOptions : undefined);
        if (!r) ok = false;
      }
      if (ok) this.clearStage();
      return ok;
    },

    clearStage(): void {
      this.staged = [];
      this.preview = null;
      this.previewError = null;
      this.previewSeq++;
      this.previewing = false;
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

/**
 * What the app's services need from the rest of the program, as narrow interfaces.
 * src-main/app/project.ts implements them on the store, the import pipeline, the
 * returns engine and the worker pool; tests hand in small fakes.
 */
import type { Frequency } from '../../shared/data.js';
import type { CompareSpec, DriftSpec, FitSpec, PresentValueSpec } from '../../shared/spec.js';
import type { BacktestResult, CompareResult, DriftResult, FitResult, PresentValueResult } from '../../shared/results.js';
import type { AssetHistory, Coverage, ImportKind, ImportPreview, ImportReport, SamplePreview, StoredImport } from '../../shared/bridge/types.js';
import type { ParsedRequestOf } from '../../shared/bridge/calls.js';

/** Progress of a long task: units done out of total, with an optional stage name. */
export type ProgressFn = (done: number, total: number, stage?: string) => void;

export interface TaskContext {
  onProgress: ProgressFn;
  signal: AbortSignal;
}

/** Read access to the open project database. */
export interface ProjectData {
  /** File name of the database, shown in the title bar. */
  readonly databaseName: string;
  coverage(): Coverage;
  history(asset: string, frequency?: Frequency): AssetHistory;
  /** The sample a fit spec would use: periods, test assets, lags. */
  samplePreview(spec: FitSpec): SamplePreview;
  /** The stored import log, newest first. */
  imports(): StoredImport[];
}

export type ImportOptions = NonNullable<ParsedRequestOf<'importFile'>['options']>;

export interface Importer {
  /** Imports one CSV file (a path already checked by the file policy). */
  importFile(path: string, kind: ImportKind, options: ImportOptions, ctx: TaskContext): Promise<ImportReport>;
  /** The first rows of a file as the import would read them; nothing is stored. */
  previewFile(path: string, kind: ImportKind, options: ImportOptions, rows?: number): Promise<ImportPreview>;
}

/** Estimation, always off the main thread (the worker pool). */
export interface Engine {
  fit(spec: FitSpec, ctx: TaskContext): Promise<FitResult>;
  backtest(spec: FitSpec, ctx: TaskContext): Promise<BacktestResult>;
  compare(spec: CompareSpec, ctx: TaskContext): Promise<CompareResult>;
  /** The dividend-price decomposition (METHODS 10), recorded as a run. */
  presentValue(spec: PresentValueSpec, ctx: TaskContext): Promise<PresentValueResult>;
  /** The drift split (METHODS 10), recorded as a run. */
  drift(spec: DriftSpec, ctx: TaskContext): Promise<DriftResult>;
}

/** Decides which files an import may read (see src-main/app/files.ts). */
export interface FilePolicy {
  /** Returns the real path of an allowed, existing regular file, or throws FORBIDDEN/NOT_FOUND-like errors. */
  check(path: string): string;
  /** Stores uploaded text in the app's own incoming folder and returns its path. */
  storeUpload(name: string, text: string): string;
}

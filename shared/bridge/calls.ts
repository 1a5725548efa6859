/**
 * The one table of bridge calls. Every call the app's screens can make is declared here
 * once: its name, the schema of its request (shared/schema.ts) and the type of its reply. The Electron
 * IPC handlers, the loopback HTTP routes (POST /api/<name>) and the renderer's client are
 * all generated from this table, so a screen cannot tell which transport it talks to.
 *
 * Adding a call is one entry below plus its handler in src-main/app/handlers.ts
 * (the compiler reports a missing handler).
 */
import { s, type AnySchema, type Infer, type Input } from '../schema.js';
import { DATE_FORMATS, DECIMAL_NAMES, DELIMITER_NAMES, FREQUENCIES, RETURN_FORMS, RF_FORMS, SERIES_KINDS } from '../data.js';
import { compareSpecSchema, driftSpecSchema, fitSpecSchema, isoDate, presentValueSpecSchema } from '../spec.js';
import type { BacktestResult, CompareResult, DriftResult, FitResult, PresentValueResult } from '../results.js';
import type { AppInfo, AssetHistory, Coverage, ImportPreview, ImportReport, SamplePreview, StoredImport } from './types.js';
import { RUN_KINDS, type RunRecord, type RunSummary, type RunTag, type StaleItem } from '../records/run-record.js';
import type { ReplayReport } from '../records/replay-report.js';
import { EXPORT_FORMATS } from '../report/formats.js';
import { RANK_KEYS, RANKING_TOP_MAX, type BatchRanking, type RankBy } from '../batch/rank.js';

export interface CallDef<Req extends AnySchema, Rep> {
  request: Req;
  /** Long work: runs as a cancellable task that reports progress events. */
  task: boolean;
  /** One line for DEVELOPERS.md and error messages. */
  summary: string;
  /** Type-level only: the reply's type. */
  readonly reply?: Rep;
}

function call<Rep>() {
  return <Req extends AnySchema>(request: Req, opts: { summary: string; task?: boolean }): CallDef<Req, Rep> => ({
    request,
    task: opts.task ?? false,
    summary: opts.summary,
  });
}

const empty = s.object({}).strict();
const name = s.string().min(1).max(200);

/** A file to import: a path the user chose (dialog, drop, or typed), or its content. */
export const importSourceSchema = s.union([
  s.object({ path: s.string().min(1).max(4096) }).strict(),
  s
    .object({
      /** The file's own name, for the log (no folders). */
      name: s.string().min(1).max(255),
      text: s.string().max(256 * 1024 * 1024),
    })
    .strict(),
]);

export const importOptionsSchema = s
  .object({
    /** Series files: what the columns hold (default 'factor'). */
    seriesKind: s.enum(SERIES_KINDS).optional(),
    /** Risk-free columns: how the rate is quoted. */
    rfForm: s.enum(RF_FORMS).optional(),
    /** Values are in percent (divide by 100). */
    percent: s.boolean().optional(),
    /** Price and return files: one row per date and asset (long) or one column per asset (wide); prices default long, returns wide. */
    layout: s.enum(['long', 'wide']).optional(),
    /** A named date layout of the import pipeline; ISO YYYY-MM-DD when absent. */
    dateFormat: s.enum(DATE_FORMATS).optional(),
    /** Field delimiter (default comma). */
    delimiter: s.enum(DELIMITER_NAMES).optional(),
    /** Decimal mark (default point). */
    decimal: s.enum(DECIMAL_NAMES).optional(),
    /** Missing-value codes, comma-separated ("-99.99,NA"); an empty cell is always missing. */
    missing: s.string().max(400).optional(),
    /** Return files: net (default), gross or log. */
    form: s.enum(RETURN_FORMS).optional(),
    /** Return files: the returns are excess returns. */
    excess: s.boolean().optional(),
    /**
     * Rows already stored for the same (asset or series, date) are replaced by the file's,
     * and earlier imports of the same bytes read another way are taken out, in the same
     * transaction (a corrected file, or a file first imported with the wrong options).
     */
    replace: s.boolean().optional(),
  })
  .strict();

const importKind = s.enum(['prices', 'series', 'returns']);

export const CALLS = {
  info: call<AppInfo>()(empty, { summary: 'version, open database, counts' }),
  coverage: call<Coverage>()(empty, { summary: 'first/last date, count and gaps of every stored asset and series' }),
  history: call<AssetHistory>()(
    s.object({ asset: name, frequency: s.enum(FREQUENCIES).optional() }).strict(),
    { summary: "an asset's price against its total-return index" },
  ),
  importFile: call<ImportReport>()(
    s
      .object({
        source: importSourceSchema,
        kind: importKind,
        options: importOptionsSchema.optional(),
      })
      .strict(),
    { summary: 'import a CSV of prices/dividends, of returns, or of named series', task: true },
  ),
  previewImport: call<ImportPreview>()(
    s
      .object({
        source: importSourceSchema,
        kind: importKind,
        options: importOptionsSchema.optional(),
        rows: s.number().int().min(1).max(200).optional(),
      })
      .strict(),
    { summary: 'the first rows of a file as an import would read them (nothing is stored)' },
  ),
  checkSpec: call<{ kind: 'fit' | 'compare'; spec: unknown }>()(
    s.object({ spec: s.unknown() }).strict(),
    { summary: 'validate a spec (fit or comparison) and return it with defaults filled in' },
  ),
  imports: call<StoredImport[]>()(empty, { summary: 'the imports stored in the project, newest first, with their warnings (file names without folders)' }),
  samplePreview: call<SamplePreview>()(s.object({ spec: s.unknown() }).strict(), {
    summary: 'the sample a fit spec would use on the stored data: periods, test assets, and the Newey-West lags "auto" gives',
  }),
  fit: call<FitResult & RunTag>()(s.object({ spec: fitSpecSchema }).strict(), { summary: 'fit one model', task: true }),
  backtest: call<BacktestResult & RunTag>()(s.object({ spec: fitSpecSchema }).strict(), {
    summary: 'rolling or expanding back-test of one model (spec.backtest required)',
    task: true,
  }),
  compare: call<CompareResult & RunTag>()(s.object({ spec: compareSpecSchema }).strict(), {
    summary: 'fit several models on one sample, side by side',
    task: true,
  }),
  presentValue: call<PresentValueResult & RunTag>()(s.object({ spec: presentValueSpecSchema }).strict(), {
    summary: 'the dividend-price decomposition of one asset or an aggregate (recorded as a run)',
    task: true,
  }),
  drift: call<DriftResult & RunTag>()(s.object({ spec: driftSpecSchema }).strict(), {
    summary: "each asset's drift split into price growth and dividend yield (recorded as a run)",
    task: true,
  }),
  cancel: call<{ cancelled: boolean }>()(
    s.object({ taskId: s.string().regex(/^[A-Za-z0-9_-]{1,64}$/) }).strict(),
    { summary: 'cancel a running task' },
  ),
  runs: call<RunSummary[]>()(
    s
      .object({
        model: s.string().max(200).optional(),
        kind: s.enum(RUN_KINDS).optional(),
        from: isoDate.optional(),
        to: isoDate.optional(),
      })
      .strict(),
    { summary: 'recorded runs, newest first, with stale flags; filter by model text, kind, recording date' },
  ),
  run: call<{ record: RunRecord; staleItems: StaleItem[] }>()(s.object({ id: s.number().int().min(1) }).strict(), {
    summary: 'one recorded run: spec, result, version, fingerprints, and what changed in its data',
  }),
  deleteRun: call<{ deleted: number }>()(s.object({ id: s.number().int().min(1) }).strict(), { summary: 'delete a run record (the data stays)' }),
  replayRun: call<ReplayReport>()(s.object({ id: s.number().int().min(1) }).strict(), {
    summary: 'recompute a recorded run and compare every number bit for bit',
    task: true,
  }),
  batchRanking: call<BatchRanking>()(
    s
      .object({
        id: s.number().int().min(1),
        rankBy: s.enum(RANK_KEYS as [RankBy, ...RankBy[]]).default('hj'),
        top: s.number().int().min(1).max(RANKING_TOP_MAX).default(25),
      })
      .strict(),
    { summary: 'a merged batch run ranked by HJ distance, test p-value or out-of-sample RMSE: its top tasks as a comparison' },
  ),
  exportRun: call<{ files: { name: string; mime: string; base64: string }[] }>()(
    s.object({ id: s.number().int().min(1), format: s.enum(EXPORT_FORMATS) }).strict(),
    { summary: 'a recorded run as CSV files, XLSX, LaTeX, HTML or PDF, for the user to save', task: true },
  ),
} as const;

export type Calls = typeof CALLS;
export type CallName = keyof Calls;
/** What a caller sends (defaults may be left out). */
export type RequestOf<K extends CallName> = Input<Calls[K]['request']>;
/** What a handler receives (after validation, defaults filled in). */
export type ParsedRequestOf<K extends CallName> = Infer<Calls[K]['request']>;
export type ReplyOf<K extends CallName> = Calls[K] extends CallDef<AnySchema, infer R> ? R : never;

export const CALL_NAMES = Object.keys(CALLS) as CallName[];

export function isCallName(s: unknown): s is CallName {
  return typeof s === 'string' && Object.prototype.hasOwnProperty.call(CALLS, s);
}

/** Task ids are made by the caller and tag progress events. */
export const TASK_ID = /^[A-Za-z0-9_-]{1,64}$/;

/**
 * The run specification: what to estimate, on which sample. The same JSON is read by
 * the CLI (`deflator fit SPEC`), written by the app's model set-up screen, and stored
 * with every run. Keys are a contract scripts rely on: add freely, never rename.
 */
import { s, type Infer, type Input, type SchemaError } from './schema.js';
import { FREQUENCIES } from './data.js';
import { DeflatorError } from './errors.js';
import { isCalendarDate } from './returns/periods.js';
import { controlProblems } from './text.js';

/** A calendar date written as YYYY-MM-DD (2010-02-30 and 2010-13-01 are refused). */
export const isoDate = s.string().refine(isCalendarDate, 'expected a calendar date as YYYY-MM-DD (e.g. 2010-02-28)');

export const MODEL_KINDS = ['linear', 'linear-raw', 'linear-gross', 'consumption'] as const;
export const METHODS = ['gmm', 'time-series', 'two-pass'] as const;
export const STAGES = ['first', 'second', 'iterated', 'cue'] as const;
export const WEIGHTS = ['identity', 'hj'] as const;
export const INSTRUMENT_SCALES = ['returns', 'factors', 'both'] as const;
/** The name of the constant instrument, always first (METHODS 9). */
export const CONSTANT_INSTRUMENT = 'const';

/**
 * Conditioning information (METHODS 9): stored series z_t known at the end of period t,
 * multiplying the returns (managed portfolios), the factors (scaled factors) or both of
 * period t + lag. A constant is always the first instrument.
 */
export const instrumentsSchema = s
  .object({
    series: s.array(s.string().min(1)).default([]),
    scale: s.enum(INSTRUMENT_SCALES).default('returns'),
    lag: s.number().int().min(1).max(1000).default(1),
  })
  .strict();

export const modelSchema = s
  .object({
    kind: s.enum(MODEL_KINDS).default('linear'),
    factors: s.array(s.string().min(1)).default([]),
    consumption: s.string().min(1).optional(),
    /** Consumption model on excess returns: delta is fixed at this value (METHODS 2). */
    delta: s.number().positive().finite().optional(),
  })
  .strict();

export const estimatorSchema = s
  .object({
    method: s.enum(METHODS).default('gmm'),
    stage: s.enum(STAGES).default('second'),
    weight: s.enum(WEIGHTS).default('identity'),
    lags: s.union([s.number().int().min(0).max(1000), s.literal('auto')]).default('auto'),
    centered: s.boolean().default(true),
    /** Inference with S from the weighting step (default) or re-estimated at the final estimate. */
    inferenceS: s.enum(['weighting', 'final']).default('weighting'),
    /** Two-pass: include a constant in the cross-sectional regressions (default true). */
    intercept: s.boolean().default(true),
    /** Iterated GMM / nonlinear solvers: iteration cap. */
    maxIterations: s.number().int().min(1).max(10000).default(100),
  })
  .strict();

export const backtestSchema = s
  .object({
    window: s.number().int().min(2),
    step: s.number().int().min(1).default(1),
    horizon: s.number().int().min(1).default(1),
    expanding: s.boolean().default(false),
  })
  .strict();

export const bootstrapSchema = s
  .object({
    replications: s.number().int().min(10).max(100000).default(499),
    /** Block length in periods, or 'auto' = ceil(T^(1/3)) (common practice, see docs/methods.md). */
    block: s.union([s.number().int().min(1), s.literal('auto')]).default('auto'),
    seed: s.number().int().min(0).max(2 ** 31 - 1).default(20261201),
  })
  .strict();

/** Keys that fix the data: shared by every model of a comparison. */
const sampleShape = {
  frequency: s.enum(FREQUENCIES).default('monthly'),
  start: isoDate.optional(),
  end: isoDate.optional(),
  assets: s.union([s.literal('all'), s.array(s.string().min(1)).min(1)]).default('all'),
  returns: s.enum(['excess', 'gross']).default('excess'),
  riskfree: s.string().min(1).optional(),
  includeRiskfree: s.boolean().default(false),
  /** Yield-quoted risk-free: dt = 1/periods-per-year (default) or actual days/365 (docs/methods.md, Returns). */
  dayCount: s.enum(['periods', 'actual365']).optional(),
};

export const fitSpecSchema = s
  .object({
    ...sampleShape,
    label: s.string().optional(),
    model: modelSchema,
    estimator: estimatorSchema.default(estimatorSchema.parse({})),
    backtest: backtestSchema.optional(),
    instruments: instrumentsSchema.optional(),
  })
  .strict();

export const compareEntrySchema = s
  .object({
    label: s.string().optional(),
    model: modelSchema,
    estimator: estimatorSchema.optional(),
    returns: s.enum(['excess', 'gross']).optional(),
    includeRiskfree: s.boolean().optional(),
    /** This model's instruments (in place of the comparison's own "instruments"). */
    instruments: instrumentsSchema.optional(),
  })
  .strict();

export const compareSpecSchema = s
  .object({
    ...sampleShape,
    estimator: estimatorSchema.optional(),
    backtest: backtestSchema.optional(),
    bootstrap: bootstrapSchema.optional(),
    /** Instruments of every model that does not name its own. */
    instruments: instrumentsSchema.optional(),
    compare: s.array(compareEntrySchema).min(1),
  })
  .strict();

const yearOrDate = s.string().regex(/^\d{4}(-\d{2}-\d{2})?$/, 'expected a year (YYYY) or a date (YYYY-MM-DD)');
const lagsSchema = s.union([s.number().int().min(0).max(1000), s.literal('auto')]).default('auto');

/**
 * The dividend-price decomposition of one asset (`asset`) or of the aggregate of a set of
 * assets (`aggregate: true`, `assets` or every stored asset), on calendar years from the
 * year of `start` to the year of `end` (METHODS 10).
 */
export const presentValueSpecSchema = s
  .object({
    analysis: s.literal('present-value'),
    label: s.string().optional(),
    asset: s.string().min(1).optional(),
    aggregate: s.boolean().default(false),
    assets: s.union([s.literal('all'), s.array(s.string().min(1)).min(1)]).default('all'),
    frequency: s.literal('annual').default('annual'),
    start: yearOrDate.optional(),
    end: yearOrDate.optional(),
    lags: lagsSchema,
  })
  .strict();

/** The drift split of each asset's return (METHODS 10) on the common sample of the assets. */
export const driftSpecSchema = s
  .object({
    analysis: s.literal('drift'),
    label: s.string().optional(),
    assets: s.union([s.literal('all'), s.array(s.string().min(1)).min(1)]).default('all'),
    frequency: s.enum(FREQUENCIES).default('monthly'),
    start: isoDate.optional(),
    end: isoDate.optional(),
    lags: lagsSchema,
  })
  .strict();

export type PresentValueSpec = Infer<typeof presentValueSpecSchema>;
export type PresentValueSpecInput = Input<typeof presentValueSpecSchema>;
export type DriftSpec = Infer<typeof driftSpecSchema>;
export type DriftSpecInput = Input<typeof driftSpecSchema>;

/** Parses a present-value spec; exactly one of `asset` and `aggregate: true`. */
export function parsePresentValueSpec(input: unknown, root = 'spec'): PresentValueSpec {
  const r = presentValueSpecSchema.safeParse(input);
  if (!r.success) throw new DeflatorError('SPEC_INVALID', formatSpecIssues(r.error, root), 'fix the keys named above; docs/spec.md lists every key');
  const s = r.data;
  const problems: string[] = [];
  if (s.asset !== undefined && s.aggregate) problems.push(`${root}.asset: give one asset or "aggregate": true, not both`);
  if (s.asset === undefined && !s.aggregate) problems.push(`${root}.asset: name one asset, or set "aggregate": true`);
  if (s.asset !== undefined && s.assets !== 'all') problems.push(`${root}.assets: lists the assets of an aggregate; with one asset leave it out`);
  if (s.start && s.end && s.start.slice(0, 4) > s.end.slice(0, 4)) problems.push(`${root}.start: ${s.start} is after end ${s.end}`);
  if (problems.length) throw new DeflatorError('SPEC_INVALID', problems.join('\n'), 'fix the keys named above; docs/spec.md lists every key');
  return s;
}

/** Parses a drift spec. */
export function parseDriftSpec(input: unknown, root = 'spec'): DriftSpec {
  const r = driftSpecSchema.safeParse(input);
  if (!r.success) throw new DeflatorError('SPEC_INVALID', formatSpecIssues(r.error, root), 'fix the keys named above; docs/spec.md lists every key');
  if (r.data.start && r.data.end && r.data.start > r.data.end) throw new DeflatorError('SPEC_INVALID', `${root}.start: ${r.data.start} is after end ${r.data.end}`, 'fix the keys named above; docs/spec.md lists every key');
  return r.data;
}

export type FitSpec = Infer<typeof fitSpecSchema>;
export type FitSpecInput = Input<typeof fitSpecSchema>;
export type CompareSpec = Infer<typeof compareSpecSchema>;
export type ModelSpec = Infer<typeof modelSchema>;
export type EstimatorSpec = Infer<typeof estimatorSchema>;
export type BacktestSpec = Infer<typeof backtestSchema>;
export type BootstrapSpec = Infer<typeof bootstrapSchema>;
export type InstrumentsSpec = Infer<typeof instrumentsSchema>;
export type InstrumentScale = (typeof INSTRUMENT_SCALES)[number];

/** "spec.estimator.stage: expected one of ..." for each problem, one per line. */
export function formatSpecIssues(error: SchemaError, root = 'spec'): string {
  return error.issues
    .map((issue) => {
      const where = [root, ...issue.path.map(String)].join('.');
      return `${where}: ${issue.message}`;
    })
    .join('\n');
}

/** Checks that go across keys (which model needs which series). */
function crossCheck(spec: FitSpec, where: string): string[] {
  const problems: string[] = [];
  const m = spec.model;
  const e = spec.estimator;
  if (m.kind !== 'consumption' && m.factors.length === 0) problems.push(`${where}.model.factors: a ${m.kind} model needs at least one factor`);
  if (m.kind === 'consumption' && !m.consumption) problems.push(`${where}.model.consumption: the consumption model needs the name of a consumption series`);
  if (m.kind === 'consumption' && m.factors.length > 0) problems.push(`${where}.model.factors: the consumption model takes no factors`);
  // excess returns without "riskfree" are fine for assets stored as excess returns (METHODS 8): buildPanel names any asset that needs one
  if (m.kind === 'linear-gross' && spec.returns !== 'gross') problems.push(`${where}.returns: the linear-gross model prices gross returns; set "returns":"gross"`);
  if ((m.kind === 'linear' || m.kind === 'linear-raw') && spec.returns !== 'excess') problems.push(`${where}.returns: the ${m.kind} model prices excess returns; set "returns":"excess"`);
  if (m.delta !== undefined && !(m.kind === 'consumption' && spec.returns === 'excess')) problems.push(`${where}.model.delta: a fixed delta applies only to the consumption model on excess returns`);
  if (spec.includeRiskfree && spec.returns !== 'gross') problems.push(`${where}.includeRiskfree: the risk-free asset can be a test asset only with gross returns`);
  if (spec.includeRiskfree && !spec.riskfree) problems.push(`${where}.includeRiskfree: needs "riskfree" to name the series`);
  if (e.method !== 'gmm') {
    if (m.kind !== 'linear') problems.push(`${where}.estimator.method: ${e.method} regressions apply to the linear (beta-representation) model with excess returns`);
  }
  if (spec.start && spec.end && spec.start > spec.end) problems.push(`${where}.start: ${spec.start} is after end ${spec.end}`);
  const ins = spec.instruments;
  if (ins) {
    if (e.method !== 'gmm') problems.push(`${where}.instruments: ${e.method} regressions take no instruments; instruments scale the moments of a GMM fit (estimator.method "gmm")`);
    if (ins.scale !== 'returns' && m.kind === 'consumption') problems.push(`${where}.instruments.scale: "${ins.scale}" scales the factors of a linear model; the consumption model has none (use "returns")`);
    const seen = new Set<string>();
    for (const name of ins.series) {
      if (name === CONSTANT_INSTRUMENT) problems.push(`${where}.instruments.series: "${CONSTANT_INSTRUMENT}" is the constant, always the first instrument; list only stored series`);
      else if (seen.has(name)) problems.push(`${where}.instruments.series: "${name}" is listed twice`);
      else if (name === spec.riskfree) problems.push(`${where}.instruments.series: "${name}" is the risk-free series; instruments are series of any other kind`);
      seen.add(name);
    }
  }
  if (spec.backtest && spec.backtest.horizon < 1) problems.push(`${where}.backtest.horizon: must be at least 1`);
  return problems;
}

/**
 * Labels and names reach terminals and reports: a string holding a control character
 * (shared/text.ts) is refused, naming its key, before anything else is checked.
 */
function refuseControls(input: unknown, root: string): void {
  const problems = controlProblems(input, root);
  if (problems.length) throw new DeflatorError('SPEC_INVALID', problems.join('\n'), 'labels and names may not hold control characters (a terminal would act on them): remove them');
}

/** Parses and validates a fit (or back-test) spec; throws SPEC_INVALID naming every bad key. */
export function parseFitSpec(input: unknown, root = 'spec'): FitSpec {
  refuseControls(input, root);
  const r = fitSpecSchema.safeParse(input);
  if (!r.success) throw new DeflatorError('SPEC_INVALID', formatSpecIssues(r.error, root), 'fix the keys named above; docs/spec.md lists every key');
  const problems = crossCheck(r.data, root);
  if (problems.length) throw new DeflatorError('SPEC_INVALID', problems.join('\n'), 'fix the keys named above; docs/spec.md lists every key');
  return r.data;
}

/** Parses a comparison spec and expands it into one full fit spec per model. */
export function parseCompareSpec(input: unknown, root = 'spec'): { spec: CompareSpec; fits: FitSpec[] } {
  refuseControls(input, root);
  const r = compareSpecSchema.safeParse(input);
  if (!r.success) throw new DeflatorError('SPEC_INVALID', formatSpecIssues(r.error, root), 'fix the keys named above; docs/spec.md lists every key');
  const c = r.data;
  const fits = c.compare.map((entry, i) => {
    const full = {
      frequency: c.frequency,
      start: c.start,
      end: c.end,
      assets: c.assets,
      returns: entry.returns ?? c.returns,
      riskfree: c.riskfree,
      includeRiskfree: entry.includeRiskfree ?? c.includeRiskfree,
      dayCount: c.dayCount,
      label: entry.label ?? defaultModelLabel(entry.model, estimatorSchema.parse(entry.estimator ?? c.estimator ?? {}), entry.instruments),
      model: entry.model,
      estimator: entry.estimator ?? c.estimator ?? estimatorSchema.parse({}),
      backtest: c.backtest,
      instruments: entry.instruments ?? c.instruments,
    };
    return parseFitSpec(JSON.parse(JSON.stringify(full)), `${root}.compare.${i}`);
  });
  const seen = new Map<string, number>();
  const clashes: string[] = [];
  fits.forEach((f, i) => {
    const label = f.label as string;
    const before = seen.get(label);
    if (before !== undefined) clashes.push(`${root}.compare.${i}.label: "${label}" is also the label of model ${before} (${root}.compare.${before}); each model of a comparison needs its own label`);
    else seen.set(label, i);
  });
  if (clashes.length)
    throw new DeflatorError('SPEC_INVALID', clashes.join('\n'), 'give each entry its own "label", or leave the labels out: the default label names the model and its estimator (method, stage, weight, lags)');
  return { spec: c, fits };
}

/** The estimator in a few words: "GMM first, W = HJ, lags auto"; "GMM second, start W = I, lags 3"; "two-pass"; "time-series, lags 3". */
export function estimatorLabel(e: EstimatorSpec): string {
  if (e.method === 'two-pass') return `two-pass${e.intercept ? '' : ', no intercept'}`;
  if (e.method === 'time-series') return `time-series, lags ${e.lags}`;
  const w = e.weight === 'hj' ? 'HJ' : 'I';
  const stage = e.stage === 'first' ? `GMM first, W = ${w}` : `GMM ${e.stage === 'cue' ? 'CUE' : e.stage}, start W = ${w}`;
  return `${stage}, lags ${e.lags}`;
}

/** The model in a few words: "linear(harbor,ember)", "consumption(spending)". */
export function modelLabel(m: ModelSpec): string {
  return m.kind === 'consumption' ? `consumption(${m.consumption ?? ''})` : `${m.kind}(${m.factors.join(',')})`;
}

/**
 * The default label of a model in a comparison: the model and its estimator,
 * "linear(harbor) [GMM second, start W = I, lags auto]", and an entry's own instruments
 * when it has them ("... z(dp,spread; both)").
 */
export function defaultModelLabel(m: ModelSpec, e: EstimatorSpec, instruments?: InstrumentsSpec): string {
  const z = instruments && instruments.series.length ? ` z(${instruments.series.join(',')}; ${instruments.scale})` : '';
  return `${modelLabel(m)} [${estimatorLabel(e)}]${z}`;
}

/**
 * The JSON of a spec file's text. A UTF-8 byte-order mark (U+FEFF, which some editors
 * write at the start of a file) is skipped, as the CSV import does; anything else that
 * is not JSON is SPEC_INVALID naming `source` and the parser's position.
 */
export function specJson(text: string, source = 'the spec'): unknown {
  try {
    return JSON.parse(text.charCodeAt(0) === 0xfeff ? text.slice(1) : text);
  } catch (e) {
    throw new DeflatorError('SPEC_INVALID', `${source} is not valid JSON: ${e instanceof Error ? e.message : String(e)}`, 'fix the JSON syntax (a missing comma or quote)');
  }
}

/** Does this JSON look like a comparison spec? */
export function isCompareSpec(input: unknown): boolean {
  return typeof input === 'object' && input !== null && 'compare' in input;
}

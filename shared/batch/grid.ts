/**
 * Grid specs: one base fit (or back-test) spec and axes of alternatives, expanded into
 * numbered tasks, each a complete fit spec that `deflator fit` (and, with a "backtest"
 * block, `deflator backtest`) accepts as it is.
 *
 *   { "label": "factor search",
 *     "base": { "riskfree": "bill_yield", "model": { "kind": "linear" }, "backtest": { "window": 120 } },
 *     "grid": { "model.factors": { "subsets": ["harbor", "ember", "ledger"], "minSize": 1, "maxSize": 3 },
 *               "estimator.stage": ["first", "second"], "backtest.window": [60, 120] } }
 *
 * Expansion order (docs/spec.md, "Grids"): the axes in the fixed order of AXES below,
 * whatever their order in the file; the first axis varies slowest, the last fastest;
 * within an axis, values in the order given; factor subsets by size, then in the
 * lexicographic order of the candidates' positions. Task numbers start at 0.
 */
import { s, type AnySchema, type Infer, type Input } from '../schema.js';
import { DeflatorError } from '../errors.js';
import { backtestSchema, estimatorSchema, fitSpecSchema, formatSpecIssues, instrumentsSchema, modelSchema, parseFitSpec, type FitSpec } from '../spec.js';
import { FREQUENCIES } from '../data.js';
import { groupedInteger } from '../text.js';

/** Grids larger than this are refused unless the caller raises the limit (`--max-tasks`). */
export const DEFAULT_MAX_TASKS = 10_000;
/** The ceiling of `--max-tasks`: plan holds every task spec in memory and writes one file per task (about 1 kB each). */
export const HARD_MAX_TASKS = 100_000;

/**
 * The axes, in expansion order. Each value list is validated with the schema of the key
 * it sets, so a grid refuses what a spec would refuse, naming the key.
 */
export const AXES = [
  'frequency',
  'start',
  'end',
  'assets',
  'model.kind',
  'model.factors',
  'instruments',
  'estimator.method',
  'estimator.stage',
  'estimator.weight',
  'estimator.lags',
  'estimator.centered',
  'estimator.inferenceS',
  'estimator.intercept',
  'backtest.window',
  'backtest.step',
  'backtest.horizon',
  'backtest.expanding',
] as const;
export type AxisKey = (typeof AXES)[number];

/**
 * The grid's schemas, built on first use (a module that imports this file for its helpers,
 * like the run record's dependency list, does not pay for building them).
 */
function buildGridSchemas() {
  const isoDate = s.string().regex(/^\d{4}-\d{2}-\d{2}$/, 'expected a date as YYYY-MM-DD');
  const name = s.string().min(1);

  /** A set of test assets: "all", a list of names, or a named list. */
  const assetSetSchema = s.union([
    s.literal('all'),
    s.array(name).min(1),
    s.object({ name: s.string().min(1).max(80), assets: s.array(name).min(1) }).strict(),
  ]);

  /** All subsets of the candidates (sizes minSize..maxSize), each with the `always` factors first. */
  const factorSubsetsSchema = s
    .object({
      subsets: s.array(name).min(1).max(40),
      minSize: s.number().int().min(0).default(1),
      maxSize: s.number().int().min(0).optional(),
      always: s.array(name).default([]),
    })
    .strict();

  const values = <T extends AnySchema>(item: T) => s.array(item).min(1).max(10_000);

  const gridAxesSchema = s
    .object({
      frequency: values(s.enum(FREQUENCIES)).optional(),
      start: values(isoDate).optional(),
      end: values(isoDate).optional(),
      assets: values(assetSetSchema).optional(),
      'model.kind': values(modelSchema.shape.kind.unwrap()).optional(),
      'model.factors': s.union([values(s.array(name)), factorSubsetsSchema]).optional(),
      /** Conditioning information per task: an instruments block, or "none" for the unconditional model. */
      instruments: values(s.union([s.literal('none'), instrumentsSchema])).optional(),
      'estimator.method': values(estimatorSchema.shape.method.unwrap()).optional(),
      'estimator.stage': values(estimatorSchema.shape.stage.unwrap()).optional(),
      'estimator.weight': values(estimatorSchema.shape.weight.unwrap()).optional(),
      'estimator.lags': values(estimatorSchema.shape.lags.unwrap()).optional(),
      'estimator.centered': values(s.boolean()).optional(),
      'estimator.inferenceS': values(estimatorSchema.shape.inferenceS.unwrap()).optional(),
      'estimator.intercept': values(s.boolean()).optional(),
      'backtest.window': values(backtestSchema.shape.window).optional(),
      'backtest.step': values(s.number().int().min(1)).optional(),
      'backtest.horizon': values(s.number().int().min(1)).optional(),
      'backtest.expanding': values(s.boolean()).optional(),
    })
    .strict();

  /** The base spec: every key of a fit spec, each optional here (an axis may supply it). */
  const baseSchema = fitSpecSchema.extend({ model: modelSchema.default(modelSchema.parse({})) });

  const gridSpecSchema = s
    .object({
      label: s.string().max(200).optional(),
      base: baseSchema,
      grid: gridAxesSchema,
    })
    .strict();

  return { assetSetSchema, factorSubsetsSchema, gridAxesSchema, baseSchema, gridSpecSchema };
}

type GridSchemas = ReturnType<typeof buildGridSchemas>;
let schemas: GridSchemas | undefined;
function gridSchemas(): GridSchemas {
  return (schemas ??= buildGridSchemas());
}

export type GridSpec = Infer<GridSchemas['gridSpecSchema']>;
export type GridSpecInput = Input<GridSchemas['gridSpecSchema']>;

/** One axis value as the task list shows it. */
export interface BatchSetting {
  axis: AxisKey;
  value: string;
}

/** One task of an expanded grid. */
export interface GridTask {
  /** 0, 1, ... in expansion order. */
  task: number;
  /** The axis values of this task, in axis order (`factors=harbor+ember stage=second`). */
  label: string;
  settings: BatchSetting[];
  /** The complete fit spec (defaults filled in), with a backtest block when the task back-tests. */
  spec: FitSpec;
}

interface AxisValue {
  text: string;
  apply: (spec: Record<string, unknown>) => void;
}

const setIn = (spec: Record<string, unknown>, block: string, key: string, value: unknown) => {
  const inner = { ...((spec[block] as Record<string, unknown> | undefined) ?? {}) };
  inner[key] = value;
  spec[block] = inner;
};

function assetSetText(v: Infer<GridSchemas['assetSetSchema']>, i: number): string {
  if (v === 'all') return 'all';
  if (Array.isArray(v)) return v.length <= 3 ? v.join('+') : `set${i + 1}(${v.length})`;
  return v.name;
}

/** Number of k-subsets of n, exactly for the sizes a grid allows. */
function choose(n: number, k: number): number {
  if (k < 0 || k > n) return 0;
  let c = 1;
  for (let i = 1; i <= k; i++) c = (c * (n - k + i)) / i;
  return Math.round(c);
}

/** The k-subsets of 0..n-1 in lexicographic order. */
function* combinations(n: number, k: number): Generator<number[]> {
  const idx = Array.from({ length: k }, (_, i) => i);
  if (k > n) return;
  while (true) {
    yield [...idx];
    let i = k - 1;
    while (i >= 0 && idx[i] === n - k + i) i--;
    if (i < 0) return;
    idx[i]++;
    for (let j = i + 1; j < k; j++) idx[j] = idx[j - 1] + 1;
  }
}

type Axes = Infer<GridSchemas['gridAxesSchema']>;

function subsetBounds(a: Infer<GridSchemas['factorSubsetsSchema']>): { min: number; max: number } {
  const n = a.subsets.length;
  const max = a.maxSize ?? n;
  return { min: a.minSize, max };
}

/** How many values an axis has (without listing factor subsets). */
function axisCount(key: AxisKey, axes: Axes): number {
  const v = axes[key];
  if (v === undefined) return 1;
  if (key === 'model.factors' && !Array.isArray(v)) {
    const a = v as Infer<GridSchemas['factorSubsetsSchema']>;
    const { min, max } = subsetBounds(a);
    let n = 0;
    for (let k = min; k <= Math.min(max, a.subsets.length); k++) n += choose(a.subsets.length, k);
    return n;
  }
  return (v as unknown[]).length;
}

function* axisValues(key: AxisKey, axes: Axes): Generator<AxisValue> {
  const v = axes[key];
  if (v === undefined) return;
  const [block, field] = key.includes('.') ? key.split('.') : [undefined, key];
  if (key === 'model.factors') {
    const put = (factors: string[]): AxisValue => ({
      text: factors.length ? factors.join('+') : '(none)',
      apply: (s) => setIn(s, 'model', 'factors', factors),
    });
    if (Array.isArray(v)) {
      for (const f of v as string[][]) yield put(f);
      return;
    }
    const a = v as Infer<GridSchemas['factorSubsetsSchema']>;
    const { min, max } = subsetBounds(a);
    for (let k = min; k <= Math.min(max, a.subsets.length); k++) {
      for (const pick of combinations(a.subsets.length, k)) yield put([...a.always, ...pick.map((i) => a.subsets[i])]);
    }
    return;
  }
  if (key === 'instruments') {
    for (const x of v as (Infer<typeof instrumentsSchema> | 'none')[]) {
      if (x === 'none') yield { text: 'none', apply: (s) => delete s.instruments };
      else yield { text: `${x.series.join('+') || 'const'}/${x.scale}/lag${x.lag}`, apply: (s) => (s.instruments = x) };
    }
    return;
  }
  if (key === 'assets') {
    const sets = v as Infer<GridSchemas['assetSetSchema']>[];
    for (let i = 0; i < sets.length; i++) {
      const set = sets[i];
      const names = set === 'all' ? 'all' : Array.isArray(set) ? set : set.assets;
      yield { text: assetSetText(set, i), apply: (s) => (s.assets = names) };
    }
    return;
  }
  for (const x of v as (string | number | boolean)[]) {
    yield { text: String(x), apply: block ? (s) => setIn(s, block, field, x) : (s) => (s[field] = x) };
  }
}

const short = (key: AxisKey) => (key.includes('.') ? key.split('.')[1] : key);

function specInvalid(message: string): DeflatorError {
  return new DeflatorError('SPEC_INVALID', message, 'fix the keys named above; docs/spec.md ("Grids") lists every grid key');
}

/** Checks across grid keys that the schema cannot express. */
function gridProblems(g: GridSpec): string[] {
  const problems: string[] = [];
  const axes = g.grid;
  if (AXES.every((k) => axes[k] === undefined)) problems.push('spec.grid: no axis given; name at least one key to vary (docs/spec.md lists them)');
  for (const key of AXES) {
    const v = axes[key];
    if (v === undefined) continue;
    if (key === 'model.factors' && !Array.isArray(v)) {
      const a = v as Infer<GridSchemas['factorSubsetsSchema']>;
      const { min, max } = subsetBounds(a);
      if (new Set(a.subsets).size !== a.subsets.length) problems.push(`spec.grid.model.factors.subsets: a factor is listed twice`);
      const clash = a.always.filter((f) => a.subsets.includes(f));
      if (clash.length) problems.push(`spec.grid.model.factors.always: ${clash.join(', ')} also in subsets; list a factor in one of them`);
      if (max > a.subsets.length) problems.push(`spec.grid.model.factors.maxSize: ${max} is more than the ${a.subsets.length} candidate factors`);
      if (min > max) problems.push(`spec.grid.model.factors.minSize: ${min} is above maxSize ${max}`);
      continue;
    }
    const texts = (v as unknown[]).map((x) => JSON.stringify(x));
    const seen = new Map<string, number>();
    texts.forEach((t, i) => {
      if (seen.has(t)) problems.push(`spec.grid.${key}.${i}: the same value as item ${seen.get(t)}; each value once`);
      else seen.set(t, i);
    });
  }
  if (axes.assets) {
    const names = new Map<string, number>();
    axes.assets.forEach((set, i) => {
      const t = assetSetText(set, i);
      if (names.has(t)) problems.push(`spec.grid.assets.${i}: the name "${t}" is used by item ${names.get(t)}; give each set its own name`);
      else names.set(t, i);
    });
  }
  if (g.base.label !== undefined) problems.push('spec.base.label: each task gets its own label from its grid values; put a label for the whole grid in spec.label');
  return problems;
}

/** Parses and checks a grid spec (SPEC_INVALID names every bad key). */
export function parseGridSpec(input: unknown): GridSpec {
  const r = gridSchemas().gridSpecSchema.safeParse(input);
  if (!r.success) throw specInvalid(formatSpecIssues(r.error, 'spec'));
  const problems = gridProblems(r.data);
  if (problems.length) throw specInvalid(problems.join('\n'));
  return r.data;
}

/** Does this JSON look like a grid spec? */
export function isGridSpec(input: unknown): boolean {
  return typeof input === 'object' && input !== null && 'grid' in input && 'base' in input;
}

/** The number of tasks the grid expands to, counted without expanding it. */
export function gridSize(g: GridSpec): number {
  let n = 1;
  for (const key of AXES) n *= axisCount(key, g.grid);
  return n;
}

/** The axes the grid varies, with their value counts, in expansion order. */
export function gridAxes(g: GridSpec): { axis: AxisKey; count: number }[] {
  return AXES.filter((k) => g.grid[k] !== undefined).map((axis) => ({ axis, count: axisCount(axis, g.grid) }));
}

/** The batch's label: the grid's own, else the axes it varies. */
export function gridLabel(g: GridSpec): string {
  return g.label ?? `grid over ${gridAxes(g).map((a) => a.axis).join(' x ')}`;
}

/** Refuses a grid above the limit before anything is expanded. */
export function checkGridSize(g: GridSpec, maxTasks = DEFAULT_MAX_TASKS): number {
  const n = gridSize(g);
  if (n === 0) throw specInvalid('spec.grid: the axes expand to no task (a factor-subset axis with minSize above maxSize?)');
  if (n > maxTasks) {
    const parts = gridAxes(g).map((a) => `${a.axis} ${a.count}`).join(' x ');
    throw new DeflatorError(
      'INPUT_INVALID',
      `the grid expands to ${groupedInteger(n)} tasks (${parts}), more than the limit of ${groupedInteger(maxTasks)}`,
      n > HARD_MAX_TASKS
        ? `split it into grids of at most ${groupedInteger(HARD_MAX_TASKS)} tasks (fewer factor candidates, a smaller maxSize, or one grid per value of an axis)`
        : `pass --max-tasks ${n} to plan it anyway, or narrow the axes`,
    );
  }
  return n;
}

/**
 * The tasks of a grid, in expansion order, each a complete parsed fit spec. A task the
 * spec rules refuse (a model without factors, a two-pass fit of a gross-return model)
 * is SPEC_INVALID naming the task and the key; at most `shown` such tasks are listed.
 */
export function expandGrid(g: GridSpec, opts: { maxTasks?: number; shown?: number } = {}): GridTask[] {
  const total = checkGridSize(g, opts.maxTasks ?? DEFAULT_MAX_TASKS);
  const axes = AXES.filter((k) => g.grid[k] !== undefined);
  const lists = axes.map((k) => [...axisValues(k, g.grid)]);
  const base = JSON.parse(JSON.stringify(g.base)) as Record<string, unknown>;
  const tasks: GridTask[] = [];
  const problems: string[] = [];
  let failed = 0;
  const pick = new Array<number>(axes.length).fill(0);
  for (let task = 0; task < total; task++) {
    const spec = JSON.parse(JSON.stringify(base)) as Record<string, unknown>;
    const settings: BatchSetting[] = [];
    axes.forEach((axis, a) => {
      const v = lists[a][pick[a]];
      v.apply(spec);
      settings.push({ axis, value: v.text });
    });
    const label = settings.map((s) => `${short(s.axis)}=${s.value}`).join(' ');
    spec.label = g.label ? `${g.label}: ${label}` : label;
    try {
      tasks.push({ task, label, settings, spec: parseFitSpec(spec, `task ${task} (${label})`) });
    } catch (e) {
      failed++;
      if (problems.length < (opts.shown ?? 5)) problems.push((e as Error).message);
    }
    for (let a = axes.length - 1; a >= 0; a--) {
      pick[a]++;
      if (pick[a] < lists[a].length) break;
      pick[a] = 0;
    }
  }
  if (failed) {
    throw new DeflatorError(
      'SPEC_INVALID',
      `${failed} of ${total} grid task(s) are not valid specs:\n${problems.join('\n')}${failed > problems.length ? `\n... and ${failed - problems.length} more` : ''}`,
      'change spec.base or the grid axis named above so that every combination is a valid spec (docs/spec.md)',
    );
  }
  return tasks;
}

/**
 * The keys of a task spec that can decide its returns panel (everything but the
 * estimator, the back-test block and the label): tasks with equal keys share one panel
 * snapshot. Erring on the side of more keys costs only a panel built twice (plan keeps
 * one copy per fingerprint).
 */
export function panelKey(spec: FitSpec): string {
  const { estimator: _estimator, backtest: _backtest, label: _label, ...rest } = spec;
  return JSON.stringify(rest);
}

/** Series and asset names a grid can read (for run records' data dependencies). */
export function gridNames(g: GridSpec): { series: string[]; assets: string[] | 'all' } {
  const series = new Set<string>();
  const b = g.base;
  if (b.riskfree) series.add(b.riskfree);
  for (const f of b.model.factors) series.add(f);
  if (b.model.consumption) series.add(b.model.consumption);
  for (const z of b.instruments?.series ?? []) series.add(z);
  for (const x of g.grid.instruments ?? []) if (x !== 'none') for (const z of x.series) series.add(z);
  const fx = g.grid['model.factors'];
  if (fx) {
    if (Array.isArray(fx)) for (const l of fx) for (const f of l) series.add(f);
    else for (const f of [...fx.always, ...fx.subsets]) series.add(f);
  }
  const sets = g.grid.assets ?? [b.assets];
  let all = false;
  const assets = new Set<string>();
  for (const s of sets) {
    if (s === 'all') all = true;
    else for (const a of Array.isArray(s) ? s : s.assets) assets.add(a);
  }
  return { series: [...series], assets: all ? 'all' : [...assets] };
}


/**
 * `deflator demo`: builds the demo database from sample-data/ (an invented market) and
 * prints what it holds. Each further demo step is one call in runDemo below.
 */
import type { Command } from 'commander';
import path from 'node:path';
import { DeflatorError } from '../../../shared/errors.js';
import { CAUTION } from '../../../shared/results.js';
import { readFileSync } from 'node:fs';
import { parseCompareSpec, parseFitSpec } from '../../../shared/spec.js';
import { DEMO_SETS, buildDemo, findSampleData, type DemoSet } from '../../data/demo.js';
import { runAnalysis } from '../../services/analysis.js';
import { analysisJson, analysisText } from '../../services/report.js';
import { defaultThreads, withCompute } from '../compute.js';
import { progressBar } from '../progress.js';
import { formatImportReport, formatInfo } from '../../data/summary.js';
import { Store } from '../../store/store.js';
import { out } from '../terminal.js';

export const DEFAULT_DEMO_DB = 'deflator-demo.db';

export interface DemoOptions {
  db: string;
  set: string;
  json?: boolean;
}

/** What a demo step gets: the built database, the options, and where to write. */
export interface DemoContext {
  dbPath: string;
  set: DemoSet;
  options: DemoOptions;
  /** Text output (ignored with --json). */
  print: (text: string) => void;
  /** Keys of the --json output. */
  json: Record<string, unknown>;
}

export function register(program: Command): void {
  program
    .command('demo')
    .description('build a demo database from the bundled, invented sample data and show what it holds')
    .option('--db <path>', 'where to write the demo database (replaced if it is a deflator database)', DEFAULT_DEMO_DB)
    .option('--set <name>', `sample set: ${DEMO_SETS.join(' | ')} (monthly: 30 assets over 24 years with factors, risk-free and consumption; daily: 4 assets over 2 years; returns: 12 portfolios as monthly returns, YYYYMM, percent, with factors and the bill rate)`, 'monthly')
    .option('--json', 'print the import reports and store contents as one JSON object')
    .action(async (opts: DemoOptions) => {
      await runDemo(opts);
    });
}

/** Imports the sample set into a fresh database and describes it. */
async function importStep(ctx: DemoContext): Promise<void> {
  const built = await buildDemo(ctx.dbPath, { set: ctx.set });
  const store = new Store(ctx.dbPath, { mustExist: true });
  try {
    const info = store.info();
    ctx.json.db = ctx.dbPath;
    ctx.json.set = ctx.set;
    ctx.json.imports = built.reports;
    ctx.json.info = info;
    ctx.print(`Demo database ${ctx.dbPath} (${ctx.set} set; invented data, see sample-data/README.md)\n`);
    for (const r of built.reports) ctx.print(formatImportReport({ ...r, file: path.relative(process.cwd(), r.file) || r.file }));
    ctx.print(`\n${formatInfo(info)}`);
  } finally {
    store.close();
  }
}

/** The demo's comparison spec: three candidate models on the demo market. */
export const DEMO_COMPARE_SPEC = 'specs/compare-factor-models.json';

/**
 * Compares the demo's candidate models (sample-data/specs/compare-factor-models.json) and
 * records the run (src-main/services), so `deflator runs` / the app's run history start non-empty.
 */
async function compareStep(ctx: DemoContext): Promise<void> {
  const specPath = path.join(findSampleData(), DEMO_COMPARE_SPEC);
  const { spec, fits } = parseCompareSpec(JSON.parse(readFileSync(specPath, 'utf8')));
  const store = new Store(ctx.dbPath, { mustExist: true });
  try {
    const bar = progressBar('demo comparison');
    const { result, run } = await withCompute(defaultThreads(), (compute) =>
      runAnalysis(store, { kind: 'compare', spec, fits }, compute, { onProgress: (d, t, stage) => bar.update(d, t, stage) }),
    ).finally(() => bar.finish());
    if (!run) throw new Error('the demo comparison was not recorded');
    const { caution: _c, ...json } = analysisJson(result, run);
    ctx.json.compare = json;
    ctx.print(`\nModel comparison on the demo market (sample-data/${DEMO_COMPARE_SPEC})\n`);
    ctx.print(analysisText(result));
    ctx.print(`Recorded as run ${run.id}: deflator show ${run.id} --db ${ctx.dbPath}; deflator export ${run.id} --db ${ctx.dbPath} --format html --out report.html`);
  } finally {
    store.close();
  }
}

/** The returns set's fit: the twelve return portfolios on three factors. */
export const DEMO_RETURNS_SPEC = 'specs/returns-linear-second.json';

/**
 * Fits the returns set's model (sample-data/specs/returns-linear-second.json) on the
 * portfolios imported as returns, in the worker pool, and records the run.
 */
async function returnsFitStep(ctx: DemoContext): Promise<void> {
  const specPath = path.join(findSampleData(), DEMO_RETURNS_SPEC);
  const spec = parseFitSpec(JSON.parse(readFileSync(specPath, 'utf8')));
  const store = new Store(ctx.dbPath, { mustExist: true });
  try {
    const bar = progressBar('demo fit');
    const { result, run } = await withCompute(1, (compute) => runAnalysis(store, { kind: 'fit', spec }, compute, { onProgress: (d, t, stage) => bar.update(d, t, stage) })).finally(() => bar.finish());
    if (!run) throw new Error('the demo fit was not recorded');
    const { caution: _c, ...json } = analysisJson(result, run);
    ctx.json.fit = json;
    ctx.print(`\nFit on the portfolios imported as returns (sample-data/${DEMO_RETURNS_SPEC})\n`);
    ctx.print(analysisText(result));
    ctx.print(`Recorded as run ${run.id}: deflator show ${run.id} --db ${ctx.dbPath}; deflator backtest sample-data/specs/returns-backtest-rolling.json --db ${ctx.dbPath}`);
  } finally {
    store.close();
  }
}

export async function runDemo(options: DemoOptions): Promise<void> {
  if (!(DEMO_SETS as readonly string[]).includes(options.set)) throw new DeflatorError('INPUT_INVALID', `unknown demo set "${options.set}"`, `use --set ${DEMO_SETS.join(' or --set ')}`);
  const ctx: DemoContext = {
    dbPath: options.db,
    set: options.set as DemoSet,
    options,
    print: options.json ? () => {} : (s) => out(s.endsWith('\n') ? s : `${s}\n`),
    json: {},
  };
  await importStep(ctx);
  // Further demo steps go here, one call each.
  if (ctx.set === 'monthly') await compareStep(ctx);
  if (ctx.set === 'returns') await returnsFitStep(ctx);
  if (options.json) out(`${JSON.stringify({ ...ctx.json, caution: CAUTION }, null, 2)}\n`);
  else if (ctx.set === 'daily') ctx.print(`\n${CAUTION}`); // the comparison and fit reports end with it
}

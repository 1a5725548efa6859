import { beforeEach, describe, expect, it, vi } from 'vitest';
import { createPinia, setActivePinia } from 'pinia';
import { BridgeError } from '../../shared/bridge/client.js';
import type { BridgeClient, CallOptions } from '../../shared/bridge/client.js';
import { parseCompareSpec, parseFitSpec } from '../../shared/spec.js';
import { setBridge } from '../../src-renderer/src/bridge/index.js';
import { useProjectStore } from '../../src-renderer/src/stores/project.js';
import { useModelStore } from '../../src-renderer/src/stores/model.js';
import { useFitStore } from '../../src-renderer/src/stores/fit.js';
import { useBacktestStore } from '../../src-renderer/src/stores/backtest.js';
import { useCompareStore } from '../../src-renderer/src/stores/compare.js';
import { tinyFit } from '../src-main/app/fakes.js';

type Mocked = { [K in keyof BridgeClient]: ReturnType<typeof vi.fn> };

function mockClient(overrides: Partial<Record<keyof BridgeClient, (...args: never[]) => unknown>> = {}): Mocked {
  const coverage = {
    assets: [{ name: 'A1', kind: 'asset', first: '2001-01-31', last: '2010-12-31', count: 120, gaps: 0 }],
    series: [
      { name: 'MKT', kind: 'factor', first: '2001-01-31', last: '2010-12-31', count: 120, gaps: 0 },
      { name: 'RF', kind: 'riskfree', first: '2001-01-31', last: '2010-12-31', count: 120, gaps: 0 },
    ],
    portfolios: [{ name: 'S1', kind: 'portfolio', first: '2001-01-31', last: '2010-12-31', count: 120, gaps: 0 }],
  };
  const base: Record<string, (...args: never[]) => unknown> = {
    info: async () => ({ version: '0', database: 'demo.db', caution: 'c', counts: { assets: 1, series: 2, portfolios: 1 } }),
    coverage: async () => coverage,
    imports: async () => [{ id: 3, file: 'prices.csv', kind: 'prices', importedAt: '2026-01-01T00:00:00.000Z', rowsRead: 10, rowsStored: 10, rowsRejected: 0, warnings: [{ kind: 'gap', subject: 'A1', message: 'a gap' }], warningCount: 1 }],
    history: async () => ({ asset: 'A1', frequency: 'stored', dates: [], price: [], totalReturn: [], dividends: 0 }),
    importFile: async () => ({ file: 'x.csv', kind: 'prices', rows: 10, names: ['A1'], warnings: [], durationMs: 1 }),
    checkSpec: async () => ({}),
    fit: async () => tinyFit(),
    backtest: async () => ({ kind: 'backtest' }),
    compare: async () => ({ kind: 'compare' }),
    cancel: async () => ({ cancelled: true }),
    onEvent: () => () => undefined,
    ...overrides,
  };
  const m = {} as Mocked;
  for (const [k, f] of Object.entries(base)) (m as Record<string, unknown>)[k] = vi.fn(f);
  setBridge(m as unknown as BridgeClient);
  return m;
}

beforeEach(() => setActivePinia(createPinia()));

describe('project store', () => {
  it('loads info and coverage, and derives the name lists the set-up offers', async () => {
    const m = mockClient();
    const p = useProjectStore();
    await p.load();
    expect(m.info).toHaveBeenCalledTimes(1);
    expect(p.info?.database).toBe('demo.db');
    expect(p.factorNames).toEqual(['MKT']);
    expect(p.riskfreeNames).toEqual(['RF']);
    expect(p.testAssetNames).toEqual(['S1', 'A1']);
    expect(p.historyAsset).toBe('A1');
    expect(p.isEmpty).toBe(false);
    // the import log lists the stored imports with their warnings
    expect(p.storedImports.map((e) => [e.file, e.warnings.length])).toEqual([['prices.csv', 1]]);
  });

  it('keeps a failing load as a readable error with the hint', async () => {
    mockClient({ coverage: async () => Promise.reject(new BridgeError('NOT_FOUND', 'database gone', 'open another')) });
    const p = useProjectStore();
    await p.load();
    expect(p.error).toMatchObject({ code: 'NOT_FOUND', message: 'database gone', hint: 'open another' });
    expect(p.loading).toBe(false);
  });

  it('imports with progress, logs the report and refreshes coverage', async () => {
    const m = mockClient({
      importFile: async (_req: never, opts: CallOptions) => {
        opts.onProgress?.({ type: 'progress', taskId: 't', done: 1, total: 4 });
        expect(useProjectStore().importProgress).toBe(0.25);
        return { file: '/d/p.csv', kind: 'prices', rows: 3, names: ['A1'], warnings: [{ line: 2, message: 'duplicate date' }], durationMs: 2 };
      },
    });
    const p = useProjectStore();
    const r = await p.importFile({ path: '/d/p.csv' }, 'prices');
    expect(r?.rows).toBe(3);
    expect(m.importFile.mock.calls[0][0]).toEqual({ source: { path: '/d/p.csv' }, kind: 'prices' });
    expect(p.importLog[0]).toMatchObject({ file: 'p.csv', kind: 'prices', report: { warnings: [{ line: 2 }] } });
    expect(p.importProgress).toBe(1);
    expect(m.coverage).toHaveBeenCalled();
    expect(p.importing).toBe(false);
  });

  it('stages files: previews the first with the options (a long upload cut at a line), imports only on importStaged, then clears the stage', async () => {
    const preview = { file: 'r.csv', kind: 'returns', columns: [{ name: 'date', role: 'date' }], rows: [], more: false, reads: { names: ['P1'], first: null, last: null, frequency: null, warnings: [] } };
    const m = mockClient({ previewImport: async () => preview, importFile: async () => ({ file: 'r.csv', kind: 'returns', rows: 2, names: ['P1'], warnings: [], durationMs: 1 }) });
    const p = useProjectStore();
    p.importOptions = { dateFormat: 'YYYYMM', percent: true };
    const long = `date,P1\n${'200101,1.5\n'.repeat(40_000)}`;
    await p.stage([{ name: 'r.csv', text: long }], 'returns');
    expect(m.importFile).not.toHaveBeenCalled();
    const req = m.previewImport.mock.calls[0][0] as { source: { text: string }; kind: string; options: unknown };
    expect(req.kind).toBe('returns');
    expect(req.options).toEqual({ dateFormat: 'YYYYMM', percent: true });
    expect(req.source.text.length).toBeLessThanOrEqual(256 * 1024);
    expect(req.source.text.endsWith('\n')).toBe(true);
    expect(p.preview).toEqual(preview);
    expect(await p.importStaged()).toBe(true);
    expect(m.importFile.mock.calls[0][0]).toEqual({ source: { name: 'r.csv', text: long }, kind: 'returns', options: { dateFormat: 'YYYYMM', percent: true } });
    expect(p.staged).toEqual([]);
    expect(p.preview).toBeNull();
  });

  it('a preview that fails keeps the error and nothing is imported', async () => {
    const m = mockClient({ previewImport: async () => Promise.reject(new BridgeError('FORBIDDEN', '/x.csv is outside the folders this session may read', 'pick it in a dialog')) });
    const p = useProjectStore();
    await p.stage([{ path: '/x.csv' }], 'prices');
    expect(p.previewError).toMatchObject({ code: 'FORBIDDEN' });
    expect(p.preview).toBeNull();
    expect(m.importFile).not.toHaveBeenCalled();
  });

  it('logs a failed import with its error', async () => {
    mockClient({ importFile: async () => Promise.reject(new BridgeError('INPUT_INVALID', 'p.csv line 4: price "abc" is not a number', 'fix the cell')) });
    const p = useProjectStore();
    expect(await p.importFile({ name: 'p.csv', text: 'x' }, 'prices')).toBeUndefined();
    expect(p.importError?.message).toContain('line 4');
    expect(p.importLog[0].error?.hint).toBe('fix the cell');
  });
});

describe('model set-up store', () => {
  it('builds a spec the shared validator accepts, from suggestions', () => {
    const s = useModelStore();
    s.suggest({ testAssets: ['A1'], portfolios: ['S1', 'S2'], factors: ['MKT', 'SMB'], riskfree: ['RF'], consumption: [] });
    expect(s.form.assets).toEqual(['S1', 'S2']);
    // No factor is chosen for the user: the spec asks for one until the user picks (or picks all).
    expect(s.form.factors).toEqual([]);
    expect(Object.keys(s.problems)).toEqual(['model.factors']);
    s.setAllFactors(['MKT', 'SMB']);
    expect(s.form.factors).toEqual(['MKT', 'SMB']);
    s.setAllFactors([]);
    s.toggle('factors', 'MKT');
    expect(s.valid).toBe(true);
    const spec = parseFitSpec(s.spec);
    expect(spec.model).toEqual({ kind: 'linear', factors: ['MKT'] });
    expect(spec.riskfree).toBe('RF');
    expect(spec.backtest).toEqual({ window: 60, step: 1, horizon: 1, expanding: false });
    expect('backtest' in s.fitSpec).toBe(false);
  });

  it('points problems at the spec key that caused them', () => {
    const s = useModelStore();
    s.form.assets = ['S1'];
    s.form.factors = [];
    expect(s.valid).toBe(false);
    // (no risk-free series is a problem only for assets that are not stored as excess returns: the data decide, not the form)
    expect(Object.keys(s.problems)).toEqual(['model.factors']);
    s.form.riskfree = 'RF';
    s.form.factors = ['MKT'];
    s.form.lagsAuto = false;
    s.form.lags = -1;
    expect(Object.keys(s.problems)).toEqual(['estimator.lags']);
  });

  it('keeps returns consistent with the model kind', () => {
    const s = useModelStore();
    s.setKind('linear-gross');
    expect(s.form.returns).toBe('gross');
    s.setKind('linear');
    expect(s.form.returns).toBe('excess');
  });

  it('saves and loads the spec JSON without loss', () => {
    const s = useModelStore();
    Object.assign(s.form, { assets: ['S1', 'S2'], riskfree: 'RF', factors: ['MKT', 'SMB'], stage: 'iterated', lagsAuto: false, lags: 4, start: '2002-01-31', label: 'two factor' });
    const text = s.specText;
    s.reset();
    expect(s.form.factors).toEqual([]);
    expect(s.loadSpecText(text)).toBe(true);
    expect(s.specText).toBe(text);
    expect(s.loadSpecText('{"model":')).toBe(false);
    expect(s.loadError).toMatch(/not valid JSON/);
    // a file saved with a UTF-8 byte-order mark loads like one without
    expect(s.loadSpecText(`\uFEFF${text}`)).toBe(true);
    expect(s.specText).toBe(text);
    expect(s.loadSpecText('{"model":{"kind":"linear","factors":["M"]},"colour":1}')).toBe(false);
    expect(s.loadError).toContain('colour');
  });

  it('collects models for a comparison spec that the shared validator accepts', () => {
    const s = useModelStore();
    Object.assign(s.form, { assets: ['S1', 'S2'], riskfree: 'RF', factors: ['MKT'] });
    expect(s.addToComparison()).toBe('added');
    s.form.factors = ['MKT', 'SMB'];
    expect(s.addToComparison()).toBe('added');
    expect(s.addToComparison()).toBe('unchanged'); // the same model again changes nothing
    // The same model at another stage is another model: its default label names the estimator.
    s.form.stage = 'first';
    expect(s.addToComparison()).toBe('added');
    expect(s.compareSet.map((e) => e.label)).toEqual([
      'linear(MKT) [GMM second, start W = I, lags auto]',
      'linear(MKT,SMB) [GMM second, start W = I, lags auto]',
      'linear(MKT,SMB) [GMM first, W = I, lags auto]',
    ]);
    const { fits } = parseCompareSpec(s.compareSpec);
    expect(fits.map((f) => [f.model.factors, f.estimator.stage])).toEqual([[['MKT'], 'second'], [['MKT', 'SMB'], 'second'], [['MKT', 'SMB'], 'first']]);
    // A different model under a label already in the set waits for the user's answer.
    s.form.label = 'mine';
    s.addToComparison();
    s.form.stage = 'second';
    expect(s.addToComparison()).toBe('ask');
    expect(s.pendingReplace?.estimator.stage).toBe('second');
    s.resolveReplace(false);
    expect(s.compareSet.find((e) => e.label === 'mine')?.estimator.stage).toBe('first');
    expect(s.addToComparison()).toBe('ask');
    s.resolveReplace(true);
    expect(s.compareSet.find((e) => e.label === 'mine')?.estimator.stage).toBe('second');
    expect(s.pendingReplace).toBeNull();
    s.removeFromComparison('linear(MKT) [GMM second, start W = I, lags auto]');
    expect(s.compareSet.length).toBe(3);
  });

  it('instruments: off leaves the key out; on, the spec carries series, scale and lag, loads back, and travels with a comparison entry', () => {
    const s = useModelStore();
    Object.assign(s.form, { assets: ['S1', 'S2'], riskfree: 'RF', factors: ['MKT'] });
    expect('instruments' in s.spec).toBe(false);
    s.form.instrumentsOn = true;
    s.toggle('instruments', 'DY');
    s.toggle('instruments', 'TS');
    s.form.instrumentScale = 'both';
    expect(parseFitSpec(s.spec).instruments).toEqual({ series: ['DY', 'TS'], scale: 'both', lag: 1 });
    const text = s.specText;
    s.reset();
    expect(s.loadSpecText(text)).toBe(true);
    expect([s.form.instrumentsOn, s.form.instruments, s.form.instrumentScale]).toEqual([true, ['DY', 'TS'], 'both']);
    s.addToComparison();
    s.form.instrumentScale = 'returns';
    s.addToComparison();
    // The default label names the model, its estimator and its instruments (shared/spec.ts defaultModelLabel).
    expect(s.compareSet.map((e) => e.label)).toEqual(['linear(MKT) [GMM second, start W = I, lags auto] z(DY,TS; both)', 'linear(MKT) [GMM second, start W = I, lags auto] z(DY,TS; returns)']);
    s.removeFromComparison('linear(MKT) [GMM second, start W = I, lags auto] z(DY,TS; returns)');
    s.form.instrumentsOn = false;
    s.addToComparison();
    const { fits } = parseCompareSpec(s.compareSpec);
    expect(fits.map((f) => f.instruments?.scale)).toEqual(['both', undefined]);
    // the validator's refusal reaches the form's key
    s.form.instrumentsOn = true;
    s.form.method = 'two-pass';
    expect(Object.keys(s.problems)).toContain('instruments');
  });
});

describe('fit store', () => {
  it('runs a fit and keeps the result and the time the engine took', async () => {
    const m = mockClient({ fit: async () => new Promise((r) => setTimeout(() => r(tinyFit('m1')), 20)) });
    const f = useFitStore();
    const spec = { riskfree: 'RF', model: { factors: ['MKT'] } };
    const p = f.run(spec);
    expect(f.running).toBe(true);
    await p;
    expect(m.fit.mock.calls[0][0]).toEqual({ spec });
    expect(f.result?.label).toBe('m1');
    expect(f.running).toBe(false);
    expect(f.engineMs).toBeGreaterThanOrEqual(15);
  });

  it('keeps engine errors with the fields they name', async () => {
    mockClient({ fit: async () => Promise.reject(new BridgeError('SINGULAR', 'spec.model.factors: factors MKT and MKT2 are collinear', 'drop one')) });
    const f = useFitStore();
    await f.run({ riskfree: 'RF', model: { factors: ['MKT', 'MKT2'] } });
    expect(f.result).toBeNull();
    expect(f.error).toMatchObject({ code: 'SINGULAR', hint: 'drop one', fields: { 'model.factors': 'factors MKT and MKT2 are collinear' } });
  });

  it('toggles the pricing-error sort', () => {
    const f = useFitStore();
    f.setSort('alpha');
    expect([f.sort, f.descending]).toEqual(['alpha', false]);
    f.setSort('alpha');
    expect(f.descending).toBe(true);
  });
});

describe('back-test store', () => {
  it('reports progress up to 100%', async () => {
    const seen: number[] = [];
    mockClient({
      backtest: async (_r: never, opts: CallOptions) => {
        for (let i = 1; i <= 5; i++) {
          opts.onProgress?.({ type: 'progress', taskId: 't', done: i, total: 5, stage: 'windows' });
          seen.push(useBacktestStore().fraction);
        }
        return { kind: 'backtest', windows: 5 };
      },
    });
    const b = useBacktestStore();
    await b.run({ riskfree: 'RF', model: { factors: ['MKT'] }, backtest: { window: 24 } });
    expect(seen).toEqual([0.2, 0.4, 0.6, 0.8, 1]);
    expect(b.fraction).toBe(1);
    expect(b.result).toMatchObject({ windows: 5 });
  });

  it('cancels through the abort signal, without showing an error', async () => {
    mockClient({
      backtest: (_r: never, opts: CallOptions) =>
        new Promise((_, reject) => opts.signal?.addEventListener('abort', () => reject(new BridgeError('CANCELLED', 'cancelled')), { once: true })),
    });
    const b = useBacktestStore();
    const p = b.run({ riskfree: 'RF', model: { factors: ['MKT'] }, backtest: { window: 24 } });
    b.cancel();
    await p;
    expect(b.cancelled).toBe(true);
    expect(b.error).toBeNull();
    expect(b.running).toBe(false);
  });
});

describe('comparison store', () => {
  it('sends the comparison spec and keeps the result', async () => {
    const m = mockClient();
    const c = useCompareStore();
    await c.run({ compare: [] });
    expect(m.compare.mock.calls[0][0]).toEqual({ spec: { compare: [] } });
    expect(c.result).toMatchObject({ kind: 'compare' });
  });
});

describe('error fields', () => {
  it('finds the spec key an engine message names in passing', async () => {
    const { fieldsOf } = await import('../../src-renderer/src/lib/errors.js');
    expect(fieldsOf('risk-free series "rf" (spec.riskfree) is not in demo.db; stored riskfree series: bill_yield')).toEqual({
      riskfree: 'risk-free series "rf" (spec.riskfree) is not in demo.db; stored riskfree series: bill_yield',
    });
    expect(fieldsOf('spec.compare.1.model.factors: needs a factor\nfit.spec.start: bad date')).toEqual({ 'model.factors': 'needs a factor', start: 'bad date' });
    expect(fieldsOf('the matrix S is singular')).toEqual({});
  });
});

describe('spec JSON text', () => {
  it('keeps lists on one line and reads back to the same value', async () => {
    const { compactJson } = await import('../../src-renderer/src/stores/model.js');
    const v = { assets: ['a, "b"', 'c'], model: { kind: 'linear', factors: ['x'] }, estimator: { lags: 3 }, nested: [[1, 2], { k: [true, null, -1.5e-3] }] };
    const text = compactJson(v);
    expect(JSON.parse(text)).toEqual(v);
    expect(text).toContain('"assets": ["a, \\"b\\"", "c"]');
    expect(text).toContain('"factors": ["x"]');
  });
});

describe('compare store: a merged batch', () => {
  const ranking = (rankBy: string) => ({
    run: 7,
    label: 'factor search',
    tasks: 28,
    fitted: 28,
    axes: [{ axis: 'model.factors', count: 7 }],
    data: { sha256: 'd', panels: 7 },
    rankBy,
    title: 't',
    ranked: 28,
    rows: [{ rank: 1, task: 24, label: 'factors=a', settings: [] }],
    comparison: { kind: 'compare', sample: {}, models: [{ label: '#24 factors=a' }], hjTests: [], best: {} },
    notFitted: 0,
    failures: [],
  });

  it('lists batch runs, opens one ranked as asked, tags the comparison with the run id, and closes it', async () => {
    const m = mockClient({
      runs: async () => [{ id: 7, kind: 'batch', label: 'factor search' }],
      batchRanking: async (req: { rankBy: string }) => ranking(req.rankBy),
    } as never);
    const c = useCompareStore();
    await c.listBatches();
    expect(m.runs).toHaveBeenCalledWith({ kind: 'batch' });
    expect(c.batches.map((b) => b.id)).toEqual([7]);
    await c.openBatch(7, 'oos');
    expect(m.batchRanking).toHaveBeenCalledWith({ id: 7, rankBy: 'oos', top: 25 });
    expect(c.batch?.rankBy).toBe('oos');
    expect(c.result?.models[0].label).toBe('#24 factors=a');
    expect((c.result as { runId?: number }).runId).toBe(7);
    c.closeBatch();
    expect(c.batch).toBeNull();
    expect(c.result).toBeNull();
  });

  it('keeps a refused ranking as an error and shows no stale batch', async () => {
    mockClient({ batchRanking: async () => Promise.reject(new BridgeError('INPUT_INVALID', 'run 3 is a fit, not a merged batch', 'pick a run of kind batch')) } as never);
    const c = useCompareStore();
    await c.openBatch(3);
    expect(c.error?.message).toContain('not a merged batch');
    expect(c.batch).toBeNull();
  });
});

describe('present-value store', () => {
  it('sends the decomposition and drift specs the form holds, keeps the replies, and the errors with their hints', async () => {
    const m = mockClient({
      presentValue: async () => ({ kind: 'present-value', label: 'dividend-price: aggregate of 2', runId: 7 }),
      drift: async () => {
        throw new BridgeError('SAMPLE_TOO_SHORT', '1 period', 'use a longer window');
      },
    });
    const { useValuesStore } = await import('../../src-renderer/src/stores/values.js');
    const v = useValuesStore();
    v.members = ['A1', 'A2'];
    v.startYear = '2003';
    v.lags = '2';
    await v.runPresentValue();
    expect(m.presentValue.mock.calls[0][0]).toEqual({ spec: { analysis: 'present-value', aggregate: true, assets: ['A1', 'A2'], start: '2003', lags: 2 } });
    expect(v.pv?.runId).toBe(7);
    expect(v.pvTask.running).toBe(false);
    v.mode = 'asset';
    v.asset = 'A1';
    expect(v.pvSpec).toEqual({ analysis: 'present-value', asset: 'A1', start: '2003', lags: 2 });
    v.frequency = 'quarterly';
    v.lags = 'auto';
    await v.runDrift();
    expect(m.drift.mock.calls[0][0]).toEqual({ spec: { analysis: 'drift', frequency: 'quarterly', lags: 'auto' } });
    expect(v.drift).toBeNull();
    expect(v.driftError?.code).toBe('SAMPLE_TOO_SHORT');
    expect(v.driftError?.hint).toBe('use a longer window');
  });
});

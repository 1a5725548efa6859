/** Small stand-ins for the app's ports, for transport and dispatcher tests. */
import type { Engine, FilePolicy, Importer, ProjectData, TaskContext } from '../../../src-main/app/ports.js';
import type { BacktestResult, CompareResult, DriftResult, FitResult, PresentValueResult } from '../../../shared/results.js';
import { DeflatorError } from '../../../shared/errors.js';

export function fakeProject(): ProjectData {
  return {
    databaseName: 'fake.db',
    coverage: () => ({
      assets: [{ name: 'A1', kind: 'asset', first: '2001-01-31', last: '2001-12-31', count: 12, gaps: 0 }],
      series: [{ name: 'MKT', kind: 'factor', first: '2001-01-31', last: '2001-12-31', count: 12, gaps: 0 }],
      portfolios: [],
    }),
    history: (asset) => {
      if (asset !== 'A1') throw new DeflatorError('NOT_FOUND', `no asset named ${asset}`, 'import it first');
      return { asset, frequency: 'stored', dates: ['2001-01-31'], price: [10], totalReturn: [10], dividends: 0 };
    },
    imports: () => [{ id: 1, file: 'prices.csv', kind: 'prices', importedAt: '2026-01-01T00:00:00.000Z', rowsRead: 12, rowsStored: 12, rowsRejected: 0, warnings: [], warningCount: 0 }],
    samplePreview: (spec) => ({ start: '2001-01-31', end: '2001-12-31', T: 12, N: 1, lags: spec.estimator.lags === 'auto' ? 2 : spec.estimator.lags, lagsRule: spec.estimator.lags === 'auto' ? 'automatic, floor(4 (T/100)^(2/9)) = 2' : 'as set' }),
  };
}

export function tinyFit(label = 'fake'): FitResult {
  return {
    kind: 'fit',
    label,
    sample: {
      start: '2001-01-31', end: '2001-12-31', T: 12, N: 2, K: 1, lags: 0, frequency: 'monthly', periodsPerYear: 12,
      returns: 'excess', method: 'gmm', model: 'linear', stage: 'second', weighting: 'S^-1', centered: true, lagsRule: 'fixed',
      assets: ['A1', 'A2'], factors: ['MKT'], notes: [],
    },
    params: [{ name: 'b.MKT', estimate: 2, se: 1, t: 2, p: 0.05 }],
    pricingErrors: [
      { asset: 'A1', alpha: 0.001, se: 0.0005, t: 2, alphaAnnual: 0.012, seAnnual: 0.006, meanReturn: 0.01, predicted: 0.009 },
      { asset: 'A2', alpha: -0.002, se: 0.001, t: -2, alphaAnnual: -0.024, seAnnual: 0.012, meanReturn: 0.008, predicted: 0.01 },
    ],
    test: { name: 'J', stat: 1, df: 1, p: 0.3 },
    tests: [],
    fit: { mape: 0.0015, rmse: 0.0016, r2: 0.5, mapeAnnual: 0.018, rmseAnnual: 0.019 },
    notes: [],
    warnings: [],
  };
}

/** An engine whose back-test reports progress step by step and honours cancellation. */
export function fakeEngine(opts: { steps?: number; stepMs?: number } = {}): Engine & { calls: string[] } {
  const calls: string[] = [];
  const steps = opts.steps ?? 4;
  const stepMs = opts.stepMs ?? 5;
  async function walk(ctx: TaskContext): Promise<void> {
    for (let i = 1; i <= steps; i++) {
      await new Promise((r) => setTimeout(r, stepMs));
      if (ctx.signal.aborted) throw new DeflatorError('CANCELLED', 'stopped', 'run again');
      ctx.onProgress(i, steps, 'windows');
    }
  }
  return {
    calls,
    fit: async (spec, ctx) => {
      calls.push('fit');
      await walk(ctx);
      return tinyFit(spec.label ?? 'fake');
    },
    backtest: async (_spec, ctx) => {
      calls.push('backtest');
      await walk(ctx);
      return { kind: 'backtest' } as unknown as BacktestResult;
    },
    compare: async () => {
      calls.push('compare');
      return { kind: 'compare' } as unknown as CompareResult;
    },
    presentValue: async () => {
      calls.push('presentValue');
      return { kind: 'present-value' } as unknown as PresentValueResult;
    },
    drift: async () => {
      calls.push('drift');
      return { kind: 'drift' } as unknown as DriftResult;
    },
  };
}

export function fakeImporter(): Importer & { files: string[] } {
  const files: string[] = [];
  return {
    files,
    importFile: async (path, kind) => {
      files.push(path);
      return { file: path, kind, rows: 3, names: ['A1'], warnings: [{ line: 3, message: 'a gap' }], durationMs: 1 };
    },
    previewFile: async (path, kind) => {
      files.push(path);
      return { file: path, kind, columns: [{ name: 'date', role: 'date' }], rows: [{ line: 2, cells: [{ text: '200101', status: 'ok', read: '2001-01-31' }] }], more: false };
    },
  };
}

export function openPolicy(): FilePolicy {
  return {
    check: (p) => {
      if (!p.startsWith('/allowed/')) throw new DeflatorError('FORBIDDEN', `${p} is outside the folders this session may read`, 'pick it in a dialog');
      return p;
    },
    storeUpload: (name) => `/incoming/${name}`,
  };
}

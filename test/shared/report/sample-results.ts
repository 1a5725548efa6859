/**
 * Seeded result objects for the export tests. Their numbers are arbitrary doubles drawn
 * by fast-check from a fixed seed (awkward ones on purpose: 17 significant digits,
 * plus a subnormal and a value below every display rounding); the checks compare what an
 * independent reader gets back from an export with these numbers, so their values need
 * no outside source. Names carry the characters each format must escape.
 */
import fc from 'fast-check';
import type { BacktestResult, CompareResult, FitResult, SampleHeader } from '../../../shared/results.js';
import type { ExportRecord } from '../../../shared/report/header.js';

/** Uniform doubles in [lo, hi) with full 53-bit mantissas (17 significant digits), from a fixed seed. */
function doubles(seed: number, n: number, lo = -10, hi = 10): number[] {
  const ints = fc.sample(fc.bigInt({ min: 0n, max: 2n ** 53n - 1n }), { seed, numRuns: n });
  return ints.map((k) => lo + (hi - lo) * (Number(k) / 2 ** 53));
}

export const ASSETS = ['Alder Works', 'Birch & Pine_2', 'Cedar "North"', 'Dune, Ltd #4', 'Elm 50% {x}', 'Fir~Co'];

export function sampleHeader(kind = 'linear'): SampleHeader {
  return {
    start: '2031-01-31',
    end: '2035-12-31',
    T: 60,
    N: ASSETS.length,
    K: 2,
    lags: 3,
    frequency: 'monthly',
    periodsPerYear: 12,
    returns: 'excess',
    method: 'gmm',
    model: kind,
    stage: 'second',
    weighting: 'identity',
    centered: true,
    lagsRule: 'floor(4 (T/100)^(2/9))',
    assets: ASSETS,
    factors: ['MKT', 'SIZE'],
    notes: ['lambda s.e. by the delta method, Sigma_f treated as known'],
  };
}

export function sampleFit(seed = 7): FitResult {
  const d = doubles(seed, 200);
  const small = doubles(seed + 1, 100, -0.05, 0.05);
  let i = 0;
  let j = 0;
  const params = ['b.MKT', 'b.SIZE', 'mu.MKT', 'mu.SIZE', 'lambda.MKT', 'lambda.SIZE'].map((name) => ({
    name,
    estimate: d[i++],
    se: Math.abs(d[i++]),
    t: d[i++],
    p: Math.abs(small[j++]) * 10,
    ...(name.startsWith('lambda') ? { note: 'delta method, Sigma_f treated as known' } : {}),
  }));
  params[0].estimate = 1.2345678901234567e-7; // below LaTeX's rounding: shown in scientific notation
  const pricingErrors = ASSETS.map((asset) => {
    const alpha = small[j++];
    const se = Math.abs(small[j++]) + 1e-4;
    const meanReturn = small[j++];
    return { asset, alpha, se, t: alpha / se, alphaAnnual: 12 * alpha, seAnnual: Math.sqrt(12) * se, meanReturn, predicted: meanReturn - alpha };
  });
  pricingErrors[1].alpha = 5e-324; // the smallest subnormal survives every text export
  return {
    kind: 'fit',
    label: 'linear(MKT,SIZE)',
    sample: sampleHeader(),
    params,
    pricingErrors,
    test: { name: 'pricing errors chi-square', stat: Math.abs(d[i++]), df: 4, p: 0.1234567890123456 },
    tests: [
      { name: 'Hansen J', stat: Math.abs(d[i++]), df: 4, p: 0.5 },
      { name: 'GRS', stat: Math.abs(d[i++]), df1: 6, df2: 52, p: 3.3e-9, note: 'F test' },
    ],
    hj: { distance: Math.abs(small[j++]), p: 0.04, method: 'Imhof (1961) numerical inversion' },
    fit: { mape: 0.0012, rmse: 0.0016, r2: 0.61, mapeAnnual: 0.0144, rmseAnnual: 0.0192 },
    notes: ['second stage: S from the first-stage estimate'],
    warnings: [],
  };
}

export function sampleBacktest(seed = 11): BacktestResult {
  const d = doubles(seed, 400, -0.1, 0.1);
  let i = 0;
  const ends = ['2033-12-31', '2034-01-31', '2034-02-28', '2034-03-31', '2034-04-30'];
  return {
    kind: 'backtest',
    label: 'linear(MKT,SIZE)',
    sample: sampleHeader(),
    windows: ends.length,
    windowsFailed: 1,
    failures: [{ end: '2034-02-28', reason: 'S is singular in this window' }],
    oos: { rmse: Math.abs(d[i++]), rmsePooled: Math.abs(d[i++]), r2: d[i++] },
    inSample: { rmse: Math.abs(d[i++]), r2: d[i++], mape: Math.abs(d[i++]) },
    perAsset: ASSETS.map((asset) => ({ asset, alphaOos: d[i++], alphaIn: d[i++], meanReturnOos: d[i++] })),
    paths: ends
      .filter((e) => e !== '2034-02-28')
      .map((end) => ({ end, params: ['b.MKT', 'b.SIZE'].map((name) => ({ name, estimate: d[i++] * 40, se: Math.abs(d[i++]) * 10 })) })),
    windowList: ends.map((end, k) => ({
      start: `203${k > 0 ? 1 : 0}-0${(k % 9) + 1}-28`,
      end,
      oosStart: end,
      oosEnd: end,
      ok: end !== '2034-02-28',
      ...(end === '2034-02-28' ? { reason: 'S is singular in this window' } : {}),
    })),
    spec: { window: 36, step: 1, horizon: 1, expanding: false },
    warnings: [{ code: 'FAILED_WINDOWS', message: '1 of 5 back-test windows could not be estimated' }],
  };
}

export function sampleCompare(seed = 13): CompareResult {
  const a = sampleFit(seed);
  const b = sampleFit(seed + 100);
  return {
    kind: 'compare',
    sample: sampleHeader(),
    models: [
      { label: 'linear(MKT)', params: a.params.slice(0, 2), test: a.test, hj: a.hj, fit: a.fit, oos: { rmse: 0.002, rmsePooled: 0.003, r2: -0.25 } },
      { label: 'linear(MKT,SIZE)', params: b.params, test: b.tests[1], hj: b.hj, fit: b.fit },
      { label: 'consumption(CONS)', params: [], test: { name: 'Hansen J', stat: 0, df: 1, p: 1 }, fit: { mape: 0, rmse: 0, r2: 0, mapeAnnual: 0, rmseAnnual: 0 }, error: 'NO_CONVERGENCE: gamma diverged' },
    ],
    hjTests: [{ a: 'linear(MKT)', b: 'linear(MKT,SIZE)', diff: 0.0123456789, p: 0.2, replications: 499, block: 4, seed: 20261201 }],
    warnings: [],
  };
}

export function sampleRecord(id = 42): ExportRecord {
  return {
    id,
    kind: 'fit',
    createdAt: '2036-02-03T04:05:06.789Z',
    version: '0.1.0',
    spec: { frequency: 'monthly', model: { kind: 'linear', factors: ['MKT', 'SIZE'] }, riskfree: 'RF' },
    panel: { sha256: 'ab'.repeat(32), encoding: 1, frequency: 'monthly', start: '2031-01-31', end: '2035-12-31', T: 60, N: 6, K: 2 },
    files: [{ file: 'prices.csv', sha256: 'cd'.repeat(32), importId: 3, subjects: ['Alder Works', 'Fir~Co'] }],
  };
}

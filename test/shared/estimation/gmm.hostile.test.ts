/**
 * Hostile inputs: each must end in a DeflatorError with the named code and a message
 * that names the cause (METHODS 7), never in NaN or Infinity in a result. The last block
 * throws random small panels at the engine (fast-check) and requires either a named
 * error or a result whose every number is finite.
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { isDeflatorError, type ErrorCode } from '../../../shared/errors.js';
import { assertAllFinite } from '../../../shared/estimation/finiteGuard.js';
import { fit } from '../../../shared/estimation/fit.js';
import { longRunCovariance } from '../../../shared/estimation/longRunCovariance.js';
import type { ReturnsPanel } from '../../../shared/panel.js';
import { parseFitSpec, type FitSpecInput } from '../../../shared/spec.js';
import { monthEnds } from './helpers.js';

function wave(T: number, a: number, b: number, c = 0): Float64Array {
  return Float64Array.from({ length: T }, (_, t) => c + 0.03 * Math.sin(a * (t + 1)) + 0.02 * Math.cos(b * (t + 1) * (t + 1)));
}

function panel(T: number, N: number, factors: Float64Array[], kind: 'excess' | 'gross' = 'excess'): ReturnsPanel {
  const returns = Array.from({ length: N }, (_, i) => Float64Array.from(wave(T, 0.7 + 0.13 * i, 0.011 * (i + 2), 0.004), (x, t) => (kind === 'gross' ? 1.002 : 0) + x + (0.5 + 0.1 * i) * factors[0][t]));
  return {
    frequency: 'monthly',
    periods: monthEnds(T),
    assets: returns.map((_, i) => `A${i + 1}`),
    returnKind: kind,
    returns,
    factors: factors.map((values, k) => ({ name: `f${k + 1}`, values })),
    riskfreeGross: new Float64Array(T).fill(1.002),
    consumptionGrowth: Float64Array.from(wave(T, 0.31, 0.017, 1.002), (x) => x / 3 + 2 / 3),
    sampleNotes: [],
  };
}

const spec = (s: Partial<FitSpecInput>) => parseFitSpec({ returns: 'excess', riskfree: 'rf', model: { kind: 'linear', factors: ['f1', 'f2'] }, ...s });

function expectError(fn: () => unknown, code: ErrorCode, message: RegExp): void {
  try {
    const r = fn();
    expect.unreachable(`expected ${code}, got a result ${JSON.stringify(r).slice(0, 80)}`);
  } catch (e) {
    expect(isDeflatorError(e), String(e)).toBe(true);
    expect((e as { code: string }).code, (e as Error).message).toBe(code);
    expect((e as Error).message).toMatch(message);
    expect((e as { hint?: string }).hint).toBeTruthy();
  }
}

const T = 120;
const f1 = wave(T, 0.37, 0.05, 0.005);
const f2 = wave(T, 1.1, 0.021, 0.002);

describe('hostile inputs give named errors', () => {
  it('collinear factors -> SINGULAR naming the redundant factor', () => {
    const f3 = Float64Array.from(f1, (x, t) => 2 * x - f2[t]);
    expectError(() => fit(spec({ model: { kind: 'linear', factors: ['f1', 'f2', 'f3'] } }), panel(T, 8, [f1, f2, f3])), 'SINGULAR', /factor covariance matrix.*factor "f3" is \(almost\) a linear combination/);
  });

  it('a constant factor -> SINGULAR naming it', () => {
    expectError(() => fit(spec({}), panel(T, 8, [f1, new Float64Array(T).fill(0.01)])), 'SINGULAR', /factor "f2" is constant/);
  });

  it('a constant excess return -> SINGULAR naming the asset', () => {
    const p = panel(T, 8, [f1, f2]);
    p.returns[3] = new Float64Array(T).fill(0.001);
    expectError(() => fit(spec({}), p), 'SINGULAR', /test asset "A4" has a constant excess return/);
  });

  it('N <= number of parameters (3 assets, 3 factors) -> UNDERIDENTIFIED', () => {
    const f3 = wave(T, 2.3, 0.013, 0.001);
    expectError(() => fit(spec({ model: { kind: 'linear', factors: ['f1', 'f2', 'f3'] } }), panel(T, 3, [f1, f2, f3])), 'UNDERIDENTIFIED', /3 test assets give 6 moments for 6 parameters/);
  });

  it('the consumption model on gross returns with 2 assets (2 moments, 2 parameters) -> UNDERIDENTIFIED', () => {
    expectError(() => fit(parseFitSpec({ returns: 'gross', model: { kind: 'consumption', consumption: 'c' } }), panel(T, 2, [f1], 'gross')), 'UNDERIDENTIFIED', /2 moments for 2 parameters/);
  });

  it('T too short for the lags -> SAMPLE_TOO_SHORT', () => {
    const t = 8;
    expectError(() => fit(spec({ estimator: { lags: 7 } }), panel(t, 4, [wave(t, 0.37, 0.05), wave(t, 1.1, 0.021)])), 'SAMPLE_TOO_SHORT', /8 periods are too few for 7 Newey-West lags/);
    expectError(() => longRunCovariance([new Float64Array(3)], 2), 'SAMPLE_TOO_SHORT', /3 periods are too few/);
  });

  it('T not above the number of moments -> SAMPLE_TOO_SHORT', () => {
    const t = 20;
    expectError(() => fit(spec({ estimator: { lags: 0 } }), panel(t, 19, [wave(t, 0.37, 0.05), wave(t, 1.1, 0.021)])), 'SAMPLE_TOO_SHORT', /20 periods cannot estimate the 21 x 21 long-run covariance/);
  });

  it('two identical test assets: S is not positive definite -> NOT_POSITIVE_DEFINITE naming S', () => {
    const p = panel(T, 8, [f1, f2]);
    p.returns[5] = p.returns[2].slice();
    expectError(() => fit(spec({}), p), 'NOT_POSITIVE_DEFINITE', /long-run covariance S of the moments.*A6 is \(almost\) a linear combination/);
  });

  it('two identical test assets with the HJ weight: E[RR\'] singular -> NOT_POSITIVE_DEFINITE naming it', () => {
    const p = panel(T, 8, [f1, f2]);
    p.returns[5] = p.returns[2].slice();
    expectError(() => fit(spec({ estimator: { stage: 'first', weight: 'hj' } }), p), 'NOT_POSITIVE_DEFINITE', /second-moment matrix E\[RR'\]/);
  });

  it('a missing value in a return series -> INPUT_INVALID naming asset and period', () => {
    const p = panel(T, 8, [f1, f2]);
    p.returns[1][17] = NaN;
    expectError(() => fit(spec({}), p), 'INPUT_INVALID', /test asset "A2" has a missing or non-finite value \(NaN\) at 2002-06-30/);
  });

  it('a factor the panel does not have -> DATA_MISSING', () => {
    expectError(() => fit(spec({ model: { kind: 'linear', factors: ['f1', 'nope'] } }), panel(T, 8, [f1, f2])), 'DATA_MISSING', /factor "nope" is not in the panel/);
  });

  it('non-positive consumption growth -> INPUT_INVALID', () => {
    const p = panel(T, 8, [f1], 'gross');
    p.consumptionGrowth![40] = 0;
    expectError(() => fit(parseFitSpec({ returns: 'gross', model: { kind: 'consumption', consumption: 'c' } }), p), 'INPUT_INVALID', /consumption growth .* is 0 at period 41/);
  });

  it('iterated GMM that cannot meet its criterion within the cap -> the last update, not converged, with an ITERATION_CAP warning naming the criterion', () => {
    const r = fit(spec({ estimator: { stage: 'iterated', maxIterations: 1 } }), panel(T, 8, [f1, f2]));
    expect(r.convergence?.converged).toBe(false);
    const w = r.warnings.filter((x) => x.code === 'ITERATION_CAP');
    expect(w).toHaveLength(1);
    expect(w[0].message).toMatch(/cap of 1 weight updates .* max\|theta_k - theta_k-1\| < 1e-10/);
  });

  it('the final guard names a non-finite field', () => {
    expectError(() => assertAllFinite({ params: [{ name: 'b', se: Infinity }] }), 'SINGULAR', /result\.params\[0\]\.se is Infinity/);
  });
});

describe('random small panels: a named error or an all-finite result', () => {
  it('fast-check, 40 panels', () => {
    fc.assert(
      fc.property(
        fc.record({
          T: fc.integer({ min: 6, max: 60 }),
          N: fc.integer({ min: 1, max: 9 }),
          K: fc.integer({ min: 1, max: 3 }),
          seed: fc.integer({ min: 1, max: 1_000_000 }),
          stage: fc.constantFrom('first', 'second', 'iterated', 'cue'),
          kind: fc.constantFrom('linear', 'linear-raw', 'linear-gross', 'consumption'),
          lags: fc.oneof(fc.constant<'auto'>('auto'), fc.integer({ min: 0, max: 8 })),
          degenerate: fc.constantFrom('none', 'zero-factor', 'duplicate-asset', 'tiny-noise'),
        }),
        ({ T: t, N, K, seed, stage, kind, lags, degenerate }) => {
          let s = seed;
          const u = () => ((s = (s * 16807) % 2147483647) / 2147483647) - 0.5;
          const fs = Array.from({ length: K }, () => Float64Array.from({ length: t }, () => 0.004 + 0.08 * u()));
          if (degenerate === 'zero-factor') fs[0].fill(0);
          const gross = kind === 'linear-gross' || kind === 'consumption';
          const returns = Array.from({ length: N }, (_, i) => Float64Array.from({ length: t }, (_, j) => (gross ? 1.003 : 0) + (0.5 + 0.2 * i) * fs[0][j] + (degenerate === 'tiny-noise' ? 1e-13 : 0.05) * u()));
          if (degenerate === 'duplicate-asset' && N > 1) returns[N - 1] = returns[0].slice();
          const p: ReturnsPanel = {
            frequency: 'monthly',
            periods: monthEnds(t),
            assets: returns.map((_, i) => `A${i}`),
            returnKind: gross ? 'gross' : 'excess',
            returns,
            factors: fs.map((values, k) => ({ name: `f${k}`, values })),
            riskfreeGross: new Float64Array(t).fill(1.002),
            consumptionGrowth: Float64Array.from({ length: t }, () => 1.002 + 0.02 * u()),
            sampleNotes: [],
          };
          const sp = parseFitSpec({
            returns: gross ? 'gross' : 'excess',
            riskfree: 'rf',
            model: kind === 'consumption' ? { kind, consumption: 'c' } : { kind, factors: fs.map((_, k) => `f${k}`) },
            estimator: { stage, lags },
          });
          try {
            const r = fit(sp, p);
            assertAllFinite(r);
          } catch (e) {
            if (!isDeflatorError(e)) throw e;
            expect(e.message.length).toBeGreaterThan(10);
          }
        },
      ),
      { numRuns: 40, seed: 4242 },
    );
  });
});

import { describe, expect, it } from 'vitest';
import { parseFitSpec } from '../../../../shared/spec.js';
import { timeSeriesFit } from '../../../../shared/estimation/timeSeries.js';
import { twoPassFit } from '../../../../shared/estimation/twoPass.js';
import { isDeflatorError } from '../../../../shared/errors.js';
import type { ReturnsPanel } from '../../../../shared/panel.js';

// Hostile inputs: each must end in a named DeflatorError, never NaN in a result.
// The data are seeded pseudo-random draws; only the error codes and messages are checked.
function rng(seed: number): () => number {
  let s = seed >>> 0;
  const u = () => {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    return (s + 0.5) / 4294967296;
  };
  return () => Math.sqrt(-2 * Math.log(u())) * Math.cos(2 * Math.PI * u()); // Box-Muller
}

function panel(T: number, N: number, factors: Record<string, (t: number, z: () => number) => number>, asset?: (i: number, t: number, f: number[], z: () => number) => number): ReturnsPanel {
  const z = rng(12345);
  const names = Object.keys(factors);
  const fv = names.map(() => new Float64Array(T));
  for (let t = 0; t < T; t++) names.forEach((n, k) => (fv[k][t] = factors[n](t, z)));
  const returns = Array.from({ length: N }, (_, i) => {
    const r = new Float64Array(T);
    for (let t = 0; t < T; t++) {
      const f = fv.map((x) => x[t]);
      r[t] = asset ? asset(i, t, f, z) : 0.001 + (0.5 + 0.1 * i) * f[0] + 0.02 * z();
    }
    return r;
  });
  return {
    frequency: 'monthly',
    periods: Array.from({ length: T }, (_, t) => `${2000 + Math.floor(t / 12)}-${String((t % 12) + 1).padStart(2, '0')}-28`),
    assets: Array.from({ length: N }, (_, i) => `p${i + 1}`),
    returnKind: 'excess',
    returns,
    factors: names.map((name, k) => ({ name, values: fv[k] })),
    sampleNotes: [],
  };
}
const spec = (method: 'time-series' | 'two-pass', factors: string[], extra: Record<string, unknown> = {}) =>
  parseFitSpec({ riskfree: 'cash', model: { kind: 'linear', factors }, estimator: { method, ...extra } });

function failure(fn: () => unknown): { code: string; message: string } {
  try {
    fn();
  } catch (e) {
    if (isDeflatorError(e)) return { code: e.code, message: e.message };
    throw e;
  }
  throw new Error('expected a DeflatorError, got a result');
}

const both = [
  ['time-series', timeSeriesFit],
  ['two-pass', twoPassFit],
] as const;

describe('hostile inputs to the beta-representation comparators', () => {
  for (const [method, fit] of both) {
    it(`${method}: collinear factors -> SINGULAR naming them`, () => {
      const p = panel(120, 6, { mkt: (_t, z) => 0.05 * z(), size: (_t, z) => 0.03 * z() }, undefined);
      p.factors.push({ name: 'combo', values: p.factors[0].values.map((v, t) => v - 2 * p.factors[1].values[t]) });
      const e = failure(() => fit(spec(method, ['mkt', 'size', 'combo']), p));
      expect(e.code).toBe('SINGULAR');
      expect(e.message).toContain('"combo"');
      expect(e.message).toContain('"mkt"');
      expect(e.message).toContain('"size"');
    });
    it(`${method}: a constant factor -> SINGULAR saying it is constant`, () => {
      const p = panel(120, 6, { mkt: (_t, z) => 0.05 * z(), flat: () => 0.002 });
      const e = failure(() => fit(spec(method, ['mkt', 'flat']), p));
      expect(e.code).toBe('SINGULAR');
      expect(e.message).toMatch(/"flat" is \(almost\) a constant/);
    });
    it(`${method}: a missing factor -> DATA_MISSING naming it`, () => {
      const e = failure(() => fit(spec(method, ['mkt', 'ghost']), panel(60, 5, { mkt: (_t, z) => 0.05 * z() })));
      expect(e.code).toBe('DATA_MISSING');
      expect(e.message).toContain('"ghost"');
    });
    it(`${method}: a NaN return -> INPUT_INVALID naming asset and period`, () => {
      const p = panel(60, 5, { mkt: (_t, z) => 0.05 * z() });
      p.returns[2][7] = Number.NaN;
      const e = failure(() => fit(spec(method, ['mkt']), p));
      expect(e.code).toBe('INPUT_INVALID');
      expect(e.message).toContain('"p3"');
      expect(e.message).toContain(p.periods[7]);
    });
    it(`${method}: gross returns are refused`, () => {
      const p = { ...panel(60, 5, { mkt: (_t, z) => 0.05 * z() }), returnKind: 'gross' as const };
      expect(failure(() => fit(spec(method, ['mkt']), p)).code).toBe('SPEC_INVALID');
    });
  }

  it('time-series: T <= N + K -> UNDERIDENTIFIED naming T, N, K', () => {
    const e = failure(() => timeSeriesFit(spec('time-series', ['mkt']), panel(11, 10, { mkt: (_t, z) => 0.05 * z() })));
    expect(e.code).toBe('UNDERIDENTIFIED');
    expect(e.message).toContain('T = 11 periods, N = 10 test assets, K = 1 factors');
  });
  it('time-series: an asset that duplicates another -> SINGULAR residual covariance naming it', () => {
    const p = panel(120, 5, { mkt: (_t, z) => 0.05 * z() });
    p.returns[4] = p.returns[1].slice();
    const e = failure(() => timeSeriesFit(spec('time-series', ['mkt']), p));
    expect(e.code).toBe('SINGULAR');
    expect(e.message).toContain('residual covariance');
    expect(e.message).toContain('"p5"');
  });
  it('time-series: too many Newey-West lags for the sample -> SAMPLE_TOO_SHORT', () => {
    expect(failure(() => timeSeriesFit(spec('time-series', ['mkt'], { lags: 40 }), panel(40, 3, { mkt: (_t, z) => 0.05 * z() }))).code).toBe('SAMPLE_TOO_SHORT');
  });
  it('two-pass: N <= K + 1 -> UNDERIDENTIFIED naming the counts', () => {
    const e = failure(() => twoPassFit(spec('two-pass', ['mkt', 'size']), panel(60, 3, { mkt: (_t, z) => 0.05 * z(), size: (_t, z) => 0.03 * z() })));
    expect(e.code).toBe('UNDERIDENTIFIED');
    expect(e.message).toContain('N = 3 test assets for 3 coefficients');
  });
  it('two-pass: T <= K + 1 -> UNDERIDENTIFIED', () => {
    expect(failure(() => twoPassFit(spec('two-pass', ['mkt', 'size']), panel(3, 8, { mkt: (_t, z) => 0.05 * z(), size: (_t, z) => 0.03 * z() }))).code).toBe('UNDERIDENTIFIED');
  });
  it('two-pass: proportional betas make the cross-section SINGULAR, naming the beta columns', () => {
    // R_i = s_i (mkt + 2 size) exactly: beta.size = 2 beta.mkt for every asset.
    const p = panel(60, 6, { mkt: (_t, z) => 0.05 * z(), size: (_t, z) => 0.03 * z() }, (i, _t, f) => (0.5 + 0.2 * i) * (f[0] + 2 * f[1]));
    const e = failure(() => twoPassFit(spec('two-pass', ['mkt', 'size']), p));
    expect(e.code).toBe('SINGULAR');
    expect(e.message).toContain('"beta.size"');
    expect(e.message).toContain('"beta.mkt"');
  });
  it('a well-posed small panel gives finite numbers everywhere (no NaN)', () => {
    const p = panel(36, 4, { mkt: (_t, z) => 0.05 * z() });
    for (const r of [timeSeriesFit(spec('time-series', ['mkt']), p), twoPassFit(spec('two-pass', ['mkt']), p)]) {
      const text = JSON.stringify(r);
      expect(text).not.toMatch(/NaN|Infinity|null/);
      expect(r.test.p).toBeGreaterThanOrEqual(0);
      expect(r.test.p).toBeLessThanOrEqual(1);
    }
  });
});

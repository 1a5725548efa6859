/**
 * Instruments (METHODS 9): identities and refusals.
 * - With the constant alone every number of a fit equals the unconditional fit's, bit for
 *   bit, at every stage and for every model.
 * - A constant instrument, or instruments collinear with each other, is a named SINGULAR
 *   error; time-series and two-pass regressions refuse instruments (SPEC_INVALID).
 * - Scale: the instruments' units do not matter. Multiplying an instrument by 1e6 or 1e-6
 *   multiplies its scaled payoffs' pricing errors by the same and divides the loadings on
 *   its scaled factors by it (and multiplies their means and risk premia), and leaves J and
 *   the HJ distance unchanged (GMM at the
 *   efficient stage and the HJ distance are invariant to a fixed rescaling of moments;
 *   Hansen 1982). Shifting an instrument by a constant (z + 1: a mean over a hundred times
 *   its s.d.) spans the same instrument space, so J and the pricing-error statistic are
 *   unchanged too. None of these is SINGULAR.
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { DeflatorError } from '../../../shared/errors.js';
import { fit } from '../../../shared/estimation/fit.js';
import { gmmFit } from '../../../shared/estimation/gmmFit.js';
import type { ReturnsPanel } from '../../../shared/panel.js';
import type { FitResult } from '../../../shared/results.js';
import { parseFitSpec } from '../../../shared/spec.js';
import { expectClose, panelFromFixture, type FixtureData } from './helpers.js';

const fixture = JSON.parse(readFileSync(path.join(import.meta.dirname, 'fixtures/instruments_reference.json'), 'utf8')) as { data: FixtureData & { instruments: number[][] } };
const FACTORS = ['f1', 'f2'];

function withInstruments(panel: ReturnsPanel, series: { name: string; values: Float64Array }[]): ReturnsPanel {
  return { ...panel, instruments: { lag: 1, series, lost: [] } };
}
function z(j: number, T: number, map: (x: number) => number = (x) => x): Float64Array {
  return Float64Array.from({ length: T }, (_, t) => map(fixture.data.instruments[t][j]));
}

/** Every number of a against b by its bits (Object.is); keys only one side has are listed. */
function numbersEqual(a: unknown, b: unknown, where = 'result', out: string[] = []): string[] {
  if (typeof a === 'number' || typeof b === 'number') {
    if (!Object.is(a, b)) out.push(`${where}: ${String(a)} vs ${String(b)}`);
  } else if (Array.isArray(a) && Array.isArray(b)) {
    if (a.length !== b.length) out.push(`${where}: length ${a.length} vs ${b.length}`);
    a.forEach((x, i) => numbersEqual(x, b[i], `${where}[${i}]`, out));
  } else if (a && b && typeof a === 'object' && typeof b === 'object') {
    for (const k of new Set([...Object.keys(a), ...Object.keys(b)])) numbersEqual((a as Record<string, unknown>)[k], (b as Record<string, unknown>)[k], `${where}.${k}`, out);
  } else if (a !== b) out.push(`${where}: ${String(a)} vs ${String(b)}`);
  return out;
}

/** The result without the keys instruments add (instrument labels and the sample's instrument fields). */
function withoutInstrumentKeys(r: FitResult): unknown {
  const drop = new Set(['instrument', 'instruments', 'instrumentScale', 'instrumentLag', 'lostToLag']);
  return JSON.parse(JSON.stringify(r, (k, v) => (drop.has(k) ? undefined : v)));
}

describe('only the constant: every number equals the unconditional fit, bit for bit', () => {
  const cases: { kind: string; returns: 'excess' | 'gross'; stage: string; weight?: string; includeRiskfree?: boolean; scale: 'returns' | 'factors' | 'both' }[] = [
    { kind: 'linear', returns: 'excess', stage: 'first', scale: 'both' },
    { kind: 'linear', returns: 'excess', stage: 'first', weight: 'hj', scale: 'returns' },
    { kind: 'linear', returns: 'excess', stage: 'second', scale: 'both' },
    { kind: 'linear', returns: 'excess', stage: 'iterated', scale: 'factors' },
    { kind: 'linear', returns: 'excess', stage: 'cue', scale: 'returns' },
    { kind: 'linear-raw', returns: 'excess', stage: 'second', scale: 'both' },
    { kind: 'linear-gross', returns: 'gross', stage: 'second', includeRiskfree: true, scale: 'both' },
    { kind: 'consumption', returns: 'gross', stage: 'second', scale: 'returns' },
    { kind: 'consumption', returns: 'excess', stage: 'iterated', scale: 'returns' },
  ];
  for (const c of cases)
    it(`${c.kind} ${c.returns} ${c.stage}${c.weight ? ` ${c.weight}` : ''}${c.includeRiskfree ? ' with the risk-free asset' : ''}, scale ${c.scale}`, () => {
      const model = c.kind === 'consumption' ? { kind: 'consumption', consumption: 'cons' } : { kind: c.kind, factors: FACTORS };
      const base = { returns: c.returns, riskfree: 'rf', includeRiskfree: c.includeRiskfree ?? false, model, estimator: { stage: c.stage, weight: c.weight ?? 'identity' } };
      const panel = panelFromFixture(fixture.data, c.returns, FACTORS);
      const plain = gmmFit(parseFitSpec(base), panel);
      const constOnly = gmmFit(parseFitSpec({ ...base, instruments: { series: [], scale: c.scale } }), withInstruments(panel, []));
      expect(numbersEqual(withoutInstrumentKeys(constOnly), withoutInstrumentKeys(plain))).toEqual([]);
      expect(constOnly.pricingErrors.every((r) => r.instrument === 'const')).toBe(true);
      expect(constOnly.sample.instruments).toEqual(['const']);
    });
});

describe('collinear instruments are a named error', () => {
  const T = fixture.data.excess.length;
  const panel = panelFromFixture(fixture.data, 'excess', FACTORS);
  const spec = (series: string[], scale = 'returns') => parseFitSpec({ riskfree: 'rf', model: { kind: 'linear', factors: FACTORS }, instruments: { series, scale } });
  const errorOf = (fn: () => unknown): DeflatorError => {
    try {
      fn();
    } catch (e) {
      if (e instanceof DeflatorError) return e;
      throw e;
    }
    throw new Error('no error');
  };

  it('an instrument that is constant over the sample repeats the constant', () => {
    for (const scale of ['returns', 'factors', 'both']) {
      const e = errorOf(() => gmmFit(spec(['flat'], scale), withInstruments(panel, [{ name: 'flat', values: new Float64Array(T).fill(0.04) }])));
      expect(e.code).toBe('SINGULAR');
      expect(e.message).toMatch(/instruments \[const, flat\]/);
      expect(e.message).toMatch(/"flat" is \(almost\) a constant/);
    }
  });

  it('an instrument that is a linear combination of others names them', () => {
    const dp = z(0, T);
    const e = errorOf(() =>
      gmmFit(spec(['dp', 'twice']), withInstruments(panel, [{ name: 'dp', values: dp }, { name: 'twice', values: Float64Array.from(dp, (x) => 2 * x + 0.3) }])),
    );
    expect(e.code).toBe('SINGULAR');
    expect(e.message).toMatch(/"twice" is \(almost\) a linear combination of "const", "dp"/);
  });

  it('time-series and two-pass regressions refuse instruments, naming the key', () => {
    for (const method of ['time-series', 'two-pass']) {
      const e = errorOf(() => parseFitSpec({ riskfree: 'rf', model: { kind: 'linear', factors: FACTORS }, estimator: { method }, instruments: { series: ['dp'] } }));
      expect(e.code).toBe('SPEC_INVALID');
      expect(e.message).toMatch(new RegExp(`spec\\.instruments: ${method} regressions take no instruments`));
    }
    const c = errorOf(() => parseFitSpec({ returns: 'gross', model: { kind: 'consumption', consumption: 'c' }, instruments: { series: ['dp'], scale: 'factors' } }));
    expect(c.code).toBe('SPEC_INVALID');
    expect(c.message).toMatch(/spec\.instruments\.scale/);
    const k = errorOf(() => parseFitSpec({ riskfree: 'rf', model: { kind: 'linear', factors: FACTORS }, instruments: { series: ['dp'], scale: 'all' } }));
    expect(k.message).toMatch(/spec\.instruments\.scale/);
  });

  it('a panel built without the instruments the spec names is refused', () => {
    const e = errorOf(() => gmmFit(spec(['dp']), panel));
    expect(e.code).toBe('DATA_MISSING');
    expect(e.message).toMatch(/spec\.instruments names "dp"/);
  });

  it('the fit entry refuses them too (fit() dispatches the beta-representation methods)', () => {
    const s = parseFitSpec({ riskfree: 'rf', model: { kind: 'linear', factors: FACTORS } });
    expect(() => fit({ ...s, estimator: { ...s.estimator, method: 'two-pass' }, instruments: { series: [], scale: 'returns', lag: 1 } }, panel)).toThrow(/instruments/);
  });
});

describe('the instruments\' units and level do not matter (scale-aware solvers and checks)', () => {
  const T = fixture.data.excess.length;
  const panel = panelFromFixture(fixture.data, 'excess', FACTORS);
  // First stage with the HJ weight (E[xx']^-1 rescales with the payoffs), so the second stage is invariant too.
  const run = (scale: string, stage: string, dpMap: (x: number) => number) =>
    gmmFit(
      parseFitSpec({ riskfree: 'rf', model: { kind: 'linear', factors: FACTORS }, estimator: { stage, weight: 'hj' }, instruments: { series: ['dp', 'spread'], scale } }),
      withInstruments(panel, [{ name: 'dp', values: z(0, T, dpMap) }, { name: 'spread', values: z(1, T) }]),
    );
  for (const scale of ['returns', 'factors', 'both'])
    for (const c of [1e6, 1e-6]) {
      it(`scale ${scale}: dp x ${c} gives the same J and HJ distance, loadings / ${c}, pricing errors x ${c}`, () => {
        const a = run(scale, 'second', (x) => x);
        const b = run(scale, 'second', (x) => x * c);
        const J = (r: FitResult) => r.tests.find((t) => t.name === 'Hansen J')!.stat;
        expectClose(J(b), J(a), 1e-8, 'J');
        expectClose(b.test.stat, a.test.stat, 1e-8, 'pricing-error statistic');
        expectClose(b.hj!.distance, a.hj!.distance, 1e-8, 'HJ distance');
        for (const p of a.params) {
          const q = b.params.find((x) => x.name === p.name)!;
          // F' = A F with A = diag(1, .., c, ..): b' = A^-1 b, mu' = A mu, lambda' = Sigma_f' b' = A lambda.
          const f = /^b\..*:dp$/.test(p.name) ? 1 / c : /^(mu|lambda)\..*:dp$/.test(p.name) ? c : 1;
          expectClose(q.estimate, p.estimate * f, 1e-7, `${p.name}`, 1e-6 * Math.abs(p.se * f));
          expectClose(q.se, p.se * f, 1e-7, `se(${p.name})`);
        }
        a.pricingErrors.forEach((r, i) => expectClose(b.pricingErrors[i].alpha, r.alpha * (r.instrument === 'dp' ? c : 1), 1e-7, `alpha ${r.asset}:${r.instrument}`, 1e-6 * Math.abs(r.se)));
      });
    }
  for (const scale of ['returns', 'factors', 'both'])
    it(`scale ${scale}: dp + 1 (mean over a hundred times its s.d.) spans the same instruments: same J, pricing-error statistic and HJ distance`, () => {
      const a = run(scale, 'second', (x) => x);
      const b = run(scale, 'second', (x) => x + 1);
      const J = (r: FitResult) => r.tests.find((t) => t.name === 'Hansen J')!.stat;
      expectClose(J(b), J(a), 1e-6, 'J');
      expectClose(b.test.stat, a.test.stat, 1e-6, 'pricing-error statistic');
      expectClose(b.hj!.distance, a.hj!.distance, 1e-6, 'HJ distance');
    });
});

describe('INSTRUMENT_LEVEL warning (rule of thumb: |mean| > 3 s.d. of an instrument that scales factors)', () => {
  const T = fixture.data.excess.length;
  const panel = panelFromFixture(fixture.data, 'excess', FACTORS);
  const run = (scale: string, dpMap: (x: number) => number) =>
    gmmFit(
      parseFitSpec({ riskfree: 'rf', model: { kind: 'linear', factors: FACTORS }, instruments: { series: ['dp'], scale } }),
      withInstruments(panel, [{ name: 'dp', values: z(0, T, dpMap) }]),
    );
  it('a dividend yield of mean 0.04 and s.d. 0.008 scaling the factors is flagged; demeaned it is not, with the same J', () => {
    const level = run('both', (x) => x);
    const w = level.warnings.find((x) => x.code === 'INSTRUMENT_LEVEL');
    expect(w?.message).toMatch(/instrument "dp" has a mean \d+\.\d times its standard deviation/);
    const dp = z(0, T);
    const m = dp.reduce((a, b) => a + b, 0) / T;
    const demeaned = run('both', (x) => x - m);
    expect(demeaned.warnings.some((x) => x.code === 'INSTRUMENT_LEVEL')).toBe(false);
    // {1, z - zbar} spans what {1, z} spans, so the payoffs and factors are the same space: the HJ
    // distance is invariant (J of the two-step estimator is not, its W = I first stage is not)
    expectClose(demeaned.hj!.distance, level.hj!.distance, 1e-8, 'HJ distance, instrument demeaned or not');
  });
  it('scaling only the returns is not flagged (no loading on f z)', () => {
    expect(run('returns', (x) => x).warnings.some((x) => x.code === 'INSTRUMENT_LEVEL')).toBe(false);
  });
});

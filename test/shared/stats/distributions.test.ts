import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import {
  chiSquareCdf,
  chiSquareSf,
  fCdf,
  fSf,
  normalCdf,
  normalQuantile,
  normalSf,
  normalTwoSidedP,
  studentTCdf,
  studentTSf,
  weightedChiSquareSf,
} from '../../../shared/stats/distributions.js';
import { isDeflatorError } from '../../../shared/errors.js';
import { expectClose } from './close.js';

// Reference values: R 4.2.2 base stats (pchisq, pf, pnorm, pt, qnorm, integrate), written by
// fixtures/make_distributions.R; the JSON records the R version and the calls.
interface Fixture {
  r_version: string;
  chisq: { x: number; df: number; cdf: number; sf: number }[];
  f: { x: number; d1: number; d2: number; cdf: number; sf: number }[];
  normal: { x: number; cdf: number; sf: number }[];
  t: { x: number; df: number; cdf: number; sf: number }[];
  quantile: { p: number; x: number }[];
  weighted: { x: number; weights: number[]; p: number; method: string; abs_error: number }[];
  monte_carlo: { x: number; weights: number[]; p: number; se: number; n: number };
}
const fx = JSON.parse(readFileSync(new URL('./fixtures/distributions.json', import.meta.url), 'utf8')) as Fixture;

const REL = 1e-10;

describe('chi-square against R pchisq (both tails)', () => {
  it(`matches ${fx.chisq.length} grid points incl. p = 1e-12 and df = 1e5 to 1e-10 relative`, () => {
    expect(fx.chisq.length).toBeGreaterThan(50);
    for (const c of fx.chisq) {
      // R: pchisq(x, df) and pchisq(x, df, lower.tail = FALSE)
      expectClose(chiSquareCdf(c.x, c.df), c.cdf, REL, `chiSquareCdf(${c.x}, ${c.df})`);
      expectClose(chiSquareSf(c.x, c.df), c.sf, REL, `chiSquareSf(${c.x}, ${c.df})`);
    }
  });
});

describe('F against R pf (both tails)', () => {
  it(`matches ${fx.f.length} grid points to 1e-10 relative`, () => {
    expect(fx.f.length).toBeGreaterThan(200);
    for (const c of fx.f) {
      // R: pf(x, d1, d2) and pf(x, d1, d2, lower.tail = FALSE)
      expectClose(fCdf(c.x, c.d1, c.d2), c.cdf, REL, `fCdf(${c.x}, ${c.d1}, ${c.d2})`);
      expectClose(fSf(c.x, c.d1, c.d2), c.sf, REL, `fSf(${c.x}, ${c.d1}, ${c.d2})`);
    }
  });
});

describe('normal against R pnorm / qnorm', () => {
  it('pnorm both tails to 1e-10 relative, out to |x| = 37', () => {
    for (const c of fx.normal) {
      // R: pnorm(x) and pnorm(x, lower.tail = FALSE)
      expectClose(normalCdf(c.x), c.cdf, REL, `normalCdf(${c.x})`);
      expectClose(normalSf(c.x), c.sf, REL, `normalSf(${c.x})`);
    }
  });
  it('qnorm to 1e-12 relative, p from 1e-300 to 1 - 1e-10', () => {
    for (const c of fx.quantile) {
      // R: qnorm(p)
      expectClose(normalQuantile(c.p), c.x, 1e-12, `normalQuantile(${c.p})`, 1e-15);
    }
  });
  it('two-sided p is twice the upper tail (R: 2 * pnorm(-|z|))', () => {
    const c = fx.normal.find((r) => r.x === -3)!;
    expectClose(normalTwoSidedP(3), 2 * c.cdf, REL, 'normalTwoSidedP(3)');
    expectClose(normalTwoSidedP(-3), 2 * c.cdf, REL, 'normalTwoSidedP(-3)');
  });
});

describe('Student t against R pt (both tails)', () => {
  it(`matches ${fx.t.length} grid points, df 1 to 3e5, to 1e-10 relative`, () => {
    for (const c of fx.t) {
      // R: pt(x, df) and pt(x, df, lower.tail = FALSE)
      expectClose(studentTCdf(c.x, c.df), c.cdf, REL, `studentTCdf(${c.x}, ${c.df})`);
      expectClose(studentTSf(c.x, c.df), c.sf, REL, `studentTSf(${c.x}, ${c.df})`);
    }
  });
});

describe('weighted chi-square sum (Imhof inversion)', () => {
  it('matches R references (convolution by integrate(); Imhof integrand by integrate()) to 1e-9 absolute', () => {
    for (const c of fx.weighted) {
      // R: see c.method; tolerance 1e-9 absolute (the stated target), R's own error estimate is c.abs_error
      expectClose(weightedChiSquareSf(c.x, c.weights), c.p, 0, `weightedChiSquareSf(${c.x}, [${c.weights}]) vs ${c.method}`, 1e-9);
    }
  });
  it('observed agreement is much tighter: 1e-11 absolute', () => {
    for (const c of fx.weighted) {
      expectClose(weightedChiSquareSf(c.x, c.weights), c.p, 0, `weightedChiSquareSf(${c.x}, [${c.weights}])`, 1e-11 + c.abs_error);
    }
  });
  it('agrees with R seeded Monte Carlo (2e6 draws) within 4 standard errors', () => {
    const mc = fx.monte_carlo;
    expectClose(weightedChiSquareSf(mc.x, mc.weights), mc.p, 0, 'Monte Carlo case', 4 * mc.se);
  });
  it('equal weights reduce to w * chi2(m): R pchisq(x / w, m, lower.tail = FALSE)', () => {
    const c = fx.chisq.find((r) => r.df === 7 && r.sf < 1e-5 && r.sf > 1e-7)!;
    expectClose(weightedChiSquareSf(2.5 * c.x, new Array<number>(7).fill(2.5)), c.sf, REL, 'seven equal weights');
  });
  it('nearly equal weights approach the closed form exp(-x / 2w) of w * chi2(2)', () => {
    // chi2(2) is exponential with mean 2 (closed form), so P(w X1 + w X2 > x) = exp(-x / (2 w)).
    for (const x of [0.1, 1, 5, 20]) {
      expectClose(weightedChiSquareSf(x, [1, 1 - 1e-7]), Math.exp(-x / 2), 0, `x = ${x}`, 1e-7);
    }
  });
  it('zero and tiny weights are dropped; all-zero weights give a point mass at 0', () => {
    const base = weightedChiSquareSf(3, [1, 0.5, 0.25]);
    expect(weightedChiSquareSf(3, [1, 0, 0.5, 1e-15, 0.25])).toBe(base);
    expect(weightedChiSquareSf(1, [0, 0])).toBe(0);
    expect(weightedChiSquareSf(0, [1, 2])).toBe(1);
  });
  it('is scale invariant: P(c Q > c x) = P(Q > x)', () => {
    const w = [1, 0.6, 0.3, 0.1];
    expectClose(weightedChiSquareSf(4e-6, w.map((v) => v * 1e-6)), weightedChiSquareSf(4, w), 0, 'scaled by 1e-6', 1e-13);
  });
  it('a p-value far in the tail stays within the exact chi-square bounds', () => {
    const w = [1, 0.5, 0.2];
    const p = weightedChiSquareSf(200, w);
    expect(p).toBeGreaterThanOrEqual(chiSquareSf(200 / 0.2, 3));
    expect(p).toBeLessThanOrEqual(chiSquareSf(200, 3));
    expect(p).toBeLessThan(1e-12);
  });
  it('rejects negative and non-finite weights and NaN statistics by name', () => {
    for (const bad of [() => weightedChiSquareSf(1, [1, -0.5]), () => weightedChiSquareSf(1, [1, Number.NaN]), () => weightedChiSquareSf(Number.NaN, [1])]) {
      try {
        bad();
        expect.unreachable('should throw');
      } catch (e) {
        expect(isDeflatorError(e) && e.code).toBe('INPUT_INVALID');
      }
    }
  });
});

describe('domain edges', () => {
  it('never returns NaN; bad arguments throw INPUT_INVALID', () => {
    expect(chiSquareSf(0, 3)).toBe(1);
    expect(chiSquareSf(-1, 3)).toBe(1);
    expect(chiSquareSf(Infinity, 3)).toBe(0);
    expect(fSf(0, 2, 3)).toBe(1);
    expect(fSf(Infinity, 2, 3)).toBe(0);
    expect(studentTSf(0, 4)).toBe(0.5);
    expect(normalSf(0)).toBe(0.5);
    expect(normalSf(-Infinity)).toBe(1);
    for (const bad of [() => chiSquareSf(Number.NaN, 2), () => chiSquareSf(1, 0), () => fSf(1, -1, 2), () => studentTSf(1, Infinity), () => normalQuantile(0), () => normalQuantile(1)]) {
      try {
        bad();
        expect.unreachable('should throw');
      } catch (e) {
        expect(isDeflatorError(e) && e.code).toBe('INPUT_INVALID');
      }
    }
  });
  it('normalQuantile inverts normalCdf (round trip, both tails)', () => {
    for (const p of [1e-15, 0.01, 0.4, 0.6, 0.99]) expectClose(normalCdf(normalQuantile(p)), p, 1e-13, `p = ${p}`);
    expectClose(normalSf(normalQuantile(1 - 1e-9)), 1e-9, 1e-6, 'upper tail 1e-9');
  });
});

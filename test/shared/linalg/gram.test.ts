/**
 * The Gram kernel (shared/linalg/gramKernel.ts): the WebAssembly SIMD route and the plain
 * JavaScript route give every entry the bits of seriesDot, its definition, for any shape
 * (odd counts, lengths that are not a multiple of 4, cross products of two sets of
 * series); on integer-valued series, where every product and sum is exact in binary64,
 * the products equal the exact values computed with BigInt arithmetic. (The estimators'
 * agreement with numpy and R through these products is in the estimation tests.) */
import { afterEach, describe, expect, it } from 'vitest';
import { gramRoute, jsGram, seriesDot, useJsKernels, wasmGram, wasmGramOf } from '../../../shared/linalg/gramKernel.js';
import { longRunCovariance } from '../../../shared/estimation/longRunCovariance.js';
import { seriesProductsUpper } from '../../../shared/linalg/matrix.js';
import { mulberry32 } from '../../../shared/random.js';

afterEach(() => useJsKernels(false));

function series(q: number, T: number, seed: number): Float64Array[] {
  const u = mulberry32(seed);
  return Array.from({ length: q }, (_, a) => Float64Array.from({ length: T }, () => (u() - 0.5) * 10 ** ((a % 5) - 2)));
}

const sameBits = (a: Float64Array, b: Float64Array) => a.length === b.length && a.every((v, i) => Object.is(v, b[i]));

describe('Gram kernel', () => {
  it('runs on WebAssembly SIMD in Node', () => {
    expect(gramRoute()).toBe('wasm-simd128');
  });

  for (const [q, T] of [[8, 16], [9, 17], [64, 515], [65, 1030], [130, 2403]] as const)
    it(`q = ${q}, T = ${T}: both routes equal seriesDot entry by entry, bit for bit (Gram and cross products)`, () => {
      const x = series(q, T, q * 7 + T);
      const y = series(q, T, q * 11 + T);
      for (const [xx, yy] of [[x, x], [x, y]] as const) {
        const w = wasmGram(xx, yy);
        expect(w).not.toBeNull();
        const j = jsGram(xx, yy);
        expect(sameBits(w!, j)).toBe(true);
        for (let a = 0; a < q; a += Math.max(1, q >> 3)) for (let b = a; b < q; b += Math.max(1, q >> 4)) expect(Object.is(w![a * q + b], seriesDot(xx[a], yy[b]))).toBe(true);
      }
    });

  it('seriesProductsUpper gives the same bits with the JavaScript route forced', () => {
    const x = series(40, 333, 5);
    const viaWasm = seriesProductsUpper(x, x);
    useJsKernels(true);
    expect(sameBits(seriesProductsUpper(x, x), viaWasm)).toBe(true);
  });

  it('series written straight into the kernel memory (wasmGramOf) give the bits of wasmGram and jsGram', () => {
    for (const [q, T] of [[9, 17], [65, 1030]] as const) {
      const x = series(q, T, q + T);
      const y = series(q, T, q + 2 * T);
      const cross = wasmGramOf(q, T, false, (a, xa, ya) => {
        xa.set(x[a]);
        ya!.set(y[a]);
      });
      expect(sameBits(cross!, jsGram(x, y))).toBe(true);
      const gram = wasmGramOf(q, T, true, (a, xa, ya) => {
        expect(ya).toBeNull();
        xa.set(x[a]);
      });
      expect(sameBits(gram!, wasmGram(x, x)!)).toBe(true);
    }
    expect(wasmGramOf(7, 100, true, () => {})).toBeNull();
  });

  it('the Newey-West long-run covariance gives the same bits on both routes', () => {
    // the centring and the Bartlett filter run as WebAssembly on the first route (q >= 8):
    // lags beyond half the sample (both ends' partial sums overlap), the demo's shape, T not a
    // multiple of 4, and a route below the kernel's size (q = 5) that stays in JavaScript
    for (const [q, T, L] of [[12, 203, 4], [40, 333, 0], [5, 60, 3], [9, 17, 12], [33, 288, 5], [10, 1001, 37]] as const) {
      const u = series(q, T, 3 * q + T);
      for (const centered of [true, false]) {
        const viaWasm = longRunCovariance(u, L, centered).data;
        useJsKernels(true);
        const viaJs = longRunCovariance(u, L, centered).data;
        useJsKernels(false);
        expect(sameBits(viaWasm, viaJs)).toBe(true);
      }
    }
  });

  it("the kernel's row operations refuse an array outside its memory", () => {
    const outside = new Float64Array(20);
    expect(() => wasmGramOf(8, 20, true, (a, xa, _ya, rows) => rows.demean(outside), 0)).toThrow(/outside the kernel memory/);
    expect(() => wasmGramOf(8, 20, false, (a, xa, ya, rows) => rows.bartlett(xa, ya!, outside, 2), 0)).toThrow(/outside the kernel memory/);
  });

  it('integer-valued series: equal to the exact sums of products (BigInt arithmetic)', () => {
    // integer-valued series: every product and partial sum is exact, so the Gram matrix is exact
    const q = 21;
    const T = 101;
    const u = mulberry32(9);
    const x = Array.from({ length: q }, () => Float64Array.from({ length: T }, () => Math.floor(u() * 2001) - 1000));
    const g = seriesProductsUpper(x, x);
    for (let a = 0; a < q; a++)
      for (let b = 0; b < q; b++) {
        let s = 0n;
        for (let t = 0; t < T; t++) s += BigInt(x[a][t]) * BigInt(x[b][t]);
        expect(g[a * q + b]).toBe(Number(s));
      }
  });
});

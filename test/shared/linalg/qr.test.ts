import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { applyQ, applyQt, qrFactor, qrLeastSquares, qrUnscaledCovariance } from '../../../shared/linalg/qr.js';
import { isDeflatorError } from '../../../shared/errors.js';
import { fromRowsDense } from '../estimation/comparators/panelFixture.js';
import { expectClose } from '../stats/close.js';

const lm = JSON.parse(readFileSync(new URL('../estimation/comparators/fixtures/longley_lm.json', import.meta.url), 'utf8')) as {
  y: number[];
  x: number[][];
  coefficients: number[];
  se: number[];
  sigma: number;
};

function thrown(fn: () => unknown): { code: string; message: string; hint?: string } {
  try {
    fn();
  } catch (e) {
    if (isDeflatorError(e)) return { code: e.code, message: e.message, hint: e.hint };
    throw e;
  }
  throw new Error('expected a DeflatorError');
}

describe('Householder QR least squares', () => {
  it('solves the ill-conditioned NIST Longley design (R lm in the fixture) to 1e-11 relative', () => {
    const x = fromRowsDense(lm.x.map((r) => [1, ...r]));
    const qr = qrFactor(x, { name: 'Longley design' });
    const sol = qrLeastSquares(qr, lm.y);
    // R: coef(lm(y ~ x1 + ... + x6)) on datasets::longley in NIST units (fixtures/make_longley_lm.R)
    for (let j = 0; j < 7; j++) expectClose(sol.coefficients[j], lm.coefficients[j], 1e-11, `b${j} vs R lm`);
    // sigma^2 (X'X)^{-1} diagonal = se^2 from R's summary.lm
    const cov = qrUnscaledCovariance(qr);
    for (let j = 0; j < 7; j++) expectClose(lm.sigma * Math.sqrt(cov.data[j * 7 + j]), lm.se[j], 1e-10, `se(b${j}) from (X'X)^-1 vs R summary.lm`);
    expectClose(Math.sqrt(sol.rss / 9), lm.sigma, 1e-12, 'sqrt(RSS / df) vs R sigma');
  });

  it('Q is orthogonal and Q R reproduces X (property test on random designs)', () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 1, max: 6 }),
        fc.integer({ min: 0, max: 10 }),
        fc.array(fc.double({ min: -10, max: 10, noNaN: true }), { minLength: 16 * 6, maxLength: 16 * 6 }),
        (p, extra, vals) => {
          const n = p + extra;
          const rows = Array.from({ length: n }, (_, i) => Array.from({ length: p }, (_, j) => vals[(i * p + j) % vals.length] + (i === j ? 20 : 0)));
          const x = fromRowsDense(rows);
          const qr = qrFactor(x, { name: 'random design' });
          const y = rows.map((r, i) => r.reduce((s, v) => s + v, 0) + Math.sin(i));
          const z = applyQt(qr, y);
          const back = applyQ(qr, z);
          const ny = Math.sqrt(y.reduce((s, v) => s + v * v, 0));
          const nz = Math.sqrt(Array.from(z).reduce((s, v) => s + v * v, 0));
          expect(Math.abs(ny - nz)).toBeLessThan(1e-12 * (1 + ny)); // orthogonal: norm preserved
          for (let i = 0; i < n; i++) expect(Math.abs(back[i] - y[i])).toBeLessThan(1e-12 * (1 + ny));
          // Normal equations hold at the solution: X'e = 0.
          const sol = qrLeastSquares(qr, y);
          for (let j = 0; j < p; j++) {
            let s = 0;
            for (let i = 0; i < n; i++) s += rows[i][j] * sol.residuals[i];
            expect(Math.abs(s)).toBeLessThan(1e-9 * (1 + ny));
          }
        },
      ),
      { numRuns: 200, seed: 7 },
    );
  });

  it('a column that is a combination of others is SINGULAR and names them', () => {
    const rows = Array.from({ length: 12 }, (_, t) => {
      const a = Math.sin(t) * 0.03;
      const b = Math.cos(2 * t) * 0.02;
      return [1, a, b, 2 * a - 0.5 * b];
    });
    const e = thrown(() => qrFactor(fromRowsDense(rows), { name: 'factor design', labels: ['const', 'mkt', 'size', 'mix'] }));
    expect(e.code).toBe('SINGULAR');
    expect(e.message).toContain('"mix"');
    expect(e.message).toContain('"mkt"');
    expect(e.message).toContain('"size"');
    expect(e.message).not.toContain('"const", "mkt"');
    expect(e.hint).toMatch(/drop one of/);
  });

  it('a constant regressor beside the intercept is named as constant', () => {
    const rows = Array.from({ length: 10 }, (_, t) => [1, 0.01 * t, 0.004]);
    const e = thrown(() => qrFactor(fromRowsDense(rows), { name: 'factor design', labels: ['const', 'mkt', 'flat'] }));
    expect(e.code).toBe('SINGULAR');
    expect(e.message).toMatch(/"flat" is \(almost\) a constant/);
  });

  it('a zero column, too few rows and non-finite entries are named errors', () => {
    expect(thrown(() => qrFactor(fromRowsDense([[1, 0], [1, 0], [1, 0]]), { name: 'd', labels: ['const', 'z'] })).message).toMatch(/"z" is zero in every period/);
    expect(thrown(() => qrFactor(fromRowsDense([[1, 2, 3]]), { name: 'd' })).code).toBe('UNDERIDENTIFIED');
    const bad = thrown(() => qrFactor(fromRowsDense([[1, 2], [1, Number.NaN], [1, 4]]), { name: 'd', labels: ['const', 'f'] }));
    expect(bad.code).toBe('INPUT_INVALID');
    expect(bad.message).toContain('f has a non-finite value in row 2');
  });

  it('nearly collinear but identified columns (unexplained share 1e-5) still solve exactly', () => {
    // y = 1 + x1 + x2 exactly: QR recovers (1, 1, 1) even though x2 ~ x1 up to 1e-5 (closed form).
    const rows = Array.from({ length: 20 }, (_, t) => [1, t / 20, t / 20 + 1e-5 * Math.cos(t)]);
    const y = rows.map((r) => r[0] + r[1] + r[2]);
    const sol = qrLeastSquares(qrFactor(fromRowsDense(rows), { name: 'd' }), y);
    for (const b of sol.coefficients) expectClose(b, 1, 1e-8, 'coefficient');
  });
});

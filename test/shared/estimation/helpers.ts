/** Shared test helpers: panels from reference fixtures, and comparisons that print value, expected and tolerance. */
import { expect } from 'vitest';
import type { ReturnsPanel } from '../../../shared/panel.js';

/** Month-end labels from 2001-01-31, T of them (invented calendar for seeded data). */
export function monthEnds(T: number, startYear = 2001): string[] {
  const out: string[] = [];
  for (let k = 0; k < T; k++) {
    const y = startYear + Math.floor(k / 12);
    const m = (k % 12) + 1;
    const last = new Date(Date.UTC(y, m, 0)).getUTCDate();
    out.push(`${y}-${String(m).padStart(2, '0')}-${String(last).padStart(2, '0')}`);
  }
  return out;
}

export interface FixtureData {
  excess: number[][];
  riskfree: number[];
  factors: number[][];
  consumptionGrowth: number[];
}

/** Columns of a T x n row matrix. */
export function columns(rows: number[][]): Float64Array[] {
  const n = rows[0].length;
  return Array.from({ length: n }, (_, j) => Float64Array.from(rows, (r) => r[j]));
}

export function panelFromFixture(data: FixtureData, returnKind: 'excess' | 'gross', factorNames = ['f1', 'f2', 'f3']): ReturnsPanel {
  const T = data.excess.length;
  const ex = columns(data.excess);
  const rf = Float64Array.from(data.riskfree);
  const returns = returnKind === 'excess' ? ex : ex.map((r) => Float64Array.from(r, (x, t) => 1 + rf[t] + x));
  return {
    frequency: 'monthly',
    periods: monthEnds(T),
    assets: ex.map((_, i) => `P${String(i + 1).padStart(2, '0')}`),
    returnKind,
    returns,
    factors: columns(data.factors).map((values, k) => ({ name: factorNames[k], values })),
    riskfreeGross: Float64Array.from(rf, (x) => 1 + x),
    consumptionGrowth: Float64Array.from(data.consumptionGrowth),
    sampleNotes: [],
  };
}

/** |value - expected| <= rel * max(|expected|, floor); the message carries all four numbers. */
export function expectClose(value: number, expected: number, rel: number, what: string, floor = 0): void {
  const tol = rel * Math.max(Math.abs(expected), floor);
  const diff = Math.abs(value - expected);
  expect(diff <= tol, `${what}: value ${value}, expected ${expected}, |diff| ${diff.toExponential(3)}, tolerance ${tol.toExponential(3)}`).toBe(true);
}

/** One case of a GMM reference fixture (make_gmm.R, make_instruments.R/.py): what R or numpy computed. */
export interface GmmReferenceCase<Spec> {
  name: string;
  spec: Spec;
  lags: number;
  q: number;
  p: number;
  theta: number[];
  se: number[];
  alpha: number[];
  alphaSe: number[];
  peStat: number;
  peDf: number;
  peP: number;
  J: number | null;
  JP: number | null;
  hj: number;
  hjStat: number;
  hjWeights: number[];
  hjPImhof: number;
  hjPSim?: number;
  hjSimDraws?: number;
  sdfMean: number;
  sdfStd: number;
}

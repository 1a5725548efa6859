/**
 * The invented demo market's monthly prices (sample-data/monthly/prices.csv) as price
 * histories, read straight from the CSV (no store), and the reference fixture.
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import type { PriceHistory } from '../../../shared/data.js';

export const FIXTURE = path.resolve(import.meta.dirname, 'fixtures/present_value.json');
const PRICES = path.resolve(import.meta.dirname, '../../../sample-data/monthly/prices.csv');

/** Demo histories in file order of first appearance (the CSV has no quoted fields). */
export function demoHistories(): PriceHistory[] {
  const lines = readFileSync(PRICES, 'utf8').trim().split('\n').slice(1);
  const rows = new Map<string, { dates: string[]; price: number[]; dividend: number[]; adjust: number[]; shares: number[] }>();
  for (const line of lines) {
    const [date, asset, price, dividend, adjust, shares] = line.split(',');
    let r = rows.get(asset);
    if (!r) rows.set(asset, (r = { dates: [], price: [], dividend: [], adjust: [], shares: [] }));
    r.dates.push(date);
    r.price.push(Number(price));
    r.dividend.push(dividend === '' ? 0 : Number(dividend));
    r.adjust.push(adjust === '' ? 1 : Number(adjust));
    r.shares.push(shares === '' ? Number.NaN : Number(shares));
  }
  return [...rows].map(([asset, r]) => ({
    asset,
    dates: r.dates,
    price: Float64Array.from(r.price),
    dividend: Float64Array.from(r.dividend),
    adjust: Float64Array.from(r.adjust),
    shares: Float64Array.from(r.shares),
  }));
}

export interface RegressionRef {
  a: number;
  b: number;
  seA: number;
  seB: number;
  r2: number;
  cov: number[][];
}

export interface DecompositionRef {
  lags: number;
  sample: { first: string; last: string; T: number };
  meanDp: number;
  rho: number;
  dp: number[];
  r: number[];
  dd: number[];
  regressions: { r: RegressionRef; dd: RegressionRef; dp: RegressionRef };
  identity: { value: number; gap: number };
  longRun: { r: { b: number; se: number }; dd: { b: number; se: number } };
  varianceShares: { r: number; dd: number };
  covariance: number[][];
}

export interface DecompositionCase {
  name: string;
  kind: 'seeded' | 'demo-aggregate' | 'demo-single';
  asset?: string;
  assets?: string[];
  lagsSpec: number | 'auto';
  years: string[];
  price: number[];
  dividend: number[];
  expected: DecompositionRef;
}

export interface DriftRef {
  frequency: 'monthly' | 'quarterly';
  lags: number;
  sample: { first: string; last: string; T: number };
  assets: { asset: string; drift: number; priceGrowth: number; dividendYield: number; sigma: number; logDrift: number; se: { drift: number; priceGrowth: number; dividendYield: number; logDrift: number } }[];
}

export interface Fixture {
  versions: Record<string, string>;
  call: string;
  decomposition: DecompositionCase[];
  drift: DriftRef[];
}

export function loadFixture(): Fixture {
  return JSON.parse(readFileSync(FIXTURE, 'utf8')) as Fixture;
}

/** |got - want| <= tol * max(1, |want|). */
export function close(got: number, want: number, tol: number): boolean {
  return Math.abs(got - want) <= tol * Math.max(1, Math.abs(want));
}

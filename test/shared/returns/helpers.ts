// Shared by the returns-engine tests: reads the committed fixture inputs and compares
// numbers with an explicit tolerance, printing value, expected and tolerance on failure.
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { expect } from 'vitest';
import type { NamedSeries, PriceHistory, RiskfreeForm, SeriesKind } from '../../../shared/data.js';

export const FIXTURES = path.join(import.meta.dirname, 'fixtures');

export function readJson<T>(name: string): T {
  return JSON.parse(readFileSync(path.join(FIXTURES, name), 'utf8')) as T;
}

function csvRows(name: string): Record<string, string>[] {
  const [head, ...lines] = readFileSync(path.join(FIXTURES, name), 'utf8').trim().split('\n');
  const cols = head.split(',');
  return lines.map((line) => {
    const cells = line.split(',');
    return Object.fromEntries(cols.map((c, i) => [c, cells[i] ?? '']));
  });
}

/** prices.csv (asset,date,price,dividend,adjust) -> one PriceHistory per asset, in file order. */
export function readPrices(name = 'prices.csv'): PriceHistory[] {
  const by = new Map<string, Record<string, string>[]>();
  for (const r of csvRows(name)) {
    const list = by.get(r.asset) ?? [];
    list.push(r);
    by.set(r.asset, list);
  }
  return [...by].map(([asset, rows]) => ({
    asset,
    dates: rows.map((r) => r.date),
    price: Float64Array.from(rows, (r) => Number.parseFloat(r.price)),
    dividend: Float64Array.from(rows, (r) => Number.parseFloat(r.dividend)),
    adjust: Float64Array.from(rows, (r) => Number.parseFloat(r.adjust)),
  }));
}

/** series.csv (name,kind,form,date,value) -> NamedSeries. */
export function readSeries(name = 'series.csv'): NamedSeries[] {
  const by = new Map<string, Record<string, string>[]>();
  for (const r of csvRows(name)) {
    const list = by.get(r.name) ?? [];
    list.push(r);
    by.set(r.name, list);
  }
  return [...by].map(([n, rows]) => {
    const s: NamedSeries = {
      name: n,
      kind: rows[0].kind as SeriesKind,
      dates: rows.map((r) => r.date),
      values: Float64Array.from(rows, (r) => Number.parseFloat(r.value)),
    };
    if (rows[0].form) s.rfForm = rows[0].form as RiskfreeForm;
    return s;
  });
}

/** |value - expected| <= rtol |expected| + atol, with a message naming what is compared. */
export function expectClose(value: number | null | undefined, expected: number | null, what: string, rtol = 1e-12, atol = 0): void {
  if (expected === null) {
    expect(value ?? null, `${what}: expected no value, got ${value}`).toBeNull();
    return;
  }
  const tol = rtol * Math.abs(expected) + atol;
  const ok = typeof value === 'number' && Math.abs(value - expected) <= tol;
  expect(ok, `${what}: value ${value}, expected ${expected}, |diff| ${typeof value === 'number' ? Math.abs(value - expected) : 'n/a'}, tolerance ${tol}`).toBe(true);
}

/** Assertion helper for reference checks: fails with value, expected, error and tolerance. */
import { expect } from 'vitest';

export function relErr(value: number, expected: number): number {
  if (value === expected) return 0;
  return Math.abs(value - expected) / Math.max(Math.abs(expected), Number.MIN_VALUE);
}

/** |value - expected| <= rel * |expected| + abs. */
export function expectClose(value: number, expected: number, rel: number, label: string, abs = 0): void {
  const err = Math.abs(value - expected);
  const tol = rel * Math.abs(expected) + abs;
  const ok = Number.isFinite(value) && err <= tol;
  expect(ok, `${label}: value ${value}, expected ${expected}, |error| ${err.toExponential(3)}, tolerance ${tol.toExponential(3)}`).toBe(true);
}

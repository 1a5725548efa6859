import { expect } from 'vitest';
import type { ReturnsPanel } from '../../../shared/panel.js';

/** |actual - expected| <= tol * max(|expected|, floor); prints value, expected and tolerance on failure. */
export function expectClose(actual: number, expected: number, tol: number, what: string, floor = 1e-12): void {
  const scale = Math.max(Math.abs(expected), floor);
  const err = Math.abs(actual - expected) / scale;
  if (!(err <= tol)) {
    expect.fail(`${what}: got ${actual}, expected ${expected}, relative error ${err.toExponential(3)} > tolerance ${tol}`);
  }
}

export interface FixturePanelInput {
  periods: string[];
  assets: string[];
  factors: string[];
  excess: number[][];
  gross: number[][];
  factorValues: number[][];
}

export function panelFromFixture(fx: FixturePanelInput, kind: 'excess' | 'gross'): ReturnsPanel {
  return {
    frequency: 'monthly',
    periods: fx.periods,
    assets: fx.assets,
    returnKind: kind,
    returns: (kind === 'gross' ? fx.gross : fx.excess).map((r) => Float64Array.from(r)),
    factors: fx.factors.map((name, k) => ({ name, values: Float64Array.from(fx.factorValues[k]) })),
    sampleNotes: [],
  };
}

export { seededPanel } from './seeded.js';

/**
 * Grid specs: the expansion order against Python's itertools (fixtures/make_grid_order.py:
 * itertools.product over the axes, itertools.combinations per subset size), refusals that
 * name the key, the task limit, and every task a complete spec.
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { DEFAULT_MAX_TASKS, checkGridSize, expandGrid, gridAxes, gridNames, gridSize, panelKey, parseGridSpec } from '../../../shared/batch/grid.js';
import { isDeflatorError } from '../../../shared/errors.js';
import { parseFitSpec } from '../../../shared/spec.js';

const fixture = JSON.parse(readFileSync(path.join(import.meta.dirname, 'fixtures/grid_order.json'), 'utf8')) as {
  cases: { name: string; grid: Record<string, unknown>; labels: string[] }[];
};
const base = { riskfree: 'bill_yield', model: { kind: 'linear' }, backtest: { window: 120, step: 6, horizon: 6 } };

function refusal(f: () => unknown): string {
  try {
    f();
  } catch (e) {
    if (isDeflatorError(e)) return `${e.code}: ${e.message}${e.hint ? `\n-> ${e.hint}` : ''}`;
    throw e;
  }
  throw new Error('expected a refusal');
}

describe('grid expansion', () => {
  for (const c of fixture.cases) {
    it(`${c.name}: tasks in the order itertools gives (${c.labels.length} tasks)`, () => {
      const g = parseGridSpec({ base, grid: c.grid });
      expect(gridSize(g)).toBe(c.labels.length);
      const tasks = expandGrid(g);
      expect(tasks.map((t) => t.label)).toEqual(c.labels);
      expect(tasks.map((t) => t.task)).toEqual(c.labels.map((_, i) => i));
    });
  }

  it('every task is a complete spec that parses to itself, with its grid values set', () => {
    const g = parseGridSpec({ label: 'search', base, grid: fixture.cases[0].grid });
    for (const t of expandGrid(g)) {
      expect(parseFitSpec(JSON.parse(JSON.stringify(t.spec)))).toEqual(t.spec);
      const get = (axis: string) => t.settings.find((s) => s.axis === axis)!.value;
      expect(t.spec.model.factors.join('+')).toBe(get('model.factors'));
      expect(t.spec.estimator.stage).toBe(get('estimator.stage'));
      expect(String(t.spec.backtest?.window)).toBe(get('backtest.window'));
      expect(t.spec.backtest?.step).toBe(6);
      expect(t.spec.label).toBe(`search: ${t.label}`);
      expect(t.spec.riskfree).toBe('bill_yield');
    }
  });

  it('test-asset sets: "all", a list, a named list', () => {
    const g = parseGridSpec({ base, grid: { assets: ['all', ['a', 'b'], { name: 'banks', assets: ['c', 'd', 'e', 'f'] }], 'model.factors': [['harbor']] } });
    const tasks = expandGrid(g);
    expect(tasks.map((t) => t.label)).toEqual(['assets=all factors=harbor', 'assets=a+b factors=harbor', 'assets=banks factors=harbor']);
    expect(tasks.map((t) => t.spec.assets)).toEqual(['all', ['a', 'b'], ['c', 'd', 'e', 'f']]);
    expect(gridNames(g)).toEqual({ series: ['bill_yield', 'harbor'], assets: 'all' });
  });

  it('instruments: none, or an instruments block; each a different panel', () => {
    const g = parseGridSpec({ base, grid: { 'model.factors': [['harbor']], instruments: ['none', { series: ['board_yield'] }, { series: ['board_yield', 'term_gap'], scale: 'both', lag: 2 }] } });
    const tasks = expandGrid(g);
    expect(tasks.map((t) => t.label)).toEqual(['factors=harbor instruments=none', 'factors=harbor instruments=board_yield/returns/lag1', 'factors=harbor instruments=board_yield+term_gap/both/lag2']);
    expect(tasks[0].spec.instruments).toBeUndefined();
    expect(tasks[1].spec.instruments).toEqual({ series: ['board_yield'], scale: 'returns', lag: 1 });
    expect(new Set(tasks.map((t) => panelKey(t.spec))).size).toBe(3);
    expect(gridNames(g).series).toEqual(['bill_yield', 'board_yield', 'term_gap', 'harbor']);
  });

  it('tasks that differ only in the estimator or window share a panel key', () => {
    const tasks = expandGrid(parseGridSpec({ base, grid: fixture.cases[0].grid }));
    expect(new Set(tasks.map((t) => panelKey(t.spec))).size).toBe(7);
  });

  it('a back-test axis without a base backtest block makes one', () => {
    const tasks = expandGrid(parseGridSpec({ base: { riskfree: 'bill_yield', model: { factors: ['harbor'] } }, grid: { 'backtest.window': [36, 48] } }));
    expect(tasks.map((t) => t.spec.backtest)).toEqual([
      { window: 36, step: 1, horizon: 1, expanding: false },
      { window: 48, step: 1, horizon: 1, expanding: false },
    ]);
  });
});

describe('grid refusals name the key', () => {
  it('unknown axis, wrong value, unknown key', () => {
    expect(refusal(() => parseGridSpec({ base, grid: { 'estimator.stages': ['first'] } }))).toMatch(/SPEC_INVALID: spec\.grid: unknown key\(s\) "estimator\.stages"/);
    expect(refusal(() => parseGridSpec({ base, grid: { 'estimator.stage': ['first', 'fifth'] } }))).toMatch(/spec\.grid\.estimator\.stage\.1: /);
    expect(refusal(() => parseGridSpec({ base, grid: { 'estimator.stage': ['first'] }, extra: 1 }))).toMatch(/spec: unknown key\(s\) "extra"/);
    expect(refusal(() => parseGridSpec({ base: { ...base, model: { kind: 'linear', factor: ['x'] } }, grid: { 'estimator.stage': ['first'] } }))).toMatch(/spec\.base\.model: unknown key\(s\) "factor"/);
    expect(refusal(() => parseGridSpec({ base, grid: { 'backtest.window': [1] } }))).toMatch(/spec\.grid\.backtest\.window\.0: /);
  });

  it('no axis, repeated values, subset bounds, a label on the base', () => {
    expect(refusal(() => parseGridSpec({ base, grid: {} }))).toMatch(/spec\.grid: no axis given/);
    expect(refusal(() => parseGridSpec({ base, grid: { 'estimator.lags': [3, 'auto', 3] } }))).toMatch(/spec\.grid\.estimator\.lags\.2: the same value as item 0/);
    expect(refusal(() => parseGridSpec({ base, grid: { 'model.factors': { subsets: ['a', 'b'], maxSize: 3 } } }))).toMatch(/spec\.grid\.model\.factors\.maxSize: 3 is more than the 2 candidate factors/);
    expect(refusal(() => parseGridSpec({ base, grid: { 'model.factors': { subsets: ['a', 'b'], minSize: 2, maxSize: 1 } } }))).toMatch(/spec\.grid\.model\.factors\.minSize: 2 is above maxSize 1/);
    expect(refusal(() => parseGridSpec({ base, grid: { 'model.factors': { subsets: ['a', 'b'], always: ['a'] } } }))).toMatch(/spec\.grid\.model\.factors\.always: a also in subsets/);
    expect(refusal(() => parseGridSpec({ base: { ...base, label: 'x' }, grid: { 'estimator.stage': ['first'] } }))).toMatch(/spec\.base\.label: /);
  });

  it('a combination the spec rules refuse names the task and the key', () => {
    const g = parseGridSpec({ base, grid: { 'model.factors': { subsets: ['harbor', 'ember'], minSize: 0 } } });
    expect(refusal(() => expandGrid(g))).toMatch(/1 of 4 grid task\(s\) are not valid specs:\ntask 0 \(factors=\(none\)\)\.model\.factors: a linear model needs at least one factor/);
  });

  it(`refuses a grid above the limit (${DEFAULT_MAX_TASKS}) before expanding it, and takes a raised limit`, () => {
    const g = parseGridSpec({ base, grid: { 'model.factors': { subsets: Array.from({ length: 30 }, (_, i) => `f${i}`) }, 'estimator.stage': ['first', 'second'] } });
    expect(gridSize(g)).toBe(2 * (2 ** 30 - 1));
    const t0 = performance.now();
    expect(refusal(() => expandGrid(g))).toMatch(/INPUT_INVALID: the grid expands to 2,147,483,646 tasks \(model\.factors 1073741823 x estimator\.stage 2\), more than the limit of 10,000/);
    expect(performance.now() - t0).toBeLessThan(200);
    const small = parseGridSpec({ base, grid: fixture.cases[0].grid });
    expect(refusal(() => checkGridSize(small, 27))).toMatch(/28 tasks .* more than the limit of 27[\s\S]*--max-tasks 28/);
    expect(checkGridSize(small, 28)).toBe(28);
    expect(gridAxes(small)).toEqual([
      { axis: 'model.factors', count: 7 },
      { axis: 'estimator.stage', count: 2 },
      { axis: 'backtest.window', count: 2 },
    ]);
  });
});

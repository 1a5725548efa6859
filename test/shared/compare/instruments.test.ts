/**
 * Comparisons with instruments (METHODS 9): per-model instruments, the common sample of
 * models whose instruments cost different periods, and the HJ bootstrap on the scaled
 * payoffs. The closed-form HJ^2 of the bootstrap must equal the HJ distance the estimator
 * reports (checked against R gmm in test/shared/estimation/instruments.reference.test.ts).
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { compareModels, modelHjSquared } from '../../../shared/compare/index.js';
import { fit } from '../../../shared/estimation/fit.js';
import type { ReturnsPanel } from '../../../shared/panel.js';
import { parseCompareSpec, parseFitSpec } from '../../../shared/spec.js';
import { expectClose, panelFromFixture, type FixtureData } from '../estimation/helpers.js';

const fx = JSON.parse(readFileSync(path.join(import.meta.dirname, '../estimation/fixtures/instruments_reference.json'), 'utf8')) as { data: FixtureData & { instruments: number[][] } };
const FACTORS = ['f1', 'f2'];

function panelWith(returns: 'excess' | 'gross', names: string[], drop = 0): ReturnsPanel {
  const p = panelFromFixture(fx.data, returns, FACTORS);
  const T = p.periods.length;
  const idx = ['dp', 'spread'];
  const full: ReturnsPanel = { ...p, instruments: { lag: 1, series: names.map((name) => ({ name, values: Float64Array.from({ length: T }, (_, t) => fx.data.instruments[t][idx.indexOf(name)]) })), lost: [] } };
  if (!drop) return full;
  // a panel whose instruments cost its first `drop` periods
  const keep = (s: Float64Array) => s.slice(drop);
  return {
    ...full,
    periods: full.periods.slice(drop),
    returns: full.returns.map(keep),
    factors: full.factors.map((f) => ({ name: f.name, values: keep(f.values) })),
    riskfreeGross: full.riskfreeGross && keep(full.riskfreeGross),
    consumptionGrowth: full.consumptionGrowth && keep(full.consumptionGrowth),
    instruments: { ...full.instruments!, series: full.instruments!.series.map((z) => ({ name: z.name, values: keep(z.values) })) },
  };
}

describe('comparison specs with instruments', () => {
  it('an entry\'s instruments replace the comparison\'s; time-series entries refuse them by name', () => {
    const { fits } = parseCompareSpec({
      riskfree: 'rf',
      instruments: { series: ['dp'] },
      compare: [{ model: { kind: 'linear', factors: FACTORS } }, { model: { kind: 'linear', factors: FACTORS }, instruments: { series: ['dp', 'spread'], scale: 'both' } }],
    });
    expect(fits[0].instruments).toEqual({ series: ['dp'], scale: 'returns', lag: 1 });
    expect(fits[1].instruments).toEqual({ series: ['dp', 'spread'], scale: 'both', lag: 1 });
    expect(() =>
      parseCompareSpec({ riskfree: 'rf', compare: [{ model: { kind: 'linear', factors: FACTORS } }, { model: { kind: 'linear', factors: FACTORS }, estimator: { method: 'time-series' }, instruments: { series: ['dp'] } }] }),
    ).toThrow(/spec\.compare\.1\.instruments: time-series regressions take no instruments/);
  });

  it('models are fitted on the periods they share; the HJ bootstrap uses the scaled payoffs', () => {
    const { spec, fits } = parseCompareSpec({
      riskfree: 'rf',
      bootstrap: { replications: 20, seed: 11 },
      compare: [
        { label: 'plain', model: { kind: 'linear', factors: FACTORS } },
        { label: 'managed', model: { kind: 'linear', factors: FACTORS }, instruments: { series: ['dp'], scale: 'returns' } },
      ],
    });
    const res = compareModels(spec, fits, [panelFromFixture(fx.data, 'excess', FACTORS), panelWith('excess', ['dp'], 3)], { fit });
    expect(res.models.map((m) => m.label)).toEqual(['plain', 'managed']);
    expect(res.sample.T).toBe(fx.data.excess.length - 3);
    const managed = fit(fits[1], panelWith('excess', ['dp'], 3));
    expect(res.models[1].hj?.distance).toBe(managed.hj?.distance);
    expect(res.hjTests).toHaveLength(1);
    expect(res.hjTests[0].used).toBe(20);
  });
});

describe('closed-form HJ^2 on scaled payoffs equals the HJ distance the estimator reports', () => {
  const cases = [
    { kind: 'linear', returns: 'excess', scale: 'returns' },
    { kind: 'linear', returns: 'excess', scale: 'factors' },
    { kind: 'linear-raw', returns: 'excess', scale: 'both' },
    { kind: 'linear-gross', returns: 'gross', scale: 'returns' },
    { kind: 'linear-gross', returns: 'gross', scale: 'both' },
  ] as const;
  for (const c of cases)
    it(`${c.kind}, scale ${c.scale}`, () => {
      const spec = parseFitSpec({ returns: c.returns, riskfree: 'rf', model: { kind: c.kind, factors: FACTORS }, estimator: { lags: 2 }, instruments: { series: ['dp', 'spread'], scale: c.scale } });
      const panel = panelWith(c.returns, ['dp', 'spread']);
      const res = fit(spec, panel);
      expectClose(modelHjSquared(spec, panel, null, {}), (res.hj?.distance ?? NaN) ** 2, 1e-9, 'HJ^2 closed form vs fit().hj'); // fit().hj is checked against R gmm
    });
});

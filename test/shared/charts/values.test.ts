/** Chart option builders of the present-value analyses, on demo results (no canvas). */
import { describe, expect, it } from 'vitest';
import { discountedPathsOption, dpOverTimeOption, dpRegressionsOption, driftSplitOption, mostDrifting } from '../../../shared/charts/values.js';
import { fit } from '../../../shared/estimation/fit.js';
import { parseDriftSpec, parseFitSpec, parsePresentValueSpec } from '../../../shared/spec.js';
import { driftAnalysis, driftPanel } from '../../../shared/values/drift.js';
import { presentValue } from '../../../shared/values/presentValue.js';
import { panelFromFixture, type FixtureData } from '../estimation/helpers.js';
import { demoHistories } from '../values/helpers.js';
import { readFileSync } from 'node:fs';
import path from 'node:path';

const data = (JSON.parse(readFileSync(path.resolve(import.meta.dirname, '../estimation/fixtures/gmm_reference.json'), 'utf8')) as { data: FixtureData }).data;
const histories = demoHistories();

describe('discounted-value chart', () => {
  const panel = panelFromFixture(data, 'excess');
  const r = fit(parseFitSpec({ returns: 'excess', riskfree: 'rf', model: { kind: 'linear', factors: ['f1', 'f2', 'f3'] } }), panel);
  it('one line per asset beside the flat line at 0, the assets that drift most named in colour', () => {
    const o = discountedPathsOption(r, { label: 3 });
    expect(o.series).toHaveLength(panel.assets.length + 1);
    expect(o.series[0].data.every((v) => v === 0)).toBe(true);
    const d = r.discounted as NonNullable<typeof r.discounted>;
    const named = mostDrifting(d, 3);
    const ends = Object.entries(d.series).map(([a, p]) => [a, Math.abs(p[p.length - 1])] as const).sort((x, y) => y[1] - x[1]);
    expect(named).toEqual(ends.slice(0, 3).map((e) => e[0]));
    const labelled = o.series.filter((s) => (s.endLabel as { show: boolean } | undefined)?.show).map((s) => s.name);
    expect(labelled.sort()).toEqual([...named].sort());
    // values in percent of the stored path
    const first = o.series.find((s) => s.name === named[0]);
    expect(first?.data[panel.periods.length - 1]).toBeCloseTo(d.series[named[0]][panel.periods.length - 1] * 100, 12);
  });
  it('gross returns: the flat line at 1, values as stored', () => {
    const g = fit(parseFitSpec({ returns: 'gross', riskfree: 'rf', model: { kind: 'linear-gross', factors: ['f1', 'f2', 'f3'] } }), panelFromFixture(data, 'gross'));
    const o = discountedPathsOption(g);
    expect(o.series[0].data.every((v) => v === 1)).toBe(true);
  });
});

describe('present-value charts', () => {
  const pv = presentValue(parsePresentValueSpec({ analysis: 'present-value', aggregate: true }), histories);
  it('dp over time: the yearly dp and its mean', () => {
    const o = dpOverTimeOption(pv);
    expect(o.series[0].data).toEqual(pv.series.dp);
    expect(o.series[1].data.every((v) => v === pv.meanDp)).toBe(true);
  });
  it('the three regressions: points (dp_t, y_t+1) and the fitted line a + b dp at the ends of the dp range', () => {
    const o = dpRegressionsOption(pv);
    expect(o.series).toHaveLength(6);
    const x = pv.series.dp.slice(0, -1);
    const line = o.series[1].data as number[][];
    expect(line[0]).toEqual([Math.min(...x), pv.regressions.r.a + pv.regressions.r.b * Math.min(...x)]);
    expect((o.series[4].data as { value: number[] }[])[0].value).toEqual([x[0], pv.series.dp[1]]);
  });
});

describe('drift split chart', () => {
  it('price growth and dividend yield stack to the drift of each asset', () => {
    const spec = parseDriftSpec({ analysis: 'drift', assets: ['lanternfold-power', 'fallowmere-grain', 'harrowind-timber'] });
    const dr = driftAnalysis(spec, driftPanel(spec, histories));
    const o = driftSplitOption(dr);
    dr.assets.forEach((a, i) => {
      const sum = (o.series[0].data[i] as number) + (o.series[1].data[i] as number);
      expect(sum).toBeCloseTo(a.drift * 100, 12);
      expect(o.series[3].data[i]).toBe(a.drift * 100);
      expect(o.series[2].data[i]).toBeNull();
    });
  });
});

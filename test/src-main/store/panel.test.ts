/**
 * loadPanel on the demo database: the store -> buildPanel path gives the same excess
 * returns, risk-free returns and consumption growth as pandas computes straight from the
 * sample-data CSVs (fixtures/demo_panel.json, written by fixtures/make_demo_panel.py with
 * pandas 1.5.3). Tolerance 1e-14: the two sides may order the same few floating-point
 * operations differently; the values are O(0.1).
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { beforeAll, afterAll, describe, expect, it } from 'vitest';
import { parseFitSpec } from '../../../shared/spec.js';
import { buildDemo } from '../../../src-main/data/demo.js';
import { loadPanel, loadPanelInput } from '../../../src-main/data/panel.js';
import { Store } from '../../../src-main/store/store.js';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';

interface Fixture {
  periods: string[];
  rfAccount: number[];
  rfBill: number[];
  consumptionGrowth: number[];
  excessAccount: Record<string, number[]>;
  excessBill: Record<string, number[]>;
}
const fx = JSON.parse(readFileSync(path.join(import.meta.dirname, 'fixtures', 'demo_panel.json'), 'utf8')) as Fixture;
const TOL = 1e-14;

function close(label: string, got: ArrayLike<number>, want: number[]) {
  expect(got.length, `${label}: length`).toBe(want.length);
  for (let i = 0; i < want.length; i++) {
    const d = Math.abs(got[i] - want[i]);
    if (!(d <= TOL)) expect.fail(`${label}[${i}] (${fx.periods[i]}): got ${got[i]}, expected ${want[i]} (pandas), |diff| ${d} > tolerance ${TOL}`);
  }
}

let dir = '';
let store: Store;
beforeAll(async () => {
  dir = mkdtempSync(path.join(tmpdir(), 'deflator-panel-'));
  const db = path.join(dir, 'demo.db');
  await buildDemo(db, { sampleDir: path.resolve(import.meta.dirname, '../../../sample-data') });
  store = new Store(db, { mustExist: true });
});
afterAll(() => {
  store.close();
  rmSync(dir, { recursive: true, force: true });
});

describe('loadPanel on the demo data', () => {
  const assets = Object.keys(fx.excessAccount);

  it('excess returns over the money-market account, and R^f, equal pandas', () => {
    const panel = loadPanel(store, parseFitSpec({ riskfree: 'mm_account', assets, model: { factors: ['harbor', 'ember', 'ledger'] } }));
    expect(panel.periods).toEqual(fx.periods);
    expect(panel.assets).toEqual(assets);
    assets.forEach((a, i) => close(`excess ${a} (account)`, panel.returns[i], fx.excessAccount[a]));
    close('R^f from the account', panel.riskfreeGross ?? [], fx.rfAccount);
    expect(panel.factors.map((f) => f.name)).toEqual(['harbor', 'ember', 'ledger']);
  });

  it('excess returns over the annual bill yield (percent, yield-annual), equal pandas', () => {
    const panel = loadPanel(store, parseFitSpec({ riskfree: 'bill_yield', assets, model: { factors: ['harbor'] } }));
    assets.forEach((a, i) => close(`excess ${a} (bill)`, panel.returns[i], fx.excessBill[a]));
    close('R^f from the bill yield', panel.riskfreeGross ?? [], fx.rfBill);
  });

  it('consumption growth equals pandas C_t / C_{t-1}', () => {
    const panel = loadPanel(store, parseFitSpec({ returns: 'gross', riskfree: 'mm_account', assets, model: { kind: 'consumption', consumption: 'household_spending' } }));
    close('consumption growth', panel.consumptionGrowth ?? [], fx.consumptionGrowth);
  });

  it('reads exactly what the spec names', () => {
    const input = loadPanelInput(store, parseFitSpec({ riskfree: 'mm_account', assets: ['lanternfold-power'], model: { factors: ['ember'] } }));
    expect(input.histories.map((h) => h.asset)).toEqual(['lanternfold-power']);
    expect(input.series.map((s) => s.name).sort()).toEqual(['ember', 'mm_account']);
    expect(loadPanelInput(store, parseFitSpec({ riskfree: 'mm_account', model: { factors: ['ember'] } })).histories).toHaveLength(30);
  });

  it('names what is missing, and what is stored instead', () => {
    expect(() => loadPanel(store, parseFitSpec({ riskfree: 'mm_account', assets: ['nowhere-co'], model: { factors: ['harbor'] } }))).toThrow(/test asset\(s\) "nowhere-co" \(spec\.assets\) not in/);
    expect(() => loadPanel(store, parseFitSpec({ riskfree: 'mm_account', model: { factors: ['tide'] } }))).toThrow(/factor series "tide" \(spec\.model\.factors\) is not in .*stored factor\/other series: board_yield, ember, harbor, ledger, term_spread/);
    expect(() => loadPanel(store, parseFitSpec({ riskfree: 'harbor', model: { factors: ['ember'] } }))).toThrow(/risk-free series "harbor" \(spec\.riskfree\) is stored as kind "factor"/);
  });

  it('a stored portfolio is a test asset by its name', () => {
    const periods = fx.periods.slice(0, 24);
    store.savePortfolio({ name: 'tilt-portfolio', frequency: 'monthly', periods, net: Float64Array.from(periods, (_, i) => 0.01 * Math.sin(i)), rules: 'test' }, { replace: true });
    const panel = loadPanel(store, parseFitSpec({ riskfree: 'mm_account', assets: ['tilt-portfolio', 'fallowmere-grain'], model: { factors: ['harbor'] } }));
    expect(panel.assets).toEqual(['tilt-portfolio', 'fallowmere-grain']);
    expect(panel.periods).toEqual(periods);
    // excess = (1 + net) - R^f, R^f from pandas
    close('portfolio excess', panel.returns[0], periods.map((_, i) => 1 + 0.01 * Math.sin(i) - fx.rfAccount[i]));
  });
});

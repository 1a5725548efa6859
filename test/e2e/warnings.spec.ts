/**
 * Warnings on screen: runs built to raise a warning on the demo database (36 months of
 * 10 test assets and three factors: 13 moments on 36 periods, below 5 periods a moment;
 * iterated GMM stopped after one update), recorded through the loopback server and opened from Run history. The fit
 * screen lists each warning at the top and under the tables it qualifies, as every export
 * does (test/shared/warnings.test.ts covers the other surfaces and the other codes).
 */
import type { FitResult } from '../../shared/results.js';
import { ESTIMATE_WARNINGS } from '../../shared/present/fit.js';
import { expect, test } from './fixtures.js';
import { bridgeCall, shot } from './flow.js';


// Ten of the demo's assets by name (other specs import more assets into the same server database).
const assets = ['ashcombe-lamps', 'brackenholt-rail', 'brinemoor-ferries', 'cindervale-metals', 'corvane-saltworks', 'duskwater-fisheries', 'eddisholm-glass', 'emberlyn-clocks', 'fallowmere-grain', 'foxmere-printing'];
const base = { frequency: 'monthly', assets, returns: 'excess', riskfree: 'bill_yield', model: { kind: 'linear', factors: ['harbor', 'ember', 'ledger'] } };
const cases = [
  { code: 'FEW_PERIODS', spec: { ...base, label: 'three factors on 36 months', start: '2022-01-01', end: '2024-12-31', estimator: { stage: 'second' } } },
  { code: 'ITERATION_CAP', spec: { ...base, label: 'iterated, capped at one update', estimator: { stage: 'iterated', maxIterations: 1 } } },
];

for (const c of cases) {
  test(`${c.code}: a run built to raise it shows the warning at the top of the fit screen and under the tables it qualifies`, async ({ page }) => {
    await page.goto('/');
    const r = await bridgeCall<FitResult & { runId: number }>(page, 'fit', { spec: c.spec });
    const w = r.warnings.find((x) => x.code === c.code);
    expect(w, `the run raises ${c.code}`).toBeDefined();
    expect(ESTIMATE_WARNINGS).toContain(c.code);
    await page.click('[data-screen=runs]');
    await page.locator(`[data-testid=runs-table] tr[data-run="${r.runId}"] button:has-text("Open")`).click();
    const top = page.locator(`[data-testid=result-warnings] [data-warning=${c.code}]`);
    await expect(top).toBeVisible();
    await expect(top).toContainText(w!.message.slice(0, 60));
    // The tables of estimates and tests carry it beneath them (the presentation's table warnings).
    for (const id of ['parameters', 'tests']) await expect(page.locator(`.datatable[data-table=${id}] [data-testid=table-warnings] [data-warning=${c.code}]`)).toBeVisible();
    await expect(page.locator('[data-caution]')).toContainText('not investment advice');
    await shot(page, `warning-${c.code.toLowerCase()}`);
  });
}

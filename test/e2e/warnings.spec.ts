/**
 * Warnings on screen: every code of shared/warnings.ts raised by a real run in the app and
 * shown on the screen of its recorded run (opened from Run history), at the top and under
 * each table it qualifies, as every export does (test/shared/warnings.test.ts covers the
 * terminal, HTML, LaTeX, CSV and XLSX).
 *
 * Two runs on the demo database (36 months of 10 test assets and three factors: 13 moments
 * on 36 periods, below 5 periods a moment; iterated GMM stopped after one update). The other
 * codes come from seeded, invented data built to raise them (test/e2e/warning-cases.ts says
 * how each construction does), imported through the bridge's importFile call, then fitted,
 * back-tested or compared through the bridge:
 *   S_NEAR_SINGULAR        fit: a test asset equal to another up to 2e-6 noise
 *   BELOW_VOLATILITY_BOUND fit: alphas of +-1 % a period alternating across the assets
 *   START_AT_EDGE          fit: a consumption model whose moments vanish at gamma = 250, beyond the scan
 *   SEVERAL_MINIMA         fit: a consumption model whose first moment vanishes at gamma = 10 and 100
 *   INSTRUMENT_LEVEL       fit: an instrument of mean 5 and s.d. 0.5 scaling the factor
 *   FAILED_WINDOWS         back-test: a factor constant over the first 45 of 150 months
 *   FAILED_REPLICATIONS    comparison: two assets equal but in two months, so block resamples
 *                          that miss both have a singular HJ weight E[R R']
 * Each test first checks that the run raised the code and that the presentation model places
 * it under the named tables, then reads the screen, so each screen assertion fails if the app
 * stopped rendering that warning.
 */
import type { AnyResult } from '../../shared/results.js';
import type { RunTag } from '../../shared/records/run-record.js';
import { present } from '../../shared/present/index.js';
import type { Page } from '@playwright/test';
import { expect, test } from './fixtures.js';
import { bridgeCall, shot } from './flow.js';
import { warningCases, type CaseFile } from './warning-cases.js';

// Ten of the demo's assets by name (other specs import more assets into the same server database).
const assets = ['ashcombe-lamps', 'brackenholt-rail', 'brinemoor-ferries', 'cindervale-metals', 'corvane-saltworks', 'duskwater-fisheries', 'eddisholm-glass', 'emberlyn-clocks', 'fallowmere-grain', 'foxmere-printing'];
const base = { frequency: 'monthly', assets, returns: 'excess', riskfree: 'bill_yield', model: { kind: 'linear', factors: ['harbor', 'ember', 'ledger'] } };
const demoCases = [
  { code: 'FEW_PERIODS', files: [] as CaseFile[], call: 'fit' as const, tables: ['parameters', 'tests', 'fit'], spec: { ...base, label: 'three factors on 36 months', start: '2022-01-01', end: '2024-12-31', estimator: { stage: 'second' } } },
  { code: 'ITERATION_CAP', files: [] as CaseFile[], call: 'fit' as const, tables: ['parameters', 'tests', 'discount-factor'], spec: { ...base, label: 'iterated, capped at one update', estimator: { stage: 'iterated', maxIterations: 1 } } },
];

/** The screen each kind of run opens on, and the element that says it has drawn. */
const SCREEN = { fit: '[data-testid=pricing-error-chart]', backtest: '[data-chart-id=oos-errors]', compare: '[data-testid=compare-models]' } as const;

/** A table of the screen by its presentation id, unfolded when it sits closed under a chart. */
async function screenTable(page: Page, id: string) {
  const box = page.locator(`.datatable[data-table="${id}"]`).first();
  const fold = page.locator('details.under-chart', { has: box });
  if ((await fold.count()) && !(await fold.first().evaluate((d) => (d as HTMLDetailsElement).open))) await fold.first().locator('summary').click();
  return box;
}

for (const c of [...demoCases, ...warningCases()]) {
  test(`${c.code}: a ${c.call} built to raise it shows the warning at the top of its screen and under ${c.tables.join(', ')}`, async ({ page }) => {
    await page.goto('/');
    for (const f of c.files) {
      const rep = await bridgeCall<{ warnings?: unknown[] }>(page, 'importFile', { source: { name: f.name, text: f.text }, kind: f.kind, options: f.options });
      expect(rep, `import of ${f.name}`).toBeDefined();
    }
    const r = await bridgeCall<AnyResult & RunTag>(page, c.call, { spec: c.spec });
    const w = r.warnings.find((x) => x.code === c.code);
    expect(w, `the run raises ${c.code}; it raised ${r.warnings.map((x) => x.code).join(', ') || 'nothing'}`).toBeDefined();
    expect(r.runId, 'the run is recorded').toBeGreaterThan(0);
    // the presentation model places the warning under these tables (what the screen must show)
    const p = present(r);
    for (const id of c.tables) expect(p.tables.find((t) => t.id === id)?.warnings.map((x) => x.code), `presentation table ${id}`).toContain(c.code);

    await page.click('[data-screen=runs]');
    await page.locator(`[data-testid=runs-table] tr[data-run="${r.runId}"] button:has-text("Open")`).click();
    await expect(page.locator(SCREEN[c.call]).first()).toBeVisible({ timeout: 60_000 });
    const top = page.locator(`[data-testid=result-warnings] [data-warning=${c.code}]`);
    await expect(top).toBeVisible();
    await expect(top).toContainText(w!.message.slice(0, 60));
    for (const id of c.tables) {
      const under = (await screenTable(page, id)).locator(`[data-testid=table-warnings] [data-warning=${c.code}]`);
      await expect(under, `${c.code} under table ${id}`).toBeVisible();
      await expect(under).toContainText(w!.message.slice(0, 60));
    }
    await expect(page.locator('[data-caution]').first()).toContainText('not investment advice');
    await shot(page, `warning-${c.code.toLowerCase()}`);
  });
}

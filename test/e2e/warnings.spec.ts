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
 * The present-value analyses' codes (shared/present/value.ts), on the present-value screen:
 *   FEW_YEARS              decomposition of ten demo assets over six years (2019-2024)
 *   EQUAL_SHARES           an aggregate holding an asset imported without shares outstanding
 *   NO_PRICE_SPLIT         drift split of a priced asset and one imported as returns
 *   DP_NEAR_UNIT_ROOT      one asset whose dp falls 0.02 a year for 40 years (phi = 1)
 *   LARGE_IDENTITY_GAP     one asset whose dp swings from -4 to +4 (the linearisation is poor)
 *   ASSET_DROPPED          drift split of a priced asset and a return series missing a month
 * (the same constructions as test/shared/values/warnings.test.ts)
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
import { valueCases, warningCases, type CaseFile } from './warning-cases.js';
import type { ValueResult } from '../../shared/results.js';

// Ten of the demo's assets by name (other specs import more assets into the same server database).
const assets = ['ashcombe-lamps', 'brackenholt-rail', 'brinemoor-ferries', 'cindervale-metals', 'corvane-saltworks', 'duskwater-fisheries', 'eddisholm-glass', 'emberlyn-clocks', 'fallowmere-grain', 'foxmere-printing'];
const base = { frequency: 'monthly', assets, returns: 'excess', riskfree: 'bill_yield', model: { kind: 'linear', factors: ['harbor', 'ember', 'ledger'] } };
const demoCases = [
  { code: 'FEW_PERIODS', files: [] as CaseFile[], call: 'fit' as const, tables: ['parameters', 'tests', 'fit'], spec: { ...base, label: 'three factors on 36 months', start: '2022-01-01', end: '2024-12-31', estimator: { stage: 'second' } } },
  { code: 'ITERATION_CAP', files: [] as CaseFile[], call: 'fit' as const, tables: ['parameters', 'tests', 'discount-factor'], spec: { ...base, label: 'iterated, capped at one update', estimator: { stage: 'iterated', maxIterations: 1 } } },
];

/** The screen each kind of run opens on, and the element that says it has drawn. */
const SCREEN = { fit: '[data-testid=pricing-error-chart]', backtest: '[data-chart-id=oos-errors]', compare: '[data-testid=compare-models]' } as const;

/** The case's files through the bridge's import call, as the import panel sends an uploaded file (a repeated import of the same bytes stores nothing). */
async function importFiles(page: Page, files: CaseFile[]): Promise<void> {
  for (const f of files) {
    const rep = await bridgeCall<{ file?: string }>(page, 'importFile', { source: { name: f.name, text: f.text }, kind: f.kind, options: f.options });
    expect(rep.file, `import of ${f.name}`).toBe(f.name);
  }
}

/** A table of the screen by its presentation id, unfolded when it sits closed under a chart. */
async function screenTable(page: Page, id: string) {
  const box = page.locator(`.datatable[data-table="${id}"]`).first();
  const fold = page.locator('details.under-chart', { has: box });
  if ((await fold.count()) && !(await fold.first().evaluate((d) => (d as HTMLDetailsElement).open))) await fold.first().locator('summary').click();
  return box;
}

/**
 * Runs a case through the bridge, checks that the run raised the code and that the
 * presentation model places it under the named tables, then opens the recorded run from Run
 * history and reads the screen: the warning in the list at the top (`top`) and under each
 * table, with its message.
 */
async function raisedAndShown(page: Page, c: { code: string; call: string; files: CaseFile[]; spec: Record<string, unknown>; tables: string[] }, top: string, drawn?: string): Promise<void> {
  await page.goto('/');
  await importFiles(page, c.files);
  const r = await bridgeCall<(AnyResult | ValueResult) & RunTag>(page, c.call, { spec: c.spec });
  const w = r.warnings.find((x) => x.code === c.code);
  expect(w, `the run raises ${c.code}; it raised ${r.warnings.map((x) => x.code).join(', ') || 'nothing'}`).toBeDefined();
  expect(r.runId, 'the run is recorded').toBeGreaterThan(0);
  // the presentation model places the warning under these tables (what the screen must show)
  const p = present(r);
  for (const id of c.tables) expect(p.tables.find((t) => t.id === id)?.warnings.map((x) => x.code), `presentation table ${id}`).toContain(c.code);

  await page.click('[data-screen=runs]');
  await page.locator(`[data-testid=runs-table] tr[data-run="${r.runId}"] button:has-text("Open")`).click();
  if (drawn) await expect(page.locator(drawn).first()).toBeVisible({ timeout: 60_000 });
  const listed = page.locator(`[data-testid=${top}] [data-warning=${c.code}]`);
  await expect(listed).toBeVisible({ timeout: 60_000 });
  await expect(listed).toContainText(w!.message.slice(0, 60));
  for (const id of c.tables) {
    const under = (await screenTable(page, id)).locator(`[data-testid=table-warnings] [data-warning=${c.code}]`);
    await expect(under, `${c.code} under table ${id}`).toBeVisible();
    await expect(under).toContainText(w!.message.slice(0, 60));
  }
  await expect(page.locator('[data-caution]').first()).toContainText('not investment advice');
  await shot(page, `warning-${c.code.toLowerCase()}`);
}

for (const c of [...demoCases, ...warningCases()]) {
  test(`${c.code}: a ${c.call} built to raise it shows the warning at the top of its screen and under ${c.tables.join(', ')}`, async ({ page }) => {
    await raisedAndShown(page, c, 'result-warnings', SCREEN[c.call]);
  });
}

// The present-value analyses carry their own codes (shared/present/value.ts): each raised by a
// recorded run and shown on the present-value screen, in the result's warning list and under
// the tables it qualifies.
for (const c of valueCases()) {
  test(`${c.code}: a ${c.call} run built to raise it shows the warning on the present-value screen and under ${c.tables.join(', ')}`, async ({ page }) => {
    await raisedAndShown(page, c, c.call === 'presentValue' ? 'pv-warnings' : 'drift-warnings');
  });
}

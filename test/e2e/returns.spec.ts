/**
 * Returns in, through the app: the sample return portfolios (YYYYMM dates, percent, -99.99
 * for a missing return) chosen in the import panel, previewed before anything is stored
 * (the preview points at the row and column where the import would stop, and follows the
 * options as they change), imported, covered with their form and gaps, charted as a value
 * index without a price line; the factors and the bill rate imported the same way; then a
 * spec loaded and fitted, the pricing-error bars checked against the engine's own reply,
 * then a back-test to 100 % and a comparison of two models on the same portfolios.
 * Runs last against the demo server (it adds the return set to the demo database).
 */
import { mkdirSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { expect, test } from './fixtures.js';
import { barsOf, checkBars, fitThroughPage, shot, specOnScreen } from './flow.js';

const root = path.resolve(import.meta.dirname, '../..');
const sample = (f: string) => path.join(root, 'sample-data', 'returns', f);
const PORTFOLIOS = ['small-t1', 'small-t2', 'small-t3', 'small-t4', 'mid-t1', 'mid-t2', 'mid-t3', 'mid-t4', 'large-t1', 'large-t2', 'large-t3', 'large-t4'];

test('a return file through the import panel with its preview, then a fit, a back-test and a comparison on it', async ({ page }) => {
  await page.goto('/');
  await page.locator('[data-testid=import-kind] label', { hasText: 'Returns' }).click();
  await page.setInputFiles('[data-testid=file-input]', sample('portfolios.csv'));

  // nothing stored yet: the preview shows the first rows, and where the import would stop
  const preview = page.locator('[data-testid=import-preview]');
  const problem = page.locator('[data-testid=preview-problem]');
  await expect(preview).toBeVisible();
  await expect(problem).toHaveAttribute('data-line', '2');
  await expect(problem).toHaveAttribute('data-column', '1');
  await expect(problem).toContainText('"199001" is not a date');
  await expect(preview.locator('tr[data-line="2"] td.stop[data-column="1"]')).toBeVisible();
  await expect(page.locator('[data-testid=import-confirm]')).toBeDisabled();
  await shot(page, 'import-preview-date');

  // the date layout: now the first return, -3.44 read as a decimal, is a loss beyond -100 %
  await page.selectOption('[data-testid=import-date-format]', 'YYYYMM');
  await expect(problem).toHaveAttribute('data-column', '2');
  await expect(problem).toContainText('is a return of -344 %, not above -100 %');
  await expect(problem).toContainText('looks like percent');
  await expect(preview.locator('tr[data-line="2"] td[data-column="1"] .read')).toHaveText('1990-01-31');

  // percent: now the -99.99 of large-t4 (column 13) is where it would stop
  await page.check('[data-testid=import-percent]');
  await expect(problem).toHaveAttribute('data-column', '13');
  await expect(problem).toContainText('-99.99 is a code often used for a missing value');
  await expect(preview.locator('tr[data-line="2"] td.stop[data-column="13"]')).toBeVisible();
  await shot(page, 'import-preview-code');

  // missing-value codes: read as gaps, ready to import
  await page.fill('[data-testid=import-missing]', '-99.99');
  await page.locator('[data-testid=import-missing]').press('Tab');
  await expect(page.locator('[data-testid=preview-ok]')).toContainText('Reads 12 assets');
  await expect(preview.locator('tr[data-line="2"] td[data-column="13"]')).toHaveAttribute('data-status', 'missing');
  const first = await preview.locator('tr[data-line="2"] td[data-column="2"]').getAttribute('title');
  expect(first).toBe('read as -0.0344 — net return -3.44 %');
  await shot(page, 'import-preview-returns');
  const coverageBefore = await page.locator('.datatable tbody tr', { hasText: 'small-t1' }).count();
  expect(coverageBefore, 'nothing stored before the import').toBe(0);

  await page.click('[data-testid=import-confirm]');
  await expect(page.locator('.log > li').first()).toContainText('portfolios.csv');
  await expect(page.locator('.log > li').first()).toContainText('rows stored'); // the stored import, newest first
  const row = page.locator('.datatable tbody tr', { hasText: 'small-t1' });
  await expect(row).toContainText('net returns (percent)');
  await expect(row).toContainText('2'); // two missing months: gaps
  await expect(page.locator('[data-testid=preview-panel]')).toHaveCount(0);

  // the value index of a return asset: one line, no price
  await row.click();
  const chart = page.locator('[data-chart-id="history-small-t1"]');
  await expect(chart).toHaveAttribute('data-drawn', /[1-9]/);
  await expect(page.locator('.panel', { hasText: 'Value index' })).toContainText('no price line');
  await shot(page, 'histories-return-asset');

  // factors and the per-month bill rate, the same layout, as series (typed paths)
  await page.locator('[data-testid=import-kind] label', { hasText: 'Series' }).click();
  await page.fill('.path-row input', sample('factors.csv'));
  await page.click('.path-row button');
  await expect(page.locator('[data-testid=preview-ok]')).toContainText('Reads 3 series');
  await page.click('[data-testid=import-confirm]');
  await expect(page.locator('.log > li').first()).toContainText('factors.csv');
  await expect(page.locator('[data-testid=preview-panel]')).toHaveCount(0);
  await page.locator('label', { hasText: 'holds' }).locator('select').selectOption('riskfree');
  await page.fill('.path-row input', sample('bill_rate.csv'));
  await page.click('.path-row button');
  await expect(page.locator('[data-testid=preview-ok]')).toContainText('Reads 1 series');
  await page.click('[data-testid=import-confirm]');
  await expect(page.locator('.log > li').first()).toContainText('bill_rate.csv');
  await expect(page.locator('.log .bad')).toHaveCount(0);

  // a spec on the return portfolios, loaded into the set-up and fitted
  const dir = path.join(root, 'test-output', 'e2e');
  mkdirSync(dir, { recursive: true });
  const specFile = path.join(dir, 'returns-spec.json');
  writeFileSync(
    specFile,
    JSON.stringify({ frequency: 'monthly', assets: PORTFOLIOS, returns: 'excess', riskfree: 'bill_rate', start: '1999-01-31', model: { kind: 'linear', factors: ['tideline', 'keel', 'beacon'] }, estimator: { method: 'gmm', stage: 'second', lags: 'auto' }, backtest: { window: 120, step: 12, horizon: 12 } }),
  );
  await page.click('[data-screen=setup]');
  await page.setInputFiles('[data-testid=spec-input]', specFile);
  await expect(page.locator('.ok-line')).toBeVisible();
  const spec = await specOnScreen(page);
  expect(spec.assets).toEqual(PORTFOLIOS);
  await page.click('[data-testid=run-fit]');
  const bars = '[data-testid=pricing-error-chart]';
  await expect(page.locator(bars)).toHaveAttribute('data-drawn', /[1-9]/, { timeout: 60_000 });
  const result = await fitThroughPage(page, spec);
  expect(result.sample.N).toBe(12);
  expect(result.sample.T).toBe(312);
  checkBars(await barsOf(page, bars), result.pricingErrors.map((r) => r.alphaAnnual * 100));
  await expect(page.locator('[data-caution]')).toContainText('not investment advice');
  await expect(page.locator('body')).not.toContainText('NaN');
  await shot(page, 'fit-on-returns');

  // back-test and comparison on the same return portfolios, recorded like any run
  await page.click('[data-screen=setup]');
  await page.click('[data-testid=run-backtest]');
  await expect(page.locator('[data-testid=backtest-progress]')).toHaveAttribute('data-percent', '100', { timeout: 60_000 });
  await expect(page.locator('[data-chart-id=oos-errors]')).toHaveAttribute('data-drawn', /[1-9]/);
  await page.click('[data-screen=setup]');
  await page.click('[data-testid=add-compare]');
  await page.locator('[data-testid=factor-list] label', { hasText: 'beacon' }).click();
  await page.click('[data-testid=add-compare]');
  await page.click('[data-testid=run-compare]');
  await expect(page.locator('[data-testid=compare-models] tbody tr')).toHaveCount(2, { timeout: 60_000 });
  await expect(page.locator('body')).not.toContainText('NaN');
  await shot(page, 'comparison-on-returns');
  await page.click('[data-screen=runs]');
  await expect(page.locator('body')).toContainText('tideline');
});
